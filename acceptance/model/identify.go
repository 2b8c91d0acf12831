package model

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/optimize"

	"github.com/stepgate/stepgate/metrics"
)

// Identified is the effective closed loop fitted to one recorded step:
// the response is InitialValue + StaticGain·Δr·s(t − DeadTime), Δr the
// command change and s the unit-step response of ωn²/(s² + 2ζωn s + ωn²).
type Identified struct {
	StaticGain       float64 // G: change of the response per unit change of the command
	Damping          float64 // ζ; ≥ 1 for a response without overshoot
	NaturalFrequency float64 // ωn, rad/s
	DeadTime         float64 // θ, seconds from the step instant to the start of the fitted response
	InitialValue     float64 // fitted response level before the step, response units
	RMSResidual      float64 // root-mean-square fit residual, response units
	Samples          int     // samples fitted (the tail of the pre-step window and the step)
	// Reference is the fit as a spec's model.reference_test at the gain the
	// step was recorded with. The dead time is not part of it: it is the
	// delay of the whole closed loop, not a plant dead time.
	Reference ReferenceTest
}

// Identification limits.
const (
	// identMaxResidual is the largest RMS residual, as a fraction of the
	// fitted response change, that still counts as a fit (stepgate's
	// choice; common practice, no source).
	identMaxResidual = 0.05
	// identNoiseRatio is the smallest response change, in robust noise
	// standard deviations, that counts as a step (common practice, no
	// source).
	identNoiseRatio = 10
	// identSettledBy is the fraction of the step's duration by which the
	// fitted response must have entered its 2 % band for good.
	identSettledBy = 0.8
	// identBand is that band, a fraction of the response change.
	identBand = 0.02
)

// Identify fits an effective second-order closed loop behind a dead time to
// step st of tr, recorded at proportional gain gain. The start point comes
// from the closed-form relations (references §2; K. Ogata, Modern Control
// Engineering, 5th ed., §5-3): for an overshoot Mp, ζ = −ln(Mp)/√(π² +
// ln²Mp) and ωn = π/((tp − θ)·√(1 − ζ²)); without overshoot ζ = 1 and
// ωn = 3.3579/t₁₀₋₉₀ (the critically damped 10–90 % rise time, references
// §2); θ makes the model's 10 % instant match the record's. The fit then
// minimises the residual over the samples with the Nelder–Mead simplex of
// gonum.org/v1/gonum/optimize, restarted once from its result, in ln ωn,
// ln ζ (any ζ > 0: the closed forms for ζ < 1, ζ = 1 and ζ > 1 are one
// expression, continuous in ζ) and a logistic transform of θ bounded to
// [0, half the step's duration]; the initial level and the response change
// are solved for linearly at each trial. The result is deterministic.
//
// Identify refuses, with the reason, a step that does not fit the trace or
// has no command change, a response that does not move clearly above its
// noise or moves against the command, one still moving at the end of the
// record or whose fit settles too late, and a fit whose RMS residual exceeds
// 5 % of the response change.
func Identify(tr metrics.Trace, st metrics.Step, gain float64) (Identified, error) {
	fail := func(format string, args ...any) (Identified, error) {
		return Identified{}, fmt.Errorf("step %d: no second-order fit: %s", st.Index, fmt.Sprintf(format, args...))
	}
	if !(gain > 0) || math.IsInf(gain, 0) {
		return fail("the proportional gain of the test must be positive and finite, got %v", gain)
	}
	n := min(len(tr.Time), len(tr.Response))
	if st.PreStart < 0 || st.PreStart > st.Start || st.Start >= st.End || st.End > n {
		return fail("samples %d..%d (pre-step from %d) do not fit a record of %d samples", st.Start, st.End-1, st.PreStart, n)
	}
	dr := st.Size()
	if dr == 0 || math.IsNaN(dr) || math.IsInf(dr, 0) {
		return fail("the command does not change (from %v to %v)", st.From, st.To)
	}
	const minSamples = 10
	if st.End-st.Start < minSamples {
		return fail("the step has %d samples; at least %d are needed", st.End-st.Start, minSamples)
	}
	t0 := tr.Time[st.Start]
	pre0 := st.Start - (st.Start-st.PreStart)/2
	ts := make([]float64, 0, st.End-pre0)
	ys := make([]float64, 0, st.End-pre0)
	for i := pre0; i < st.End; i++ {
		if math.IsNaN(tr.Response[i]) || math.IsInf(tr.Response[i], 0) || math.IsNaN(tr.Time[i]) {
			return fail("sample %d is not a finite number", i)
		}
		ts = append(ts, tr.Time[i]-t0)
		ys = append(ys, tr.Response[i])
	}
	nPre := st.Start - pre0
	post := ys[nPre:]
	tPost := ts[nPre:]
	dur := tPost[len(tPost)-1]

	finalWin := post[len(post)-max(len(post)/5, 6):]
	fl, _ := metrics.StateLevel(finalWin)
	var y0, noise float64
	if nPre >= 3 {
		il, _ := metrics.StateLevel(ys[:nPre])
		y0, noise = il.Value, il.Spread
	} else {
		y0, noise = post[0], fl.Spread
	}
	dy := fl.Value - y0
	if !(math.Abs(dy) > identNoiseRatio*noise) || dy == 0 {
		return fail("the response changes by %s, not clearly above its noise (robust σ %s; %d σ needed)", fmtNum(dy), fmtNum(noise), identNoiseRatio)
	}
	if dy*dr < 0 {
		return fail("the response moves against the command (by %s for a command change of %s)", fmtNum(dy), fmtNum(dr))
	}
	if fl.Drift > identBand*math.Abs(dy)+3*noise {
		return fail("the response is still moving at the end of the record (the last %d samples drift by %s, %s %% of the change)",
			len(finalWin), fmtNum(fl.Drift), fmtNum(100*fl.Drift/math.Abs(dy)))
	}

	zeta0, wn0, th0 := identStart(tPost, post, y0, dy, noise)
	thMax := 0.5 * dur
	fit := newStepFit(ts, ys)
	x0 := []float64{math.Log(wn0), math.Log(zeta0), logit(math.Min(math.Max(th0/thMax, 1e-6), 0.9))}
	obj := func(x []float64) float64 {
		return fit.rms(math.Exp(x[1]), math.Exp(x[0]), thMax*sigmoid(x[2]))
	}
	best, fBest, err := refine(obj, x0)
	if err != nil {
		return fail("%v", err)
	}
	// A restart from the result, with a fresh simplex, guards against a
	// simplex that collapsed before reaching the minimum.
	if again, fAgain, err := refine(obj, best); err == nil && fAgain <= fBest {
		best = again
	}
	zeta, wn, th := math.Exp(best[1]), math.Exp(best[0]), thMax*sigmoid(best[2])
	rms := fit.rms(zeta, wn, th)
	c0, c1 := fit.c0, fit.c1
	if rms > identMaxResidual*math.Abs(c1) {
		return fail("the second-order model does not fit: RMS residual %s is %s %% of the response change (at most %s %%)",
			fmtNum(rms), fmtNum(100*rms/math.Abs(c1)), fmtNum(100*identMaxResidual))
	}
	if ls := lastOutsideBand(zeta, wn, dur-th); th+ls > identSettledBy*dur {
		if th+ls >= dur {
			return fail("the fitted response is still outside its %s %% band at the end of the %s s record: the record ends too soon",
				fmtNum(100*identBand), fmtNum(dur))
		}
		return fail("the fitted response settles into its %s %% band only %s s after the step, beyond %s %% of the %s s record: the record ends too soon",
			fmtNum(100*identBand), fmtNum(th+ls), fmtNum(100*identSettledBy), fmtNum(dur))
	}
	g := c1 / dr
	return Identified{
		StaticGain: g, Damping: zeta, NaturalFrequency: wn, DeadTime: th,
		InitialValue: c0, RMSResidual: rms, Samples: len(ys),
		Reference: ReferenceTest{Gain: gain, StaticGain: g, Damping: zeta, NaturalFrequency: wn},
	}, nil
}

// unitStep2 is the unit-step response of ωn²/(s² + 2ζωn s + ωn²) at t
// (0 for t ≤ 0): 1 − e^(−σt)(C + σ·S) with σ = ζωn and, for
// ω² = ωn²(1 − ζ²), C = cos ωt, S = sin(ωt)/ω when ω² > 0 (Ogata 5th ed.
// §5-3), C = cosh ωt, S = sinh(ωt)/ω when ω² < 0, and C = 1, S = t at ζ = 1;
// S is evaluated by its series near ω = 0, so the expression is continuous
// in ζ.
func unitStep2(zeta, wn, t float64) float64 {
	if t <= 0 {
		return 0
	}
	sigma := zeta * wn
	q := wn * wn * (1 - zeta*zeta)
	w := math.Sqrt(math.Abs(q))
	x := w * t
	if q >= 0 {
		var s float64
		if x < 1e-4 {
			s = t * (1 - x*x/6)
		} else {
			s = math.Sin(x) / w
		}
		return 1 - math.Exp(-sigma*t)*(math.Cos(x)+sigma*s)
	}
	// e^(−σt)·cosh(ωt) and e^(−σt)·sinh(ωt)/ω without overflow (σ > ω).
	a, b := math.Exp((w-sigma)*t), math.Exp(-(w+sigma)*t)
	var s float64
	if x < 1e-4 {
		s = math.Exp(-sigma*t) * t * (1 + x*x/6)
	} else {
		s = (a - b) / (2 * w)
	}
	return 1 - (0.5*(a+b) + sigma*s)
}

// stepFit evaluates the residual of a trial (ζ, ωn, θ), solving for the
// initial level c0 and the change c1 by linear least squares. x holds the
// trial's unit-step model at the sample times, computed once per trial.
type stepFit struct {
	t, y, x []float64
	c0, c1  float64
}

func newStepFit(t, y []float64) *stepFit { return &stepFit{t: t, y: y, x: make([]float64, len(t))} }

func (f *stepFit) rms(zeta, wn, th float64) float64 {
	var n, sx, sy, sxx, sxy float64
	for i, t := range f.t {
		x := unitStep2(zeta, wn, t-th)
		f.x[i] = x
		y := f.y[i]
		n++
		sx += x
		sy += y
		sxx += x * x
		sxy += x * y
	}
	det := n*sxx - sx*sx
	if !(det > 1e-12*n*n) {
		return math.Inf(1)
	}
	f.c1 = (n*sxy - sx*sy) / det
	f.c0 = (sy - f.c1*sx) / n
	var ss float64
	for i, x := range f.x {
		r := f.y[i] - f.c0 - f.c1*x
		ss += r * r
	}
	return math.Sqrt(ss / n)
}

// identStart returns start values from the record's overshoot, peak time
// and 10 %/90 % instants.
func identStart(t, y []float64, y0, dy, noise float64) (zeta, wn, th float64) {
	z := make([]float64, len(y))
	pk := 0
	for i, v := range y {
		z[i] = (v - y0) / dy
		if z[i] > z[pk] {
			pk = i
		}
	}
	t10, t90 := crossTime(t, z, 0.1), crossTime(t, z, 0.9)
	mp := z[pk] - 1
	if mp > math.Max(0.005, 4*noise/math.Abs(dy)) {
		zeta, _ = DampingFromOvershoot(100 * math.Min(mp, 0.95))
		th = 0
		for it := 0; it < 4; it++ {
			tp := math.Max(t[pk]-th, 1e-9)
			wn = math.Pi / (tp * math.Sqrt(1-zeta*zeta))
			th = math.Max(0, t10-modelCross(zeta, wn, 0.1))
		}
		return zeta, wn, th
	}
	zeta = 1
	rise := t90 - t10
	if !(rise > 0) {
		rise = math.Max(t[len(t)-1]/10, 1e-9)
	}
	// ζ = 1: t₁₀₋₉₀ = 3.3579/ωn (references §2, computed).
	wn = 3.3579 / rise
	th = math.Max(0, t10-modelCross(1, wn, 0.1))
	return zeta, wn, th
}

// crossTime is the first instant z reaches level, interpolated linearly; the
// last time when it never does.
func crossTime(t, z []float64, level float64) float64 {
	for i := 1; i < len(z); i++ {
		if z[i] >= level && z[i-1] < level {
			return t[i-1] + (level-z[i-1])/(z[i]-z[i-1])*(t[i]-t[i-1])
		}
	}
	if len(z) > 0 && z[0] >= level {
		return t[0]
	}
	return t[len(t)-1]
}

// modelCross is the first instant the unit-step model reaches level < 1,
// by bisection on [0, first bracket].
func modelCross(zeta, wn, level float64) float64 {
	hi := 1 / wn
	for unitStep2(zeta, wn, hi) < level && hi < 1e6/wn {
		hi *= 2
	}
	lo := 0.0
	for i := 0; i < 60; i++ {
		mid := 0.5 * (lo + hi)
		if unitStep2(zeta, wn, mid) < level {
			lo = mid
		} else {
			hi = mid
		}
	}
	return 0.5 * (lo + hi)
}

// lastOutsideBand is the last instant in [0, horizon] at which the unit-step
// model lies outside 1 ± identBand, on a grid of 2000 points refined by
// bisection; 0 when it never does after the start.
func lastOutsideBand(zeta, wn, horizon float64) float64 {
	if !(horizon > 0) {
		return 0
	}
	const n = 2000
	out := func(t float64) bool { return math.Abs(unitStep2(zeta, wn, t)-1) > identBand }
	for i := n; i > 0; i-- {
		t := horizon * float64(i) / n
		if out(t) {
			if i == n {
				return horizon
			}
			lo, hi := t, horizon*float64(i+1)/n
			for k := 0; k < 40; k++ {
				mid := 0.5 * (lo + hi)
				if out(mid) {
					lo = mid
				} else {
					hi = mid
				}
			}
			return lo
		}
	}
	return 0
}

func sigmoid(x float64) float64 { return 1 / (1 + math.Exp(-x)) }
func logit(p float64) float64   { return math.Log(p / (1 - p)) }

// refine minimises f from x0 with gonum's Nelder–Mead simplex method
// (gonum.org/v1/gonum/optimize; J. A. Nelder and R. Mead, "A simplex method
// for function minimization", Computer Journal 7(4), 1965) at the standard
// coefficients: reflection 1, expansion 2, contraction ½, shrink ½, rather
// than gonum's dimension-dependent defaults. The initial simplex is x0 and
// x0 + 0.1 along each axis. The run stops once the best value has not
// fallen by more than 10⁻¹² of itself (plus 10⁻³⁰) over refineStall
// iterations, or after refineMaxEvals evaluations. A single evaluation
// task, a fixed simplex and no random element make the result
// deterministic. A value that is not a number counts as +Inf, so the
// simplex's order stays total. It returns the best point and its value.
func refine(f func([]float64) float64, x0 []float64) ([]float64, float64, error) {
	const (
		refineMaxEvals = 4000
		refineStall    = 30
	)
	fn := func(x []float64) float64 {
		if v := f(x); !math.IsNaN(v) {
			return v
		}
		return math.Inf(1)
	}
	f0 := fn(x0)
	if math.IsInf(f0, 0) {
		return nil, 0, fmt.Errorf("least-squares fit failed: the residual at the start point (ωn %s rad/s, ζ %s) is not finite",
			fmtNum(math.Exp(x0[0])), fmtNum(math.Exp(x0[1])))
	}
	settings := &optimize.Settings{
		InitValues:      &optimize.Location{F: f0},
		FuncEvaluations: refineMaxEvals,
		Converger:       &optimize.FunctionConverge{Relative: 1e-12, Absolute: 1e-30, Iterations: refineStall},
	}
	method := &optimize.NelderMead{Reflection: 1, Expansion: 2, Contraction: 0.5, Shrink: 0.5, SimplexSize: 0.1}
	res, err := optimize.Minimize(optimize.Problem{Func: fn}, x0, settings, method)
	if err != nil {
		return nil, 0, fmt.Errorf("least-squares fit failed: %w", err)
	}
	if math.IsInf(res.F, 0) || math.IsNaN(res.F) {
		return nil, 0, errors.New("least-squares fit failed: the residual is not finite")
	}
	return res.X, res.F, nil
}
