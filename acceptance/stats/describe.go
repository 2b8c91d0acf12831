package stats

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/stat"
)

// Summary describes one sample: its size, mean and sample standard
// deviation (divisor n − 1).
type Summary struct {
	// N is the number of values.
	N int
	// Mean is the arithmetic mean; set whenever N ≥ 1 and every value is finite.
	Mean float64
	// SD is the sample standard deviation with divisor N − 1.
	SD float64
	// Reason is empty when Mean and SD are known; otherwise it says why not
	// (fewer than two values, or a non-finite value).
	Reason string
}

// Known reports whether the summary's mean and standard deviation were computed.
func (s Summary) Known() bool { return s.Reason == "" }

// Describe returns the size, mean and sample standard deviation of x. The
// mean and variance use the corrected two-pass algorithm (gonum's
// stat.MeanVariance; T. F. Chan, G. H. Golub, R. J. LeVeque, "Algorithms for
// computing the sample variance", The American Statistician 37 (1983)).
func Describe(x []float64) Summary {
	s := Summary{N: len(x)}
	if r := finiteReason(x); r != "" {
		s.Reason = r
		return s
	}
	if len(x) == 0 {
		s.Reason = "no values"
		return s
	}
	if len(x) == 1 {
		s.Mean = x[0]
		s.Reason = "one value: the standard deviation needs at least two"
		return s
	}
	m, v := stat.MeanVariance(x, nil)
	s.Mean, s.SD = m, math.Sqrt(v)
	return s
}

// SummaryOf builds a Summary from published or stored statistics (n, mean,
// standard deviation), checking that they are usable.
func SummaryOf(n int, mean, sd float64) Summary {
	s := Summary{N: n, Mean: mean, SD: sd}
	switch {
	case n < 2:
		s.Reason = "fewer than two values"
	case math.IsNaN(mean) || math.IsInf(mean, 0) || math.IsNaN(sd) || math.IsInf(sd, 0):
		s.Reason = "a non-finite mean or standard deviation"
	case sd < 0:
		s.Reason = "a negative standard deviation"
	}
	return s
}

// Quantile returns the p-quantile of the values in sorted (ascending) by
// linear interpolation between order statistics: definition 7 of
// R. J. Hyndman and Y. Fan, "Sample quantiles in statistical packages",
// The American Statistician 50 (1996), h = (n − 1)p. The second result is
// false when sorted is empty, not sorted, holds a non-finite value, or p
// lies outside [0, 1].
func Quantile(sorted []float64, p float64) (float64, bool) {
	n := len(sorted)
	if n == 0 || !(p >= 0 && p <= 1) || finiteReason(sorted) != "" ||
		!sort.Float64sAreSorted(sorted) {
		return 0, false
	}
	h := float64(n-1) * p
	lo := int(math.Floor(h))
	if lo >= n-1 {
		return sorted[n-1], true
	}
	return sorted[lo] + (h-float64(lo))*(sorted[lo+1]-sorted[lo]), true
}

// finiteReason returns a reason when x holds a NaN or an infinity.
func finiteReason(x []float64) string {
	for _, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return "a value is not a finite number"
		}
	}
	return ""
}
