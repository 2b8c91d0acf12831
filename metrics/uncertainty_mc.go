package metrics

import (
	"math"
	"math/rand/v2"
	"slices"
)

// The Monte Carlo evaluations of JCGM 101:2008 on the trace. Each trial
// adds Gaussian noise to the smoothed response on the samples that can
// decide the metric (a window found with a margin of six standard
// deviations; samples outside it change the result with negligible
// probability), passes them through an encoder of the resolution found or
// given, its grid at an offset drawn for the trial (so the correlated
// quantisation of neighbouring samples near a flat peak is kept, which a
// model of independent errors would lose), draws the state levels, and
// measures the metric by the same definition as MeasureStep. The standard
// deviation of the trials is the metric's standard uncertainty from those
// inputs.

// mcCrossings returns the standard uncertainty of the first instant at
// which the response reaches fraction fracs[0] of the transition or, with
// two fractions, of the interval between that instant and the first one
// after it at fracs[1] (the rise time).
func (e *uStep) mcCrossings(fracs ...float64) float64 {
	n := len(e.y)
	lo, hi := make([]int, len(fracs)), make([]int, len(fracs))
	from := 0
	for k, f := range fracs {
		l, ul := e.level(f)
		_, i, ok := crossing(e.t, e.y, l, e.up, from)
		if !ok {
			return 0
		}
		from = i
		margin := 6 * math.Hypot(e.sigmaA, ul)
		j := i
		for j > 0 && e.dir*(l-e.fitted(j)) <= margin {
			j--
		}
		lo[k] = j
		j = i
		for j < n-1 && e.dir*(e.fitted(j)-l) <= margin {
			j++
		}
		hi[k] = j
	}
	// Only the samples of the windows are drawn: a trial's crossing lies
	// within its window, and the samples between two windows decide
	// nothing.
	a, b := slices.Min(lo), slices.Max(hi)
	ys := make([]float64, b-a+1)
	drawn := 0
	for k := range lo {
		drawn += hi[k] - lo[k] + 1
	}
	r := e.rng(DeadTime)
	if len(fracs) == 2 {
		r = e.rng(RiseTime)
	}
	trials := e.trials(drawn)
	out := make([]float64, trials)
	times := make([]float64, len(fracs))
	for tr := range out {
		off := e.offset(r)
		y0, y1 := e.levels(r, off, false)
		for k := range lo {
			for j := max(lo[k], a); j <= hi[k]; j++ {
				ys[j-a] = e.trial(r, j, off)
			}
		}
		start := a
		for k, f := range fracs {
			l := y0 + f*(y1-y0)
			times[k], start = e.firstReach(ys, a, l, max(start, lo[k]), hi[k])
		}
		out[tr] = times[len(times)-1]
		if len(times) == 2 {
			out[tr] -= times[0]
		}
	}
	return sd(out)
}

// firstReach returns the time after t[0], and the sample index, at which
// the trial ys (samples a.. of the step) first reaches level l at or after
// sample from, interpolated as crossing does; hi when it is not reached by
// then.
func (e *uStep) firstReach(ys []float64, a int, l float64, from, hi int) (float64, int) {
	beyond := func(j int) bool { return e.dir*(ys[j-a]-l) >= 0 }
	for j := from; j <= hi; j++ {
		if !beyond(j) {
			continue
		}
		if j == from || beyond(j-1) {
			return e.t[j] - e.t[0], j
		}
		f := (l - ys[j-1-a]) / (ys[j-a] - ys[j-1-a])
		return e.t[j-1] + f*(e.t[j]-e.t[j-1]) - e.t[0], j
	}
	return e.t[hi] - e.t[0], hi
}

// peak returns the standard uncertainties of the peak value, the peak time
// and, when withOvershoot, the overshoot.
func (e *uStep) peak(withOvershoot bool) (pv, pt, os float64) {
	_, at := MeasurePeak(e.t, e.y, e.up)
	k := 0
	for k < len(e.t)-1 && e.t[k]-e.t[0] < at.V {
		k++
	}
	ext := e.dir * e.y[k]
	// The samples that can hold the peak of a trial: a generous cut on the
	// raw samples, then six standard deviations on the fitted ones (a
	// sample fitted 7σₐ below the best wins with negligible probability).
	var cand []int
	best := math.Inf(-1)
	for i, v := range e.y {
		if e.dir*v >= ext-14*e.sigmaA {
			cand = append(cand, i)
			best = math.Max(best, e.dir*e.fitted(i))
		}
	}
	cand = slices.DeleteFunc(cand, func(i int) bool { return e.dir*e.fitted(i) < best-7*e.sigmaA })
	r := e.rng(PeakValue)
	trials := e.trials(len(cand))
	vals, times, over := make([]float64, trials), make([]float64, trials), make([]float64, trials)
	for tr := range vals {
		off := e.offset(r)
		y0, y1 := e.levels(r, off, false)
		bi, bv := -1, math.Inf(-1)
		for _, i := range cand {
			if v := e.dir * e.trial(r, i, off); v > bv {
				bi, bv = i, v
			}
		}
		vals[tr], times[tr] = e.dir*bv, e.t[bi]-e.t[0]
		if withOvershoot && y1 != y0 {
			over[tr] = math.Max(0, e.dir*(e.dir*bv-y1)) / math.Abs(y1-y0) * 100
		}
	}
	// The sampled peak misses the true one by up to |ÿ|Δt²/8 and its time
	// is uniform within a sample period (GUM §4.3.7, F.2.2.1).
	dt := math.Max(e.period(k), e.period(k+1))
	_, _, curv := localFit(e.t, e.y, k, e.half)
	samp := math.Abs(curv) * dt * dt / 8 / math.Sqrt(12)
	pv = math.Hypot(sd(vals), samp)
	pt = math.Hypot(sd(times), dt/math.Sqrt(12))
	if withOvershoot {
		os = sd(over)
		if a := math.Abs(e.m.FinalValue.V - e.m.InitialValue.V); e.m.Overshoot.V > 0 && a > 0 {
			os = math.Hypot(os, samp/a*100)
		}
	}
	return pv, pt, os
}

// settlingTime returns the standard uncertainty of the settling time: the
// last exit from the band about a final value drawn in each trial.
func (e *uStep) settlingTime() float64 {
	n := len(e.y)
	y1 := e.m.FinalValue.V
	h := e.o.Band * math.Abs(e.m.Step.Size())
	margin := 6*math.Hypot(e.sigmaA, e.u1) + 6*e.sigmaA
	hiIdx := -1
	for i := n - 1; i >= 0; i-- {
		if math.Abs(e.y[i]-y1) > h-margin {
			hiIdx = i
			break
		}
	}
	if hiIdx < 0 {
		return 0 // no trial leaves the band: settled from the step instant
	}
	loIdx := -1
	for i := hiIdx; i >= 0; i-- {
		if math.Abs(e.y[i]-y1) > h+margin {
			loIdx = i
			break
		}
	}
	// A sample of the window whose fitted value is farther than the margin
	// from both band edges is inside or outside in every trial; only the
	// others are drawn.
	var amb []bool
	count := 0
	fine := 6 * math.Hypot(e.sigmaA, e.u1)
	for i := max(loIdx, 0); i <= hiIdx; i++ {
		d := math.Abs(math.Abs(e.fitted(i)-y1) - h)
		amb = append(amb, d <= fine)
		if d <= fine {
			count++
		}
	}
	r := e.rng(SettlingTime)
	out := make([]float64, e.trials(count))
	for tr := range out {
		off := e.offset(r)
		_, c := e.levels(r, off, true)
		out[tr] = e.lastExit(r, off, c, h, loIdx, hiIdx, amb)
	}
	u := sd(out)
	if last := lastOutside(e.y, y1, h); last >= 0 && last < n-1 {
		_, slope, curv := localFit(e.t, e.y, last, e.half)
		u = math.Hypot(u, e.interpolation(last+1, slope, curv))
	}
	return u
}

// lastExit is the settling time of one trial about centre c with
// half-width h: scanning back from hiIdx, the exit after the first sample
// outside the band (drawn where amb says the trial can decide it, else
// the fitted value), interpolated with the sample after it; after loIdx
// (outside in every trial) when none is found above it, or 0 when there is
// no such sample. A trial still outside at the record's last sample counts
// as settling then.
func (e *uStep) lastExit(r *rand.Rand, off, c, h float64, loIdx, hiIdx int, amb []bool) float64 {
	n := len(e.y)
	a := max(loIdx, 0)
	value := func(i int) float64 {
		if i-a < len(amb) && amb[i-a] {
			return e.trial(r, i, off)
		}
		return e.fitted(i)
	}
	j, vj := loIdx, 0.0
	next, known := 0.0, false // the value of sample j+1, once drawn
	for i := hiIdx; i > loIdx; i-- {
		if i-a < len(amb) && !amb[i-a] && math.Abs(e.fitted(i)-c) <= h {
			known = false
			continue // inside in every trial
		}
		v := value(i)
		if math.Abs(v-c) > h {
			j, vj = i, v
			break
		}
		next, known = v, true
	}
	switch {
	case j < 0:
		return 0
	case j >= n-1:
		return e.t[n-1] - e.t[0]
	case j == loIdx:
		vj = value(j)
	}
	if !known {
		next = value(j + 1)
	}
	edge := c + math.Copysign(h, vj-c)
	f := (edge - vj) / (next - vj)
	f = math.Min(math.Max(f, 0), 1)
	return e.t[j] + f*(e.t[j+1]-e.t[j]) - e.t[0]
}
