package batch

import (
	"math"
	"testing"

	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// TestStepEvidenceSaturation builds a first-order step whose effort is held
// at the limit for a known time and checks the saturated share of the rise.
// For y = 1 − e^(−t/τ) the 90 % level is crossed at t = τ·ln 10 (closed form,
// references.md §3), so with τ = 0.1 s and the effort clipped for the first
// 0.1151 s the share is 0.1151/0.2303 = 50 %.
func TestStepEvidenceSaturation(t *testing.T) {
	const tau, dt = 0.1, 0.0005
	var tr metrics.Trace
	t90 := tau * math.Log(10)
	for i := -200; i <= 6000; i++ {
		tt := float64(i) * dt
		c, y, e := 0.0, 0.0, 0.0
		if i >= 0 {
			c, y = 1, 1-math.Exp(-tt/tau)
			e = 20 * (1 - y)
			if tt < t90/2 {
				e = 100
			}
		}
		tr.Time = append(tr.Time, tt+1)
		tr.Command = append(tr.Command, c)
		tr.Response = append(tr.Response, y)
		tr.Effort = append(tr.Effort, e)
	}
	sp := &spec.Spec{Steps: spec.StepRules{MinChange: 0.5}}
	cases := []struct {
		name   string
		spec   *spec.Spec
		want   float64
		wantOK bool
	}{
		{"limit found as the flat top", sp, 50, true},
	}
	for _, c := range cases {
		steps := metrics.FindSteps(tr, 0.5)
		m := metrics.MeasureStep(tr, steps[0], c.spec.Options())
		ev := stepEvidence(tr, m, c.spec.Options(), effortLimit(tr, c.spec))
		if ev.EffortSaturatedPct.OK != c.wantOK || math.Abs(ev.EffortSaturatedPct.V-c.want) > 0.5 {
			t.Errorf("%s: saturated %+v, want %v %%", c.name, ev.EffortSaturatedPct, c.want)
		}
		if !ev.FinalDrift.OK || math.Abs(ev.FinalDrift.V) > 1e-6 {
			t.Errorf("%s: final drift %+v, want ≈ 0 for a settled response", c.name, ev.FinalDrift)
		}
	}
	tr.Effort = nil
	steps := metrics.FindSteps(tr, 0.5)
	ev := stepEvidence(tr, metrics.MeasureStep(tr, steps[0], sp.Options()), sp.Options(), metrics.Unknown("the log has no effort column"))
	if ev.EffortSaturatedPct.OK || ev.EffortSaturatedPct.Why == "" {
		t.Errorf("no effort column: got %+v, want unknown with a reason", ev.EffortSaturatedPct)
	}
}
