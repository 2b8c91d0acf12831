package acceptance

import (
	"reflect"
	"testing"
)

// PageUnits picks the units with a detail page in batch order, capped.
func TestPageUnits(t *testing.T) {
	b := &Batch{Units: []UnitResult{{Verdict: Pass}, {Verdict: Fail}, {Verdict: Invalid}, {Verdict: Pass}, {Verdict: Fail}}}
	cases := []struct {
		max  int
		all  bool
		want []int
	}{
		{0, false, []int{1, 2, 4}},       // no cap
		{3, false, []int{1, 2, 4}},       // cap not reached
		{2, false, []int{1, 2}},          // capped
		{0, true, []int{0, 1, 2, 3, 4}},  // every unit
		{-1, true, []int{0, 1, 2, 3, 4}}, // less than 0 is no cap too
		{3, true, []int{0, 1, 2}},
	}
	for _, c := range cases {
		b.MaxPages = c.max
		if got := b.PageUnits(c.all); !reflect.DeepEqual(got, c.want) {
			t.Errorf("MaxPages %d, all %v: %v, want %v", c.max, c.all, got, c.want)
		}
	}
}
