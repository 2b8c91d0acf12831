package chart

import "math"

// tolMM is how far on paper, in millimetres, a line through the samples
// a unit figure keeps may pass from a sample it leaves out: a twentieth of
// the 1 pt response line and half a dot of a 600 dpi printer.
const tolMM = 0.02

// bucketMM is the width on paper, in millimetres, of one bucket of a
// series reduced with Envelope for a unit figure: less than two widths of
// the 1 pt (0.35 mm) response line, and within each the reduced line
// still reaches the bucket's lowest and highest sample.
const bucketMM = 0.5

// bucketCount returns the number of Envelope buckets for a plot w millimetres
// wide on paper, at least one.
func bucketCount(w float64) int {
	n := int(math.Ceil(w / bucketMM))
	if n < 1 {
		return 1
	}
	return n
}

// Envelope reduces a series sampled in time order (t ascending) to what a
// plot of the given number of horizontal buckets can show. It splits the
// time span t[0] … t[len−1] into buckets of equal duration and keeps, of
// the samples in each, the first, the lowest, the highest and the last, in
// time order and each sample once. Drawn as a line, the result reaches
// every extreme the full series reaches within each bucket, so spikes, the
// overshoot peak and the crossings of a band survive; the global minimum
// and maximum, the first and the last sample are always kept.
//
// A series of at most 4 × buckets samples cannot be reduced by this and is
// returned as it is: the same slices, not copies. Otherwise the result is
// new and has at most 4 × buckets samples. buckets below 1 counts as 1.
func Envelope(t, y []float64, buckets int) ([]float64, []float64) {
	if buckets < 1 {
		buckets = 1
	}
	n := len(t)
	if n <= 4*buckets {
		return t, y
	}
	t0, span := t[0], t[n-1]-t[0]
	bucket := func(x float64) int {
		if !(span > 0) {
			return 0
		}
		b := int((x - t0) / span * float64(buckets))
		return min(max(b, 0), buckets-1)
	}
	ot := make([]float64, 0, 4*buckets)
	oy := make([]float64, 0, 4*buckets)
	last := -1 // the last sample kept
	keep := func(i int) {
		if i != last {
			ot, oy = append(ot, t[i]), append(oy, y[i])
			last = i
		}
	}
	for lo := 0; lo < n; {
		b := bucket(t[lo])
		hi := lo + 1
		for hi < n && bucket(t[hi]) == b {
			hi++
		}
		imin, imax := lo, lo
		for i := lo + 1; i < hi; i++ {
			if y[i] < y[imin] {
				imin = i
			}
			if y[i] > y[imax] {
				imax = i
			}
		}
		keep(lo)
		keep(min(imin, imax))
		keep(max(imin, imax))
		keep(hi - 1)
		lo = hi
	}
	return ot, oy
}

// levelChanges keeps, of a series drawn as steps (each value held until
// the next sample), the first and the last sample and those at which the
// value changes: the staircase through them is the same. The result is
// new; t and y are not changed.
func levelChanges(t, y []float64) ([]float64, []float64) {
	if len(t) == 0 {
		return nil, nil
	}
	ot, oy := []float64{t[0]}, []float64{y[0]}
	for i := 1; i < len(t)-1; i++ {
		if y[i] != oy[len(oy)-1] {
			ot, oy = append(ot, t[i]), append(oy, y[i])
		}
	}
	if n := len(t); n > 1 {
		ot, oy = append(ot, t[n-1]), append(oy, y[n-1])
	}
	return ot, oy
}

// simplify leaves out the samples of a series in time order that a line
// drawn through the others passes within tol of, measured along the value
// axis: each sample left out lies within tol of the straight line between
// the kept samples before and after it. The first and the last sample and
// the first lowest and first highest are always kept. It is linear in the
// number of samples: from each kept sample it extends the line as far as
// one slope still passes within tol of every sample on the way (the
// slopes that do narrow with each sample). The result is new unless there
// is nothing to leave out (fewer than three samples or tol not positive),
// when t and y are returned as they are.
func simplify(t, y []float64, tol float64) ([]float64, []float64) {
	n := len(t)
	if n < 3 || !(tol > 0) {
		return t, y
	}
	imin, imax := 0, 0
	for i := range y {
		if y[i] < y[imin] {
			imin = i
		}
		if y[i] > y[imax] {
			imax = i
		}
	}
	ot, oy := []float64{t[0]}, []float64{y[0]}
	a := 0 // the last sample kept
	lo, hi := math.Inf(-1), math.Inf(1)
	anchor := func(i int) {
		if i != a {
			ot, oy = append(ot, t[i]), append(oy, y[i])
			a = i
		}
		lo, hi = math.Inf(-1), math.Inf(1)
	}
	for k := 1; k < n; k++ {
		dt := t[k] - t[a]
		if !(dt > 0) {
			// A jump at one instant (or samples out of order): keep both
			// sides of it.
			anchor(k - 1)
			anchor(k)
			continue
		}
		if s := (y[k] - y[a]) / dt; k > a+1 && !(s >= lo && s <= hi) {
			// The line to k would miss a sample on the way: end it at k−1.
			anchor(k - 1)
			if dt = t[k] - t[a]; !(dt > 0) {
				anchor(k)
				continue
			}
		}
		lo = max(lo, (y[k]-tol-y[a])/dt)
		hi = min(hi, (y[k]+tol-y[a])/dt)
		if k == imin || k == imax || k == n-1 {
			anchor(k)
		}
	}
	return ot, oy
}
