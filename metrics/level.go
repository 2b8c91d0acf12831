package metrics

import (
	"math"
	"slices"
)

// madScale turns a median absolute deviation into an estimate of the standard
// deviation of Gaussian noise: 1/Φ⁻¹(3/4) = 1.4826 (P. J. Rousseeuw and
// C. Croux, "Alternatives to the median absolute deviation", J. Amer. Statist.
// Assoc. 88(424), 1993).
const madScale = 1.4826

// outlierMADs is how many scaled MADs from the median a sample may lie and
// still count towards a state level (the usual 3σ rejection rule; common
// practice, no source).
const outlierMADs = 3

// Level is the state level of a window of samples together with the evidence
// of whether the window is steady.
type Level struct {
	// Value is the state level: the mean of the samples that lie within
	// 3 scaled MADs of the window's median (when the MAD is zero, more than
	// half the window holds one value and that value is the level).
	Value float64
	// Drift is |level of the second half − level of the first half|, each
	// half's level found the same way; 0 for a one-sample window.
	Drift float64
	// Spread is the robust standard deviation of the window, 1.4826 × MAD.
	Spread float64
	// N is the number of samples in the window.
	N int
}

// Steady reports whether both the drift and the spread are at most tol.
func (l Level) Steady(tol float64) bool { return l.Drift <= tol && l.Spread <= tol }

// StateLevel estimates the level a signal holds over the window y, in the
// spirit of IEEE Std 181-2011 §5.2 (state levels estimated from the waveform
// itself): the mean after rejecting outliers by median and MAD, which stays
// close to the true level under Gaussian noise, encoder quantisation and the
// odd glitch sample. It also returns the window's drift and spread so a
// caller can tell whether the window is steady. ok is false when y is empty.
func StateLevel(y []float64) (l Level, ok bool) {
	if len(y) == 0 {
		return Level{}, false
	}
	bp := scratchPool.Get().(*[]float64)
	l = stateLevel(y, scratch(bp, len(y)))
	scratchPool.Put(bp)
	return l, true
}

// stateLevel is StateLevel with a caller-owned scratch buffer at least
// len(y) long; y is not modified.
func stateLevel(y, buf []float64) Level {
	l := Level{N: len(y)}
	var mad float64
	l.Value, mad = robustMean(y, buf)
	l.Spread = madScale * mad
	if h := len(y) / 2; h > 0 {
		a, _ := robustMean(y[:h], buf)
		b, _ := robustMean(y[h:], buf)
		l.Drift = math.Abs(b - a)
	}
	return l
}

// robustMean returns the mean of the samples of y within outlierMADs scaled
// MADs of the median, and the MAD itself. len(y) > 0.
func robustMean(y, buf []float64) (mean, mad float64) {
	b := append(buf[:0], y...)
	med := median(b)
	for i, v := range y {
		b[i] = math.Abs(v - med)
	}
	mad = median(b)
	lim := outlierMADs * madScale * mad
	var sum float64
	var k int
	for _, v := range y {
		if math.Abs(v-med) <= lim {
			sum += v - med
			k++
		}
	}
	if k == 0 { // cannot happen: at least the samples nearest the median are kept
		return med, mad
	}
	return med + sum/float64(k), mad
}

// median returns the median of b (the mean of the two middle values for an
// even count), reordering b. It selects rather than sorts: linear time on
// average, the same value a sort would give.
func median(b []float64) float64 {
	n := len(b)
	k := n / 2
	v := nth(b, k)
	if n%2 == 1 {
		return v
	}
	m := b[0] // b[:k] holds the k smallest values; the largest is the other middle
	for _, x := range b[1:k] {
		if x > m { // b holds no NaN, so a comparison does
			m = x
		}
	}
	return (m + v) / 2
}

// nth reorders b so that b[k] is the value a sort would put there, with no
// larger value before it and no smaller after it, and returns b[k]
// (quickselect with a median-of-three pivot; after 64 rounds it sorts what
// is left, so the worst case stays O(n log n)). b holds no NaN.
func nth(b []float64, k int) float64 {
	lo, hi := 0, len(b)-1
	for round := 0; lo < hi; round++ {
		if round == 64 {
			slices.Sort(b[lo : hi+1])
			break
		}
		mid := lo + (hi-lo)/2
		if b[mid] < b[lo] {
			b[mid], b[lo] = b[lo], b[mid]
		}
		if b[hi] < b[lo] {
			b[hi], b[lo] = b[lo], b[hi]
		}
		if b[hi] < b[mid] {
			b[hi], b[mid] = b[mid], b[hi]
		}
		pivot := b[mid]
		i, j := lo, hi
		for i <= j {
			for b[i] < pivot {
				i++
			}
			for b[j] > pivot {
				j--
			}
			if i <= j {
				b[i], b[j] = b[j], b[i]
				i++
				j--
			}
		}
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return b[k]
		}
	}
	return b[k]
}
