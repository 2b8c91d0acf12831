package stats

import "math"

// Constants of the individuals and moving-range chart, for moving ranges of
// two consecutive points (ISO 7870-2:2013, table of control-chart factors;
// D. C. Montgomery, Introduction to Statistical Quality Control, Appendix VI).
const (
	// D2 is d₂ for n = 2: the mean range of two normal values in units of σ
	// (exactly 2/√π = 1.12838).
	D2 = 1.128
	// E2 is the factor of the individuals chart's limits, 3/d₂ as tabulated.
	E2 = 2.66
	// D4 is the factor of the moving-range chart's upper limit for n = 2
	// (1 + 3·d₃/d₂ with d₃ = 0.853); its lower limit is 0 (D₃ = 0).
	D4 = 3.267
)

// Limits are the centre line and control limits of an individuals chart.
type Limits struct {
	// Centre is the centre line.
	Centre float64
	// LCL and UCL are the lower and upper control limits (the 3σ limits).
	LCL, UCL float64
}

// zone returns the width of one zone: a sixth of the span between the
// limits (ISO 7870-2 divides each half of the chart into three zones of 1σ).
func (l Limits) zone() float64 { return (l.UCL - l.LCL) / 6 }

// IndividualsChart is an individuals (X) chart with its moving-range (mR)
// chart. The limits come from a baseline of leading points and are applied
// to every point.
type IndividualsChart struct {
	// Baseline is the number of leading points the limits were computed from.
	Baseline int
	// Limits are the X chart's centre line (the baseline mean) and its
	// limits Centre ± E2·MRBar.
	Limits
	// Sigma is the within estimate of the standard deviation, MRBar/D2.
	Sigma float64
	// MRBar is the mean moving range of the baseline, the mR chart's centre line.
	MRBar float64
	// MRUCL is the mR chart's upper limit D4·MRBar; its lower limit is 0.
	MRUCL float64
	// MovingRanges holds |x[i] − x[i−1]| at index i for every point; index 0,
	// which has no predecessor, holds 0 and is not plotted.
	MovingRanges []float64
	// Signals are the X chart's special-cause signals over all points, in
	// order of index and then of Rules.
	Signals []Signal
	// RangeSignals are the points whose moving range lies above MRUCL, each
	// with the rule RuleRangeBeyondLimit.
	RangeSignals []Signal
	// Reason is empty when the chart was computed; otherwise it says why not.
	Reason string
}

// Known reports whether the chart was computed.
func (c IndividualsChart) Known() bool { return c.Reason == "" }

// Individuals builds an individuals and moving-range chart over x, with the
// centre line x̄ and the mean moving range MR̄ taken from the first baseline
// points (2 ≤ baseline ≤ len(x)): X chart limits x̄ ± 2.66·MR̄, mR chart
// upper limit 3.267·MR̄ (ISO 7870-2:2013; D. C. Montgomery, Introduction to
// Statistical Quality Control, chapter 6, charts for individual
// measurements). Every point,
// inside the baseline or after it, is tested for special causes with
// SpecialCauses.
func Individuals(x []float64, baseline int) IndividualsChart {
	c := IndividualsChart{Baseline: baseline}
	switch {
	case finiteReason(x) != "":
		c.Reason = finiteReason(x)
		return c
	case baseline < 2 || baseline > len(x):
		c.Reason = "the baseline needs at least two points and no more than there are"
		return c
	}
	var sum, mrSum float64
	for i, v := range x[:baseline] {
		sum += v
		if i > 0 {
			mrSum += math.Abs(v - x[i-1])
		}
	}
	mrBar := mrSum / float64(baseline-1)
	if mrBar == 0 {
		c.Reason = "the baseline points do not vary: the limits would have no width"
		return c
	}
	centre := sum / float64(baseline)
	c.Limits = Limits{Centre: centre, LCL: centre - E2*mrBar, UCL: centre + E2*mrBar}
	c.MRBar, c.MRUCL, c.Sigma = mrBar, D4*mrBar, mrBar/D2
	c.MovingRanges = make([]float64, len(x))
	for i := 1; i < len(x); i++ {
		c.MovingRanges[i] = math.Abs(x[i] - x[i-1])
		if c.MovingRanges[i] > c.MRUCL {
			c.RangeSignals = append(c.RangeSignals, Signal{RuleRangeBeyondLimit, i})
		}
	}
	c.Signals = SpecialCauses(x, c.Limits)
	return c
}
