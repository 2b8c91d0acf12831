package model

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
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
// §2); θ makes the model's 10 % instant match the record's.
//
// The fit minimises the squared residual by the damped Gauss–Newton method
// (the Newton method of gonum.org/v1/gonum/optimize on the analytic
// gradient and Gauss–Newton matrix) in ln ωn, ln ζ (any ζ > 0: the closed
// forms for ζ < 1, ζ = 1 and ζ > 1 are one expression, continuous in ζ)
// and θ, bounded to [0, half the step's duration]; the initial level and
// the response change are solved for linearly at each trial (variable
// projection). For speed the search compares bin means: runs of a few
// samples, at most 320 after the step, finer where the response moves, each
// compared with the model's exact mean over the same interval; the model is
// stepped from bin to bin by its addition formulas instead of evaluated by
// trigonometry at each one (stepfit.go). The reported initial level, gain
// and RMS residual are then solved for over every sample of the fitted
// window, so the residual is that of the samples. The result is
// deterministic.
//
// Identify refuses, with the reason, a step that does not fit the trace or
// has no command change, a window with a sample that is not finite or whose
// time does not increase, a response that does not move clearly above its
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
	fit := fitPool.Get().(*stepFit)
	defer func() {
		fit.t, fit.y = nil, nil // the caller's record is not kept alive
		fitPool.Put(fit)
	}()
	ts := grow(&fit.tbuf, st.End-pre0)
	ys := tr.Response[pre0:st.End]
	for i := pre0; i < st.End; i++ {
		if math.IsNaN(tr.Response[i]) || math.IsInf(tr.Response[i], 0) || math.IsNaN(tr.Time[i]) || math.IsInf(tr.Time[i], 0) {
			return fail("sample %d is not a finite number", i)
		}
		if i > pre0 && !(tr.Time[i] > tr.Time[i-1]) {
			return fail("the time of sample %d (%v s) does not increase from the sample before (%v s)", i, tr.Time[i], tr.Time[i-1])
		}
		ts[i-pre0] = tr.Time[i] - t0
	}
	nPre := st.Start - pre0
	post := ys[nPre:]
	tPost := ts[nPre:]
	dur := tPost[len(tPost)-1]

	y0, dy, noise, why := identLevels(ys[:nPre], post, dr)
	if why != "" {
		return fail("%s", why)
	}

	zeta0, wn0, th0 := identStart(tPost, post, y0, dy, noise, grow(&fit.xs, len(post)))
	thMax := 0.5 * dur
	fit.reset(ts, ys, nPre, moving(post, y0, dy, noise), dy)
	zeta, wn, th, err := refine(fit, zeta0, wn0, math.Min(th0, thMax), thMax)
	if err != nil {
		return fail("%v", err)
	}
	rms, c0, c1 := fit.sampleFit(zeta, wn, th)
	if math.IsInf(rms, 0) {
		return fail("least-squares fit failed: the fitted model is constant over the record")
	}
	if why := fitProblem(rms, c1, zeta, wn, th, dur); why != "" {
		return fail("%s", why)
	}
	g := c1 / dr
	return Identified{
		StaticGain: g, Damping: zeta, NaturalFrequency: wn, DeadTime: th,
		InitialValue: c0, RMSResidual: rms, Samples: len(ys),
		Reference: ReferenceTest{Gain: gain, StaticGain: g, Damping: zeta, NaturalFrequency: wn},
	}, nil
}

// identLevels finds the levels a fit starts from: the initial level and
// the noise from the pre-step samples pre (at least 3, else the first
// post-step sample and the final window's spread), and the change dy to
// the final level of post. why says why the record cannot be fitted: a
// change not clearly above the noise, a response that moves against the
// command change dr, or one still moving at the end.
func identLevels(pre, post []float64, dr float64) (y0, dy, noise float64, why string) {
	finalWin := post[len(post)-max(len(post)/5, 6):]
	fl, _ := metrics.StateLevel(finalWin)
	if len(pre) >= 3 {
		il, _ := metrics.StateLevel(pre)
		y0, noise = il.Value, il.Spread
	} else {
		y0, noise = post[0], fl.Spread
	}
	dy = fl.Value - y0
	switch {
	case !(math.Abs(dy) > identNoiseRatio*noise) || dy == 0:
		why = fmt.Sprintf("the response changes by %s, not clearly above its noise (robust σ %s; %d σ needed)", fmtNum(dy), fmtNum(noise), identNoiseRatio)
	case dy*dr < 0:
		why = fmt.Sprintf("the response moves against the command (by %s for a command change of %s)", fmtNum(dy), fmtNum(dr))
	case fl.Drift > identBand*math.Abs(dy)+3*noise:
		why = fmt.Sprintf("the response is still moving at the end of the record (the last %d samples drift by %s, %s %% of the change)",
			len(finalWin), fmtNum(fl.Drift), fmtNum(100*fl.Drift/math.Abs(dy)))
	}
	return y0, dy, noise, why
}

// fitProblem says why a converged fit is not accepted: a residual rms
// too large against the fitted change c1, or a fitted response (ζ, ωn, θ)
// that settles too late in a record of dur seconds; "" when it is.
func fitProblem(rms, c1, zeta, wn, th, dur float64) string {
	if rms > identMaxResidual*math.Abs(c1) {
		return fmt.Sprintf("the second-order model does not fit: RMS residual %s is %s %% of the response change (at most %s %%)",
			fmtNum(rms), fmtNum(100*rms/math.Abs(c1)), fmtNum(100*identMaxResidual))
	}
	ls := lastOutsideBand(zeta, wn, dur-th)
	switch {
	case th+ls <= identSettledBy*dur:
		return ""
	case th+ls >= dur:
		return fmt.Sprintf("the fitted response is still outside its %s %% band at the end of the %s s record: the record ends too soon",
			fmtNum(100*identBand), fmtNum(dur))
	}
	return fmt.Sprintf("the fitted response settles into its %s %% band only %s s after the step, beyond %s %% of the %s s record: the record ends too soon",
		fmtNum(100*identBand), fmtNum(th+ls), fmtNum(100*identSettledBy), fmtNum(dur))
}

// unitStep2 is the unit-step response of ωn²/(s² + 2ζωn s + ωn²) at t
// (0 for t ≤ 0): 1 − e^(−σt)(C + σ·S) with σ = ζωn and, for
// ω² = ωn²(1 − ζ²), C = cos ωt, S = sin(ωt)/ω when ω² > 0 (Ogata 5th ed.
// §5-3), C = cosh ωt, S = sinh(ωt)/ω when ω² < 0, and C = 1, S = t at ζ = 1;
// C and S are summed as power series in ω²t² near ω = 0 (kernelAt), so the
// expression is continuous in ζ.
func unitStep2(zeta, wn, t float64) float64 {
	if t <= 0 {
		return 0
	}
	sigma := zeta * wn
	k := kernelAt(sigma, wn*wn*(1-zeta*zeta), t)
	return 1 - k.c - sigma*k.s
}

// moving returns how many samples of the response y after the step the
// fine bins cover: twice the span up to the last sample outside 10 % of the
// change (or 3 noise σ, when larger) around the final level.
func moving(y []float64, y0, dy, noise float64) int {
	band := math.Max(0.1*math.Abs(dy), 3*noise)
	last := -1
	for i, v := range y {
		if math.Abs(v-y0-dy) > band {
			last = i
		}
	}
	return min(len(y), 2*(last+1))
}

// identStart returns start values from the record's overshoot, peak time
// and 10 %/90 % instants; z is scratch space as long as y.
func identStart(t, y []float64, y0, dy, noise float64, z []float64) (zeta, wn, th float64) {
	pk, inv := 0, 1/dy
	for i, v := range y {
		z[i] = (v - y0) * inv
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

// modelCross is the first instant the unit-step model reaches level < 1:
// the root in [0, first bracket] by Newton's method on the impulse response
// ωn²·e^(−στ)·S, kept inside a bisection bracket (any step leaving it is
// replaced by bisection).
func modelCross(zeta, wn, level float64) float64 {
	sigma := zeta * wn
	q := wn * wn * (1 - zeta*zeta)
	hi := 1 / wn
	for unitStep2(zeta, wn, hi) < level && hi < 1e6/wn {
		hi *= 2
	}
	lo := 0.0
	t := 0.5 * (lo + hi)
	for range 60 {
		k := kernelAt(sigma, q, t)
		f := 1 - k.c - sigma*k.s - level
		if f < 0 {
			lo = t
		} else {
			hi = t
		}
		next := t - f/(wn*wn*k.s)
		if !(next > lo && next < hi) {
			next = 0.5 * (lo + hi)
		}
		if math.Abs(next-t) <= 1e-15*hi || hi-lo <= 1e-15*hi {
			return next
		}
		t = next
	}
	return t
}

// lastOutsideBand is the last instant in [0, horizon] at which the unit-step
// model lies outside 1 ± identBand, on a grid of 2000 points (stepped, see
// stepfit.go) refined by bisection; 0 when it never does after the start.
func lastOutsideBand(zeta, wn, horizon float64) float64 {
	if !(horizon > 0) {
		return 0
	}
	const n = 2000
	sigma := zeta * wn
	q := wn * wn * (1 - zeta*zeta)
	dt := horizon / n
	// Beyond tEnd the model stays inside the band: for ζ < 1,
	// |s − 1| ≤ e^(−στ)/√(1 − ζ²); for ζ ≥ 1 the model does not overshoot,
	// so once inside it stays.
	tEnd := math.Inf(1)
	if zeta < 1 && sigma > 0 {
		tEnd = math.Log(1/(identBand*math.Sqrt(1-zeta*zeta))) / sigma
	}
	st := newKstep(sigma, q, dt)
	k := st.next2(kern{c: 1}) // the kernel at dt from τ = 0
	last := 0
	for i := 1; i <= n; i++ {
		if i > 1 {
			k = st.next2(k)
		}
		if math.Abs(k.c+sigma*k.s) > identBand { // |s − 1| = |e^(−στ)(C + σS)|
			last = i
		} else if zeta >= 1 || horizon*float64(i-1)/n > tEnd {
			break
		}
	}
	switch last {
	case 0:
		return 0
	case n:
		return horizon
	}
	out := func(t float64) bool { return math.Abs(unitStep2(zeta, wn, t)-1) > identBand }
	lo, hi := horizon*float64(last)/n, horizon*float64(last+1)/n
	for range 40 {
		mid := 0.5 * (lo + hi)
		if out(mid) {
			lo = mid
		} else {
			hi = mid
		}
	}
	return lo
}

// refine fits (ζ, ωn, θ) to the bins of fit from the start point
// (zeta0, wn0, th0), θ bounded to [0, thMax]. It minimises the binned mean
// square over x = (ln ωn, ln ζ, θ·wn0) with the modified Newton method of
// gonum.org/v1/gonum/optimize and its default bisection line search, on the
// analytic gradient and the Gauss–Newton matrix of stepFit.eval: for a
// least-squares problem this is the damped Gauss–Newton method (J. Nocedal
// and S. J. Wright, Numerical Optimization, 2nd ed., §10.3). The dead time
// is searched without its bounds first; a minimum outside them is replaced
// by the minimum over ζ and ωn at the bound it crosses, the bound being then
// active (Nocedal and Wright §12.1). A single evaluation task and no random
// element make the result deterministic.
func refine(fit *stepFit, zeta0, wn0, th0, thMax float64) (zeta, wn, th float64, err error) {
	x, err := search(fit, wn0, []float64{math.Log(wn0), math.Log(zeta0), th0 * wn0}, 0)
	if err != nil {
		return 0, 0, 0, err
	}
	zeta, wn, th = math.Exp(x[1]), math.Exp(x[0]), x[2]/wn0
	if th >= 0 && th <= thMax {
		return zeta, wn, th, nil
	}
	th = math.Max(0, math.Min(th, thMax))
	if x, err = search(fit, wn0, []float64{x[0], x[1]}, th); err != nil {
		return 0, 0, 0, err
	}
	return math.Exp(x[1]), math.Exp(x[0]), th, nil
}

// Search limits.
const (
	// searchMaxEvals bounds the objective evaluations of one search.
	searchMaxEvals = 200
	// searchGradTol is the gradient (max norm) at which a search stops: the
	// objective is a mean square over dy², so this places ln ωn, ln ζ and
	// θ·ωn within about 10⁻⁸ of the minimum.
	searchGradTol = 1e-10
	// searchStall is the number of iterations over which the objective must
	// fall by more than 10⁻¹³ of itself for a search to go on.
	searchStall = 8
)

// search minimises fit's objective over x = (ln ωn, ln ζ, θ·scale) from
// x0, or over (ln ωn, ln ζ) at the dead time th when len(x0) is 2. It stops
// once the gradient's largest component is below searchGradTol, the
// objective stalls (searchStall), or after searchMaxEvals evaluations; a
// search that ends on a line-search failure keeps the best point found, the
// point the line search could not improve. A value that is not a number
// counts as +Inf.
func search(fit *stepFit, scale float64, x0 []float64, th float64) ([]float64, error) {
	dim := len(x0)
	var (
		cx    [3]float64
		cf    float64
		cg    [3]float64
		ch    [3][3]float64
		valid bool
	)
	at := func(x []float64) {
		if valid && x[0] == cx[0] && x[1] == cx[1] && (dim == 2 || x[2] == cx[2]) {
			return
		}
		zeta, wn, t := math.Exp(x[1]), math.Exp(x[0]), th
		if dim == 3 {
			t = x[2] / scale
		}
		f, g, h := fit.eval(zeta, wn, t)
		if math.IsNaN(f) || math.IsInf(f, 0) {
			f, g, h = math.Inf(1), [3]float64{}, [6]float64{}
		}
		copy(cx[:], x)
		cf, valid = f, true
		// From p = (θ, ln ωn, ζ) to x: x_a is p_pa scaled by 1/fa.
		pa, fa := [3]int{1, 2, 0}, [3]float64{1, zeta, 1 / scale}
		hp := [3][3]float64{{h[0], h[1], h[2]}, {h[1], h[3], h[4]}, {h[2], h[4], h[5]}}
		for a := range 3 {
			cg[a] = fa[a] * g[pa[a]]
			for b := range 3 {
				ch[a][b] = fa[a] * fa[b] * hp[pa[a]][pa[b]]
			}
		}
	}
	at(x0)
	if math.IsInf(cf, 0) {
		return nil, fmt.Errorf("least-squares fit failed: the residual at the start point (ωn %s rad/s, ζ %s) is not finite",
			fmtNum(math.Exp(x0[0])), fmtNum(math.Exp(x0[1])))
	}
	problem := optimize.Problem{
		Func: func(x []float64) float64 { at(x); return cf },
		Grad: func(grad, x []float64) { at(x); copy(grad, cg[:dim]) },
		Hess: func(hess *mat.SymDense, x []float64) {
			at(x)
			for a := range dim {
				for b := a; b < dim; b++ {
					hess.SetSym(a, b, ch[a][b])
				}
			}
		},
	}
	settings := &optimize.Settings{
		GradientThreshold: searchGradTol,
		FuncEvaluations:   searchMaxEvals,
		Converger:         &optimize.FunctionConverge{Relative: 1e-13, Absolute: 1e-300, Iterations: searchStall},
	}
	res, err := optimize.Minimize(problem, x0, settings, &optimize.Newton{GradStopThreshold: searchGradTol})
	if res == nil || math.IsInf(res.F, 0) || math.IsNaN(res.F) {
		if err != nil {
			return nil, fmt.Errorf("least-squares fit failed: %w", err)
		}
		return nil, errors.New("least-squares fit failed: the residual is not finite")
	}
	return res.X, nil
}
