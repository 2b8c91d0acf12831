package acceptance_test

import (
	"testing"

	"github.com/stepgate/stepgate/acceptance"
)

// TestJoinAxes checks the rule for a unit with several axes: it passes
// only when every axis passes, fails when any axis fails, and is invalid
// when an axis could not be judged and none failed; its steps are the axes'
// steps in axis order, each naming its axis, and each axis's reasons are
// the unit's, prefixed with the axis.
func TestJoinAxes(t *testing.T) {
	unit := func(v acceptance.Verdict, reasons ...string) acceptance.UnitResult {
		return acceptance.UnitResult{Unit: "S-1", File: "s1.csv", Verdict: v, Reasons: acceptance.TextReasons(reasons...),
			Steps: []acceptance.StepResult{{Index: 1, Verdict: v}}}
	}
	P, F, I := acceptance.Pass, acceptance.Fail, acceptance.Invalid
	cases := []struct {
		name  string
		axes  []acceptance.UnitResult
		want  acceptance.Verdict
		first string // the unit's first reason
	}{
		{"all pass", []acceptance.UnitResult{unit(P), unit(P)}, P, ""},
		{"one fails", []acceptance.UnitResult{unit(P), unit(F, "overshoot_pct 9 > 5 at step 1")}, F, "axis B: overshoot_pct 9 > 5 at step 1"},
		{"one invalid", []acceptance.UnitResult{unit(I, "log cannot be read"), unit(P)}, I, "axis A: log cannot be read"},
		{"fail outranks invalid", []acceptance.UnitResult{unit(I, "x"), unit(F, "y")}, F, "axis A: x"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			u := acceptance.JoinAxes([]string{"A", "B"}, tc.axes)
			if u.Verdict != tc.want || u.Unit != "S-1" || u.File != "s1.csv" {
				t.Errorf("unit %s %s %s, want %s", u.Unit, u.File, u.Verdict, tc.want)
			}
			if len(u.Axes) != 2 || u.Axes[0].Name != "A" || u.Axes[1].Name != "B" ||
				u.Axes[0].Verdict != tc.axes[0].Verdict || u.Axes[1].Verdict != tc.axes[1].Verdict {
				t.Errorf("axes %+v", u.Axes)
			}
			if len(u.Steps) != 2 || u.Steps[0].Axis != "A" || u.Steps[1].Axis != "B" {
				t.Errorf("steps %+v, want one per axis naming it", u.Steps)
			}
			if got := ""; len(u.Reasons) > 0 {
				got = u.Reasons[0].Text
				if got != tc.first {
					t.Errorf("first reason %q, want %q", got, tc.first)
				}
			} else if tc.first != "" {
				t.Errorf("no reason, want %q", tc.first)
			}
			if tc.axes[0].Steps[0].Axis != "" {
				t.Errorf("JoinAxes changed its input")
			}
		})
	}
}
