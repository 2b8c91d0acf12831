package spec_test

import (
	"errors"
	"strings"
	"testing"

	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

const axesSpec = `spec_id: T-2
revision: A
signals:
  time: t
steps:
  min_change: 0.5
limits:
  overshoot_pct: {max: 8}
axes:
  - name: X
    signals: {command: x_cmd, response: x_pos, effort: x_drive}
  - name: lift
    signals: {command: z_cmd, response: z_pos}
    limits:
      overshoot_pct: {max: 12}
      max_following_error: {max: 0.4}
`

// TestAxes checks the axes section: each axis reads its own columns with
// the shared time column and is judged by its own limits or the top-level
// ones.
func TestAxes(t *testing.T) {
	s, err := spec.Parse([]byte(axesSpec), "t.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if got := s.AxisNames(); strings.Join(got, ",") != "X,lift" {
		t.Errorf("AxisNames = %q", got)
	}
	per := s.ForAxes()
	if len(per) != 2 {
		t.Fatalf("ForAxes gave %d specs, want 2", len(per))
	}
	x, z := per[0], per[1]
	if x.Signals != (spec.Signals{Time: "t", Command: "x_cmd", Response: "x_pos", Effort: "x_drive"}) || len(x.Axes) != 0 {
		t.Errorf("axis X reads %+v (axes %d)", x.Signals, len(x.Axes))
	}
	if z.Signals != (spec.Signals{Time: "t", Command: "z_cmd", Response: "z_pos"}) {
		t.Errorf("axis lift reads %+v", z.Signals)
	}
	if l := x.Limits[metrics.Overshoot]; l.Max == nil || *l.Max != 8 || len(x.Limits) != 1 {
		t.Errorf("axis X limits %+v, want the top-level ones", x.Limits)
	}
	if l := z.Limits[metrics.Overshoot]; l.Max == nil || *l.Max != 12 || len(z.Limits) != 2 {
		t.Errorf("axis lift limits %+v, want its own", z.Limits)
	}
	if one, err := spec.Parse([]byte(baseSpec), "t.yaml"); err != nil || len(one.ForAxes()) != 1 || one.ForAxes()[0] != one || one.AxisNames() != nil {
		t.Errorf("a single-axis spec is not its own one axis (%v)", err)
	}
}

// TestAxesRules checks that a wrong axes section is refused with the key
// and the reason.
func TestAxesRules(t *testing.T) {
	cases := []struct {
		name, old, new string
		key, msg       string
	}{
		{"name missing", "  - name: lift\n", "  - \n", "axes[1].name", "required"},
		{"name twice", "name: lift", "name: X", "axes[1].name", `axis "X" is named twice (first at axes[0])`},
		{"command missing", "{command: z_cmd, response: z_pos}", "{response: z_pos}", "axes[1].signals.command", "required"},
		{"column read twice", "response: z_pos}", "response: x_cmd}", "axes[1].signals.response", `column "x_cmd" is already read as axes[0].signals.command`},
		{"time column reused", "response: z_pos}", "response: t}", "axes[1].signals.response", `column "t" is already read as signals.time`},
		{"top-level command with axes", "  time: t\n", "  time: t\n  command: c\n", "signals.command", "with axes, give each axis its command column"},
		{"no limits for an axis", "limits:\n  overshoot_pct: {max: 8}\n", "", "axes[0]", `axis "X" has no limits`},
		{"axis limit on an unknown metric", "max_following_error:", "max_following_eror:", "axes[1].limits.max_following_eror", "unknown metric"},
		{"not a list", "axes:\n", "axes: {}\nx:\n", "axes", "must be a list"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			if !strings.Contains(axesSpec, tc.old) {
				t.Fatalf("case edits %q, not in the spec", tc.old)
			}
			_, err := spec.Parse([]byte(strings.Replace(axesSpec, tc.old, tc.new, 1)), "t.yaml")
			var se *spec.Error
			if !errors.As(err, &se) {
				t.Fatalf("want a *spec.Error, got %v", err)
			}
			for _, p := range se.Problems {
				if p.Key == tc.key && strings.Contains(p.Msg, tc.msg) {
					return
				}
			}
			t.Errorf("no problem %s: %q in\n%v", tc.key, tc.msg, err)
		})
	}
}
