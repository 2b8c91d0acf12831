package stats

import (
	"reflect"
	"testing"
)

// Constructed sequences on a chart with centre 0 and limits ±3 (σ = 1), at
// and just below the threshold of each test of ISO 7870-2:2013 (the eight
// tests listed with Shewhart charts; from memory of the standard, see
// testdata/references.md §11). Each sequence is built to meet only the test
// it names.
func TestSpecialCausesThresholds(t *testing.T) {
	unit := Limits{Centre: 0, LCL: -3, UCL: 3}
	rep := func(v float64, n int) []float64 {
		out := make([]float64, n)
		for i := range out {
			out[i] = v
		}
		return out
	}
	alt := func(a, b float64, n int) []float64 {
		out := make([]float64, n)
		for i := range out {
			out[i] = a
			if i%2 == 1 {
				out[i] = b
			}
		}
		return out
	}
	quiet := func(n int) []float64 { // within 1σ, no runs, trends or alternation
		pattern := []float64{0.2, 0.3, -0.2, -0.3}
		out := make([]float64, n)
		for i := range out {
			out[i] = pattern[i%4]
		}
		return out
	}
	sig := func(r Rule, idx ...int) []Signal {
		var out []Signal
		for _, i := range idx {
			out = append(out, Signal{r, i})
		}
		return out
	}
	cases := []struct {
		name string
		x    []float64
		want []Signal
	}{
		{"beyond: on the limit", []float64{0, 3, -3}, nil},
		{"beyond: past each limit", []float64{0, 3.01, -3.5}, sig(RuleBeyondLimits, 1, 2)},
		{"nine one side", rep(0.5, 9), sig(RuleNineOneSide, 8)},
		{"eight one side", rep(0.5, 8), nil},
		{"ten one side signals twice", rep(-0.5, 10), sig(RuleNineOneSide, 8, 9)},
		{"centre line breaks the run", append(rep(0.5, 4), append([]float64{0}, rep(0.5, 8)...)...), nil},
		{"six increasing", []float64{0, 0.1, 0.2, 0.3, 0.4, 0.5}, sig(RuleSixTrending, 5)},
		{"six decreasing", []float64{0.2, 0.1, 0, -0.1, -0.2, -0.3}, sig(RuleSixTrending, 5)},
		{"five increasing", []float64{0.1, 0.2, 0.3, 0.4, 0.5}, nil},
		{"an equal pair breaks the trend", []float64{0, 0.1, 0.2, 0.2, 0.3, 0.4, 0.5}, nil},
		{"fourteen alternating", alt(0.5, -0.5, 14), sig(RuleFourteenAlternating, 13)},
		{"thirteen alternating", alt(0.5, -0.5, 13), nil},
		{"two of three beyond 2σ", []float64{0, 2.5, 0, 2.5}, sig(RuleTwoOfThreeBeyond2Sigma, 3)},
		{"two of four beyond 2σ", []float64{2.5, 0, 0, 2.5}, nil},
		{"two beyond 2σ on opposite sides", []float64{2.5, 0, -2.5}, nil},
		{"on 2σ is not beyond", []float64{2, 0, 2.5}, nil},
		{"two of the first two", []float64{-2.5, -2.6}, sig(RuleTwoOfThreeBeyond2Sigma, 1)},
		{"four of five beyond 1σ", []float64{1.5, 1.5, 0, 1.5, 1.5}, sig(RuleFourOfFiveBeyond1Sigma, 4)},
		{"three of five beyond 1σ", []float64{1.5, 1.5, 0, 0, 1.5, 1.5}, nil},
		{"fifteen within 1σ", quiet(15), sig(RuleFifteenWithin1Sigma, 14)},
		{"fourteen within 1σ", quiet(14), nil},
		{"eight beyond 1σ either side", alt(1.5, -1.5, 8), sig(RuleEightBeyond1Sigma, 7)},
		{"seven beyond 1σ either side", alt(1.5, -1.5, 7), nil},
		{"on 1σ breaks the run", append(alt(1.5, -1.5, 4), append([]float64{1}, alt(1.5, -1.5, 7)...)...), nil},
	}
	for _, c := range cases {
		got := SpecialCauses(c.x, unit)
		if !reflect.DeepEqual(got, c.want) {
			t.Errorf("%s: %v, want %v", c.name, got, c.want)
		}
	}
}

// Several tests met at one point are listed in the order of Rules: a jump to
// 3.5 after eight points at 2.5 completes a run of nine on one side, two of
// three beyond 2σ, four of five beyond 1σ and eight beyond 1σ (nine, in
// fact), and a point beyond the limit.
func TestSpecialCausesOrder(t *testing.T) {
	x := []float64{2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 3.5}
	got := SpecialCauses(x, Limits{Centre: 0, LCL: -3, UCL: 3})
	var at8 []Rule
	for _, s := range got {
		if s.Index == 8 {
			at8 = append(at8, s.Rule)
		}
	}
	want := []Rule{RuleBeyondLimits, RuleNineOneSide, RuleTwoOfThreeBeyond2Sigma,
		RuleFourOfFiveBeyond1Sigma, RuleEightBeyond1Sigma}
	if !reflect.DeepEqual(at8, want) {
		t.Errorf("rules at the last point %v, want %v", at8, want)
	}
	if r := Rules(); len(r) != 8 || r[0] != RuleBeyondLimits {
		t.Errorf("Rules() = %v", r)
	}
	if SpecialCauses(x, Limits{Centre: 0, LCL: 1, UCL: 1}) != nil {
		t.Error("limits without a span gave signals")
	}
}
