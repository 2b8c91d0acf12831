package digest

import (
	"fmt"
	"strings"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// TestPareto counts the reasons of the units that did not pass. The
// expected counts follow from the units below by hand.
func TestPareto(t *testing.T) {
	limits := map[metrics.Name]spec.Limit{
		"overshoot_pct":   {Max: ptr(10)},
		"rise_time_s":     {Min: ptr(0.1), Max: ptr(0.5)},
		"settling_time_s": {Max: ptr(1)},
	}
	good := map[metrics.Name]float64{"overshoot_pct": 5, "rise_time_s": 0.2, "settling_time_s": 0.5}
	with := func(k metrics.Name, v float64) map[metrics.Name]float64 {
		m := map[metrics.Name]float64{}
		for a, b := range good {
			m[a] = b
		}
		m[k] = v
		return m
	}
	without := func(k metrics.Name) map[metrics.Name]float64 {
		m := with(k, 0)
		delete(m, k)
		return m
	}
	noSteps := func(id string, kind acceptance.ReasonKind, text string) acceptance.UnitResult {
		u := unit(id)
		u.Reasons = []acceptance.Reason{{Kind: kind, Text: text}}
		return u
	}
	dup := unit("D", step(1, limits, good))
	dup.Reasons = append(dup.Reasons, acceptance.Reason{Kind: acceptance.DuplicateUnit, Text: `unit id "D" also appears in other/D.csv`})
	dup.Verdict = acceptance.Invalid
	units := []acceptance.UnitResult{
		unit("P1", step(1, limits, good)),
		// Overshoot fails on both steps: one unit.
		unit("F1", step(1, limits, with("overshoot_pct", 20)), step(2, limits, with("overshoot_pct", 15))),
		unit("F2", step(1, limits, with("overshoot_pct", 12))),
		// Rise time below its min, and overshoot above its max.
		unit("F3", step(1, limits, with("rise_time_s", 0.05)), step(2, limits, with("overshoot_pct", 11))),
		// Rise time above its max, with an unmeasured settling time.
		unit("F4", step(1, limits, with("rise_time_s", 0.9)), step(2, limits, without("settling_time_s"))),
		unit("I1", step(1, limits, without("settling_time_s"))),
		noSteps("I2", acceptance.Unreadable, "log cannot be read: logs/I2.csv:12:3: cannot read \"1,2.3\" as a number"),
		noSteps("I3", acceptance.Unreadable, "log cannot be read: logs/I3.csv: the file is empty"),
		noSteps("I4", acceptance.NoStep, "no step found: the command never changed by min_change 0.5 mm"),
		noSteps("I5", acceptance.Unusable, "log logs/I5.csv: sample 7: time does not increase"),
		noSteps("I6", acceptance.OtherReason, "rig fault: encoder lost at line 400"),
		dup,
	}
	got := Pareto(batch(limits, units...))
	want := []string{
		"fail/fail max overshoot_pct/overshoot above its max/3",
		"invalid/log cannot be read/log cannot be read/2",
		"invalid/not measured settling_time_s/settling time not measured/2",
		"fail/fail max rise_time_s/rise time above its max/1",
		"fail/fail min rise_time_s/rise time below its min/1",
		"invalid/no step found/no step found/1",
		"invalid/record not usable/record not usable/1",
		"invalid/rig fault/rig fault/1",
		"invalid/unit id in more than one file/unit id in more than one file/1",
	}
	var lines []string
	for _, c := range got {
		lines = append(lines, fmt.Sprintf("%s/%s/%s/%d", c.Verdict, c.Key, c.Label, c.Units))
	}
	if strings.Join(lines, "\n") != strings.Join(want, "\n") {
		t.Errorf("Pareto\n got %s\nwant %s", strings.Join(lines, "\n     "), strings.Join(want, "\n     "))
	}
	if got := Pareto(batch(limits, units[0])); len(got) != 0 {
		t.Errorf("a batch that passed has reasons %v", got)
	}
}

// TestUnitReasonLabel checks the labels of the unit-level reasons: by kind,
// and by text only for a reason whose kind is not known.
func TestUnitReasonLabel(t *testing.T) {
	long := strings.Repeat("x", 80)
	for _, tc := range []struct {
		kind acceptance.ReasonKind
		in   string
		want string
	}{
		{acceptance.OtherReason, "", ""},
		{acceptance.Unreadable, "log cannot be read: a.csv:1: empty", "log cannot be read"},
		{acceptance.NoStep, "no step found: the command never changed", "no step found"},
		{acceptance.DuplicateUnit, `unit id "A" also appears in b.csv`, "unit id in more than one file"},
		{acceptance.Unusable, "log cannot be measured: sample 3 is not finite", "record not usable"},
		{acceptance.OtherReason, "drive fault: overcurrent", "drive fault"},
		{acceptance.OtherReason, "logs/a.csv:12:3: cannot read", "problem in the log file"},
		{acceptance.OtherReason, "a.csv: empty", "problem in the log file"},
		{acceptance.OtherReason, long, strings.Repeat("x", 59) + "…"},
	} {
		if got := UnitReasonLabel(acceptance.Reason{Kind: tc.kind, Text: tc.in}); got != tc.want {
			t.Errorf("UnitReasonLabel(%v, %q) = %q, want %q", tc.kind, tc.in, got, tc.want)
		}
	}
}
