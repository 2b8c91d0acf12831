package metrics

import (
	"fmt"
	"math"
)

// CoverageFactor is the k of the expanded uncertainty U = k·u that reports
// state: k = 2, a coverage probability of about 95 % for a normal
// distribution (JCGM 100:2008, GUM §6.2.1 and §6.3.3).
const CoverageFactor = 2.0

// DefaultReplicates is the number of Monte Carlo trials per metric when
// UncertaintyOptions.Replicates is 0. The trials estimate a standard
// deviation, not a coverage interval, so a few hundred do: the relative
// standard deviation of a standard deviation estimated from R trials is
// about 1/√(2(R − 1)), 3.5 % for 400 (JCGM 101:2008 §7.2 asks for 10⁶
// trials only when the interval's end points themselves are wanted).
const DefaultReplicates = 400

// maxDraws caps the Monte Carlo draws (trials × samples in the window) of
// one metric, so that a long flat peak does not cost seconds; the trials
// are reduced to fit, never below minReplicates.
const (
	maxDraws      = 60_000
	minReplicates = 100
)

// UncertaintyOptions set how MeasureUncertainty evaluates a step.
type UncertaintyOptions struct {
	// Resolution is the resolution of the response (the encoder count) in
	// response units. 0 means the count found in the record (FindQuantum),
	// or none when the record shows none.
	Resolution float64
	// Replicates is the number of Monte Carlo trials per metric;
	// 0 means DefaultReplicates.
	Replicates int
	// Seed seeds the Monte Carlo generator. The same record, options and
	// seed always give the same uncertainties.
	Seed uint64
}

// StepUncertainty holds the standard uncertainty of every metric of one
// step, and the inputs it was evaluated from.
type StepUncertainty struct {
	u [NumNames]Value // standard uncertainty of each metric, Names order

	// Noise is the standard deviation of the measurement noise of one
	// sample, estimated from the state-level windows (response units). When
	// the noise dithers the quantiser it includes the quantisation noise.
	Noise float64
	// Resolution is the response's resolution used: the option's, or the
	// count found in the record, or 0 when there is neither.
	Resolution float64
	// ResolutionFound is true when Resolution is the count found in the
	// record rather than one given in the options.
	ResolutionFound bool
	// SamplePeriod is the median interval between the step's samples (s).
	SamplePeriod float64
}

// Standard returns the standard uncertainty u of metric n (same unit as the
// metric); unknown, with the reason, when the metric was not measured.
func (s StepUncertainty) Standard(n Name) Value {
	i := Index(n)
	if i < 0 {
		return Unknown(fmt.Sprintf("stepgate does not measure %q", n))
	}
	return s.u[i]
}

// Expanded returns the expanded uncertainty U = CoverageFactor·u of
// metric n; unknown when Standard is.
func (s StepUncertainty) Expanded(n Name) Value {
	v := s.Standard(n)
	if v.OK {
		v.V *= CoverageFactor
	}
	return v
}

// At returns the standard uncertainty of metric i of Names.
func (s *StepUncertainty) At(i int) Value { return s.u[i] }

// MeasureUncertainty evaluates the standard uncertainty of every metric of
// m, the measurement of step m.Step of tr with the levels o, from the
// record itself. Each metric's method is stated in its catalogue row
// (Metric.Method); in outline:
//
//   - The noise σ of one sample is estimated from the residuals of the
//     state-level windows (the pre-step and final windows MeasureStep
//     used), taken as second differences, σ² = Σ(yᵢ₊₁ − 2yᵢ + yᵢ₋₁)²/(6n),
//     so that a slow drift within a window is not taken for noise;
//     differences beyond five robust standard deviations are left out as
//     glitches (noiseSD). The noise is taken as white.
//   - The resolution q is the option's, or the count found in the record
//     (FindQuantum). A quantiser of step q adds variance q²/12 (B. Widrow's
//     model). Averaged over a window it averages out when the noise dithers
//     it; otherwise its error is systematic, taken as q/√12 (GUM F.2.2.1)
//     and reduced by the dither factor exp(−2π²σ²/q²) (B. Widrow and
//     I. Kollár, Quantization Noise, 2008, ch. 4).
//   - A state level (initial or final value) is a mean of N samples:
//     u² = σ²/N + the systematic resolution term (GUM §4.2.3, F.2.2.1).
//   - A reference-level instant (dead time, rise time) has
//     u² = (u²(L) + σₐ²((1 − φ)² + φ²))/ẏ² + u²(interp), where L is the
//     level, σₐ the amplitude uncertainty of a sample during the motion,
//     φ the interpolation fraction, ẏ the slope at the crossing and
//     u(interp) the linear interpolation's error |ÿ|Δt²/8 taken as
//     rectangular (GUM §5.1.2, §4.3.7; the same first-order reasoning as
//     IEC 62754:2017 for reference-level instants). The slope and
//     curvature come from a local quadratic least-squares fit. When the
//     noise spans more than a quarter of the level change between two
//     samples, the first sample beyond the level is decided by the noise
//     and the linear propagation does not hold: the instant is evaluated
//     by Monte Carlo instead.
//   - Peak value, peak time, overshoot and settling time are not smooth
//     functions of the samples (a maximum, a last exit from a band): they
//     are evaluated by Monte Carlo on the trace (JCGM 101:2008): the record
//     smoothed by the local quadratic fit, plus Gaussian noise of σₐ on
//     every sample and the state levels drawn from their own
//     distributions, measured by the same definitions in each trial; the
//     standard deviation of the trials is combined with the sample
//     period's part (a sampled peak time is uniform within a sample period,
//     u = Δt/√12).
//
// The same code evaluates a predicted trace: without noise, u is the
// resolution and interpolation part alone. A metric that is unknown in m
// has an unknown uncertainty with the reason.
func MeasureUncertainty(tr Trace, m StepMetrics, o Options, uo UncertaintyOptions) StepUncertainty {
	var out StepUncertainty
	for i := range out.u {
		if v := m.At(i); !v.OK {
			out.u[i] = Unknown("metric not measured: " + v.Why)
		}
	}
	s := m.Step
	n := min(len(tr.Time), len(tr.Command), len(tr.Response))
	if s.PreStart < 0 || s.PreStart > s.Start || s.Start >= s.End || s.End > n {
		return out
	}
	e := newUStep(tr, m, o, uo)
	out.Noise, out.Resolution, out.ResolutionFound, out.SamplePeriod = e.sigma, e.q, e.qFound, e.dt
	set := func(n Name, u float64) {
		if i := Index(n); m.At(i).OK {
			out.u[i] = Known(u)
		}
	}
	size := math.Abs(s.Size())
	set(StepSize, 0)
	set(InitialValue, e.u0)
	set(FinalValue, e.u1)
	set(SteadyStateError, e.u1)
	if size > 0 {
		set(SteadyStateErrorPct, e.u1/size*100)
	}
	if m.DeadTime.OK {
		set(DeadTime, e.deadTime())
	}
	if m.RiseTime.OK {
		set(RiseTime, e.riseTime())
	}
	if m.PeakValue.OK {
		pv, pt, os := e.peak(m.Overshoot.OK)
		set(PeakValue, pv)
		set(PeakTime, pt)
		set(Overshoot, os)
	}
	if m.SettlingTime.OK {
		set(SettlingTime, e.settlingTime())
	}
	// The move's own metrics: the command is set, not measured, so the
	// move time is exact, the settling after it is as uncertain as the
	// settling time, and the largest following error as one sample.
	set(MoveTime, 0)
	if u := out.u[Index(SettlingTime)]; u.OK {
		set(SettlingAfterMove, u.V)
	}
	set(MaxFollowingError, e.sigmaA)
	return out
}

// quadrature returns √(Σ xᵢ²).
func quadrature(x ...float64) float64 {
	var s float64
	for _, v := range x {
		s += v * v
	}
	return math.Sqrt(s)
}
