package metrics

import (
	"math"
	"slices"
	"strconv"
)

// FindQuantum returns the count of a quantised signal found in its samples:
// the smallest non-zero difference between consecutive samples, when every
// difference is a whole multiple of it (to one part in 10⁶, so the residue
// of decimal logs read as binary floats does not hide it). The count is
// averaged over the differences and given to twelve significant digits.
// ok is false when the samples show no count: fewer than eight non-zero
// differences, or differences that are not multiples of one step (an
// unquantised or filtered signal).
func FindQuantum(y []float64) (q float64, ok bool) {
	if len(y) < 2 {
		return 0, false
	}
	scale := 0.0
	for _, v := range y {
		scale = math.Max(scale, math.Abs(v))
	}
	floor := scale * 1e-12 // differences below this are float residue
	m := math.Inf(1)
	nz := 0
	for i := 1; i < len(y); i++ {
		if d := math.Abs(y[i] - y[i-1]); d > floor {
			m = math.Min(m, d)
			nz++
		}
	}
	if nz < 8 {
		return 0, false
	}
	var sum, counts float64
	for i := 1; i < len(y); i++ {
		d := math.Abs(y[i] - y[i-1])
		if d <= floor {
			continue
		}
		k := math.Round(d / m)
		if k > 1e6 || math.Abs(d/m-k) > 1e-6*k {
			return 0, false
		}
		sum += d
		counts += k
	}
	q, _ = strconv.ParseFloat(strconv.FormatFloat(sum/counts, 'g', 12, 64), 64)
	return q, true
}

// noiseSD estimates the standard deviation of white noise on a window of a
// steady signal from its second differences dᵢ = yᵢ₊₁ − 2yᵢ + yᵢ₋₁, whose
// variance is 6σ² and which a linear drift within the window does not
// change (the variate-difference method; J. von Neumann, Ann. Math.
// Statist. 12, 1941, for the first differences): σ² = Σd²/(6·count) over
// the differences within five robust standard deviations (1.4826·median|d|)
// of zero, so a glitch does not count as noise, or over all of them when
// that median is zero. 0 for fewer than three samples.
func noiseSD(w []float64) float64 {
	if len(w) < 3 {
		return 0
	}
	d := make([]float64, len(w)-2)
	for i := range d {
		d[i] = math.Abs(w[i+2] - 2*w[i+1] + w[i])
	}
	lim := math.Inf(1)
	if r := madScale * median(slices.Clone(d)); r > 0 {
		lim = 5 * r
	}
	var ss float64
	k := 0
	for _, v := range d {
		if v <= lim {
			ss += v * v
			k++
		}
	}
	return math.Sqrt(ss / (6 * float64(k)))
}

// resolutionSystematic is the standard uncertainty a quantiser of step q
// leaves in the mean of a window whose noise (without the quantisation) has
// standard deviation sn: q/√12 when the noise is too small to dither the
// quantiser (GUM F.2.2.1), falling as exp(−2π²sn²/q²), the first term of
// the quantiser's bias for Gaussian input (B. Widrow and I. Kollár,
// Quantization Noise, 2008, ch. 4), to nothing when it is dithered.
func resolutionSystematic(q, sn float64) float64 {
	if q <= 0 {
		return 0
	}
	return q / math.Sqrt(12) * math.Exp(-2*math.Pi*math.Pi*sn*sn/(q*q))
}

// medianPeriod returns the median interval between the samples of t.
func medianPeriod(t []float64) float64 {
	if len(t) < 2 {
		return 0
	}
	d := make([]float64, len(t)-1)
	for i := range d {
		d[i] = t[i+1] - t[i]
	}
	return median(d)
}

// localFit fits y ≈ a + b(t − t[c]) + ½·k(t − t[c])² by least squares over
// the samples c−h..c+h (clipped to the slice) and returns the fitted value,
// slope and curvature at t[c]. With fewer than three samples it returns
// y[c] and zero derivatives.
func localFit(t, y []float64, c, h int) (v, slope, curv float64) {
	lo, hi := max(c-h, 0), min(c+h, len(y)-1)
	if hi-lo < 2 {
		return y[c], 0, 0
	}
	// Times are scaled to the window's span so the sums stay well
	// conditioned.
	sc := t[hi] - t[lo]
	var s0, s1, s2, s3, s4, sy, sxy, sx2y float64
	for i := lo; i <= hi; i++ {
		x := (t[i] - t[c]) / sc
		x2 := x * x
		s0++
		s1 += x
		s2 += x2
		s3 += x2 * x
		s4 += x2 * x2
		sy += y[i]
		sxy += x * y[i]
		sx2y += x2 * y[i]
	}
	// Normal equations [s0 s1 s2; s1 s2 s3; s2 s3 s4]·[a b c] = [sy sxy sx2y],
	// solved by Cramer's rule.
	det := s0*(s2*s4-s3*s3) - s1*(s1*s4-s3*s2) + s2*(s1*s3-s2*s2)
	if det == 0 || !finite(det) {
		return y[c], 0, 0
	}
	a := (sy*(s2*s4-s3*s3) - s1*(sxy*s4-s3*sx2y) + s2*(sxy*s3-s2*sx2y)) / det
	b := (s0*(sxy*s4-sx2y*s3) - sy*(s1*s4-s3*s2) + s2*(s1*sx2y-sxy*s2)) / det
	cc := (s0*(s2*sx2y-sxy*s3) - s1*(s1*sx2y-sxy*s2) + sy*(s1*s3-s2*s2)) / det
	return a, b / sc, 2 * cc / (sc * sc)
}
