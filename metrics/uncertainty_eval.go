package metrics

import (
	"math"
	"math/rand/v2"
)

// uStep holds one step's record and the inputs of its uncertainty
// evaluation (MeasureUncertainty).
type uStep struct {
	t, y   []float64 // the step's samples; t[0] is the step instant
	o      Options
	m      *StepMetrics
	up     bool    // the response moves up (the command steps up)
	dir    float64 // +1 for an up-step, −1 for a down-step
	sigma  float64 // noise of one sample, from the state-level windows
	sigmaA float64 // amplitude uncertainty of one sample while moving
	sigmaN float64 // noise of one sample without the quantisation
	q      float64 // resolution used (0: none)
	qFound bool    // q was found in the record
	dt     float64 // median sample period
	u0, u1 float64 // standard uncertainties of the initial and final values
	// preCount and finCount are true when the initial or final value is a
	// single count of the encoder (more than half its window holds it).
	preCount, finCount bool
	half               int // half-width of the local quadratic fit, in samples
	reps               int // Monte Carlo trials per metric
	seed               uint64
	smooth             []float64 // fitted values, computed on demand (NaN until then)
}

func newUStep(tr Trace, m StepMetrics, o Options, uo UncertaintyOptions) *uStep {
	s := m.Step
	e := &uStep{t: tr.Time[s.Start:s.End], y: tr.Response[s.Start:s.End], o: o, m: &m,
		up: s.Size() > 0, dir: math.Copysign(1, s.Size()), reps: uo.Replicates, seed: uo.Seed}
	if e.reps <= 0 {
		e.reps = DefaultReplicates
	}
	var pre, fin []float64
	if m.InitialValue.OK {
		pre = tr.Response[preWindowStart(tr, s):s.Start]
	}
	if k := finalWindowLen(len(e.y), o.FinalWindow); m.FinalValue.OK && k <= len(e.y) {
		fin = e.y[len(e.y)-k:]
	}
	sPre, sFin := noiseSD(pre), noiseSD(fin)
	if np, nf := float64(max(len(pre)-1, 0)), float64(max(len(fin)-1, 0)); np+nf > 0 {
		e.sigma = math.Sqrt((np*sPre*sPre + nf*sFin*sFin) / (np + nf))
	}
	if uo.Resolution > 0 {
		e.q = uo.Resolution
	} else {
		e.q, e.qFound = FindQuantum(tr.Response[s.PreStart:s.End])
	}
	e.sigmaN = math.Sqrt(math.Max(0, e.sigma*e.sigma-e.q*e.q/12))
	if e.q == 0 {
		e.sigmaN = e.sigma
	}
	e.u0, e.preCount = e.levelU(pre, sPre)
	e.u1, e.finCount = e.levelU(fin, sFin)
	e.sigmaA = math.Max(e.sigma, e.q/math.Sqrt(12))
	e.dt = medianPeriod(e.t)
	e.half = 2
	if e.sigmaA > 0 && e.dt > 0 {
		// The fit spans an eighth of the rise time (or a fiftieth of the
		// step) so that it follows the response's curvature.
		span := m.Duration / 50
		if m.RiseTime.OK && m.RiseTime.V > 0 {
			span = m.RiseTime.V
		}
		e.half = min(max(int(span/(8*e.dt)), 2), 25)
	}
	e.smooth = make([]float64, len(e.y))
	for i := range e.smooth {
		e.smooth[i] = math.NaN()
	}
	return e
}

// levelU returns the standard uncertainty of the state level of window w
// whose noise is sw. When more than half the window holds one count (its
// MAD is zero) the level is that count, off by up to half a count:
// q/√12 (GUM F.2.2.1). Otherwise it is a mean of N samples, σ/√N (GUM
// §4.2.3), with what is left of the quantiser's bias
// (resolutionSystematic).
// count is true in that case.
func (e *uStep) levelU(w []float64, sw float64) (u float64, count bool) {
	if len(w) == 0 {
		return 0, false
	}
	l, _ := StateLevel(w)
	if e.q > 0 && l.Spread == 0 {
		return e.q / math.Sqrt(12), true
	}
	sys := resolutionSystematic(e.q, e.sigmaN)
	return math.Sqrt(sw*sw/float64(len(w)) + sys*sys), false
}

// levels draws the initial and final values of one Monte Carlo trial from
// their normal distributions. With onGrid, a level that is a single count
// is instead the count the trial's encoder grid (offset) gives it, so its
// error goes with the samples' quantisation as it does on the rig: that is
// right where the metric compares samples with the level on the same grid
// (the settling band, whose half-width is known exactly); elsewhere the
// sub-count position of the samples relative to the level is not known
// from the record and the errors are taken as independent.
func (e *uStep) levels(r *rand.Rand, offset float64, onGrid bool) (y0, y1 float64) {
	draw := func(v, u float64, count bool) float64 {
		if count && onGrid {
			return e.q*math.Round((v-offset)/e.q) + offset
		}
		return v + u*r.NormFloat64()
	}
	return draw(e.m.InitialValue.V, e.u0, e.preCount), draw(e.m.FinalValue.V, e.u1, e.finCount)
}

// trial returns a draw of sample i for one Monte Carlo trial: the smoothed
// response plus Gaussian noise of σ without the quantisation, through an
// encoder of the resolution used whose grid sits at offset (drawn once per
// trial, uniform over a count); without a resolution, noise of σ alone.
func (e *uStep) trial(r *rand.Rand, i int, offset float64) float64 {
	v := e.fitted(i) + e.sigmaN*r.NormFloat64()
	if e.q > 0 {
		v = e.q*math.Round((v-offset)/e.q) + offset
	}
	return v
}

// offset draws an encoder grid offset for one trial (0 without a
// resolution).
func (e *uStep) offset(r *rand.Rand) float64 { return e.q * r.Float64() }

// fitted returns the smoothed response at sample i: the local quadratic
// fit when the record is noisy, the sample itself otherwise.
func (e *uStep) fitted(i int) float64 {
	if e.sigmaA == 0 {
		return e.y[i]
	}
	if math.IsNaN(e.smooth[i]) {
		e.smooth[i], _, _ = localFit(e.t, e.y, i, e.half)
	}
	return e.smooth[i]
}

// period returns the sample interval ending at sample i (the median period
// for the first sample).
func (e *uStep) period(i int) float64 {
	if i <= 0 || i >= len(e.t) {
		return e.dt
	}
	return e.t[i] - e.t[i-1]
}

// interpolation returns the standard uncertainty, in time, of an instant
// interpolated linearly between the samples i−1 and i where the response
// has the given slope and curvature: the error is at most |ÿ|Δt²/8 in
// amplitude, taken as rectangular over [0, |ÿ|Δt²/8] (GUM §4.3.7).
func (e *uStep) interpolation(i int, slope, curv float64) float64 {
	if slope == 0 {
		return 0
	}
	dt := e.period(i)
	return math.Abs(curv) * dt * dt / 8 / math.Sqrt(12) / math.Abs(slope)
}

// level returns the reference level at fraction f of the transition and
// its standard uncertainty.
func (e *uStep) level(f float64) (l, u float64) {
	y0, y1 := e.m.InitialValue.V, e.m.FinalValue.V
	return y0 + f*(y1-y0), math.Hypot((1-f)*e.u0, f*e.u1)
}

// cross is the first-order account of one reference-level instant: its
// sensitivities to the initial and final values and the variance of its
// other, independent inputs (the two samples and the interpolation).
type cross struct {
	d0, d1, indep float64
	idx           int // first sample at or beyond the level
}

// crossClosed propagates the uncertainty of the instant at which the
// response first reaches fraction f of the transition, searching from
// sample from. ok is false when the closed form does not apply: the noise
// exceeds a quarter of the level change between two samples, or the fitted
// slope runs against the transition.
func (e *uStep) crossClosed(f float64, from int) (c cross, ok bool) {
	l, _ := e.level(f)
	_, i, found := crossing(e.t, e.y, l, e.up, from)
	if !found {
		return cross{}, false
	}
	phi := 1.0
	if i > 0 && (e.y[i-1]-l)*e.dir < 0 {
		phi = (l - e.y[i-1]) / (e.y[i] - e.y[i-1])
	}
	at := i
	if phi < 0.5 && i > 0 {
		at = i - 1
	}
	_, slope, curv := localFit(e.t, e.y, at, e.half)
	if slope*e.dir <= 0 || e.sigmaA > 0.25*math.Abs(slope)*e.period(i) {
		return cross{idx: i}, false
	}
	noise := e.sigmaA * e.sigmaA * ((1-phi)*(1-phi) + phi*phi) / (slope * slope)
	ui := e.interpolation(i, slope, curv)
	return cross{d0: (1 - f) / slope, d1: f / slope, indep: noise + ui*ui, idx: i}, true
}

// deadTime returns the standard uncertainty of the dead time.
func (e *uStep) deadTime() float64 {
	if c, ok := e.crossClosed(e.o.DeadTimeLevel, 0); ok {
		return math.Sqrt(c.d0*c.d0*e.u0*e.u0 + c.d1*c.d1*e.u1*e.u1 + c.indep)
	}
	return e.mcCrossings(e.o.DeadTimeLevel)
}

// riseTime returns the standard uncertainty of the rise time, the
// difference of two instants that share the state levels.
func (e *uStep) riseTime() float64 {
	lo, okL := e.crossClosed(e.o.RiseLow, 0)
	hi, okH := e.crossClosed(e.o.RiseHigh, max(lo.idx, 0))
	if okL && okH {
		d0, d1 := hi.d0-lo.d0, hi.d1-lo.d1
		return math.Sqrt(d0*d0*e.u0*e.u0 + d1*d1*e.u1*e.u1 + lo.indep + hi.indep)
	}
	return e.mcCrossings(e.o.RiseLow, e.o.RiseHigh)
}

// rng returns the Monte Carlo generator of one metric of this step: the
// same seed, step and metric always give the same draws.
func (e *uStep) rng(metric Name) *rand.Rand {
	return rand.New(rand.NewPCG(e.seed, uint64(e.m.Step.Index)<<8|uint64(Index(metric))))
}

// trials returns the number of Monte Carlo trials for a window of w
// samples, within the draw budget.
func (e *uStep) trials(w int) int {
	return min(e.reps, max(minReplicates, maxDraws/max(w, 1)))
}

// sd returns the sample standard deviation of x.
func sd(x []float64) float64 {
	if len(x) < 2 {
		return 0
	}
	var m float64
	for _, v := range x {
		m += v
	}
	m /= float64(len(x))
	var ss float64
	for _, v := range x {
		ss += (v - m) * (v - m)
	}
	return math.Sqrt(ss / float64(len(x)-1))
}
