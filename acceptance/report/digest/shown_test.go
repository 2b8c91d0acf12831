package digest

import (
	"slices"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// TestShownMetrics checks which metrics the reports list: the profiled-move
// metrics only for a batch with a profiled move (a move time above 0) or a
// limit on one of them; every other metric always, in report order.
func TestShownMetrics(t *testing.T) {
	step := func(moveTime metrics.Value) acceptance.StepResult {
		var s acceptance.StepResult
		s.Metrics.Set(metrics.MoveTime, moveTime)
		return s
	}
	max := 0.5
	cases := []struct {
		name   string
		steps  []acceptance.StepResult
		limits map[metrics.Name]spec.Limit
		moves  bool
	}{
		{"ideal steps", []acceptance.StepResult{step(metrics.Known(0)), step(metrics.Known(0))}, nil, false},
		{"unmeasured move time", []acceptance.StepResult{step(metrics.Unknown("record ends"))}, nil, false},
		{"a profiled move", []acceptance.StepResult{step(metrics.Known(0)), step(metrics.Known(0.25))}, nil, true},
		{"a limit on a move metric", []acceptance.StepResult{step(metrics.Known(0))},
			map[metrics.Name]spec.Limit{metrics.MaxFollowingError: {Max: &max}}, true},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			b := &acceptance.Batch{Units: []acceptance.UnitResult{{Steps: tc.steps}}, Limits: tc.limits}
			got := ShownMetrics(b)
			var want []metrics.Name
			for _, m := range metrics.Catalogue() {
				if !m.Move || tc.moves {
					want = append(want, m.Name)
				}
			}
			if !slices.Equal(got, want) {
				t.Errorf("ShownMetrics = %v, want %v", got, want)
			}
		})
	}
}
