package stats

import (
	"math"
	"reflect"
	"testing"
)

// D. C. Montgomery, Introduction to Statistical Quality Control, 6th ed.,
// Example 6.5 (from memory): weekly costs of processing mortgage loan
// applications, twenty individual values; x̄ = 300.5, MR̄ = 7.79,
// X chart limits 321.22 and 279.78, mR chart upper limit 25.45; the process
// is judged in control (no point beyond the limits on either chart). The
// values below reproduce the published x̄ and MR̄ (148/19 = 7.789).
func TestIndividualsMontgomery(t *testing.T) {
	costs := []float64{310, 288, 297, 298, 307, 303, 294, 297, 308, 306,
		294, 299, 297, 299, 314, 295, 293, 306, 301, 304}
	c := Individuals(costs, len(costs))
	if !c.Known() {
		t.Fatal(c.Reason)
	}
	checks := []struct {
		name      string
		got, want float64
		tol       float64
	}{
		{"centre", c.Centre, 300.5, 1e-12},
		{"MR̄", c.MRBar, 7.79, 0.005},
		{"UCL", c.UCL, 321.22, 0.005},
		{"LCL", c.LCL, 279.78, 0.005},
		{"mR UCL", c.MRUCL, 25.45, 0.005},
		{"σ = MR̄/d₂", c.Sigma, 148.0 / 19 / 1.128, 1e-12},
	}
	for _, k := range checks {
		if !near(k.got, k.want, k.tol) {
			t.Errorf("%s = %.4f; Montgomery gives %.2f", k.name, k.got, k.want)
		}
	}
	// Computed: none of the other tests for special causes is met either.
	if len(c.Signals) != 0 || len(c.RangeSignals) != 0 {
		t.Errorf("signals %v %v; the example has no point beyond the limits", c.Signals, c.RangeSignals)
	}
	if c.MovingRanges[0] != 0 || c.MovingRanges[1] != 22 || len(c.MovingRanges) != 20 {
		t.Errorf("moving ranges %v", c.MovingRanges)
	}
}

// The constants for n = 2 against the distribution of the range of two
// independent normal values: X₁ − X₂ ~ N(0, 2σ²), so d₂ = E|X₁ − X₂|/σ =
// 2/√π and d₃ = √(2 − 4/π); E₂ = 3/d₂ and D₄ = 1 + 3d₃/d₂ (computed; the
// tabulated values of ISO 7870-2 and Montgomery's Appendix VI are rounded
// to 1.128, 2.660, 3.267).
func TestChartConstants(t *testing.T) {
	d2 := 2 / math.Sqrt(math.Pi)
	d3 := math.Sqrt(2 - 4/math.Pi)
	if !near(D2, d2, 5e-4) || !near(E2, 3/d2, 5e-3) || !near(D4, 1+3*d3/d2, 5e-4) {
		t.Errorf("D2 %v E2 %v D4 %v; exact %v %v %v", D2, E2, D4, d2, 3/d2, 1+3*d3/d2)
	}
}

// Limits from a baseline apply to the points after it: a shift after the
// baseline signals, and the baseline alone does not move the limits.
func TestIndividualsBaseline(t *testing.T) {
	x := []float64{10, 11, 10, 11, 10, 11, 10, 11, 20, 10.5}
	c := Individuals(x, 8)
	if !c.Known() || c.Centre != 10.5 || c.MRBar != 1 || !near(c.UCL, 13.16, 1e-12) {
		t.Fatalf("got %+v", c)
	}
	want := []Signal{{RuleBeyondLimits, 8}}
	if !reflect.DeepEqual(c.Signals, want) {
		t.Errorf("signals %v, want %v", c.Signals, want)
	}
	wantR := []Signal{{RuleRangeBeyondLimit, 8}, {RuleRangeBeyondLimit, 9}}
	if !reflect.DeepEqual(c.RangeSignals, wantR) {
		t.Errorf("range signals %v, want %v", c.RangeSignals, wantR)
	}
}

func TestIndividualsUnknown(t *testing.T) {
	cases := []struct {
		name     string
		x        []float64
		baseline int
	}{
		{"baseline of one", []float64{1, 2, 3}, 1},
		{"baseline beyond the data", []float64{1, 2, 3}, 4},
		{"flat baseline", []float64{5, 5, 5, 6}, 3},
		{"NaN", []float64{1, math.NaN(), 3}, 3},
	}
	for _, c := range cases {
		ch := Individuals(c.x, c.baseline)
		if ch.Known() || ch.UCL != 0 || ch.Signals != nil {
			t.Errorf("%s: want unknown without numbers, got %+v", c.name, ch)
		}
	}
}
