package acceptance_test

import (
	"encoding/json"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// TestReasonKinds checks that each reason of a judged step carries its kind,
// metric, step and the values compared, besides the text; the decision rule
// is the one TestJudgeStep checks by text.
func TestReasonKinds(t *testing.T) {
	limits := map[metrics.Name]spec.Limit{
		metrics.Overshoot:    {Max: verdictF(4)},
		metrics.RiseTime:     {Min: verdictF(0.1)},
		metrics.SettlingTime: {Max: verdictF(0.2)},
		metrics.DeadTime:     {Max: verdictF(1)},
	}
	s := &spec.Spec{Limits: limits, Metrics: spec.MetricRules{SettlingBandPct: 2}}
	m := verdictStep(map[metrics.Name]metrics.Value{
		metrics.SettlingTime: metrics.Unknown("record ends"),
		metrics.DeadTime:     metrics.Unknown("no transition"),
	}, metrics.Known(0.9))
	r := acceptance.JudgeStep(s, m)
	want := []acceptance.Reason{
		{Kind: acceptance.BelowMin, Metric: metrics.RiseTime, Step: 2, Value: 0.08, Limit: 0.1},
		{Kind: acceptance.AboveMax, Metric: metrics.Overshoot, Step: 2, Value: 5, Limit: 4},
		{Kind: acceptance.StillOutside, Metric: metrics.SettlingTime, Step: 2, Value: 0.9, Limit: 0.2},
		{Kind: acceptance.NotMeasured, Metric: metrics.DeadTime, Step: 2},
	}
	if len(r.Reasons) != len(want) {
		t.Fatalf("reasons = %q, want %d", acceptance.ReasonTexts(r.Reasons), len(want))
	}
	for i, w := range want {
		got := r.Reasons[i]
		w.Text = got.Text
		if got != w || got.Text == "" {
			t.Errorf("reason %d = %+v, want %+v", i, got, w)
		}
		if fails := got.Kind.Fails(); fails != (i < 3) {
			t.Errorf("reason %d: Fails() = %v", i, fails)
		}
	}
	v, reasons := acceptance.JudgeUnit(s, nil)
	if v != acceptance.Invalid || len(reasons) != 1 || reasons[0].Kind != acceptance.NoStep || reasons[0].Step != 0 {
		t.Errorf("no step: %s %+v", v, reasons)
	}
}

// A reason is its text in JSON, and reads back as a reason of unknown kind.
func TestReasonJSON(t *testing.T) {
	r := acceptance.Reason{Kind: acceptance.AboveMax, Metric: metrics.Overshoot, Step: 1, Value: 9.1, Limit: 8, Text: "overshoot_pct 9.1 > 8 at step 1"}
	b, err := json.Marshal([]acceptance.Reason{r})
	if err != nil || string(b) != `["overshoot_pct 9.1 \u003e 8 at step 1"]` {
		t.Fatalf("Marshal = %s, %v", b, err)
	}
	var back []acceptance.Reason
	if err := json.Unmarshal(b, &back); err != nil || len(back) != 1 || back[0] != (acceptance.Reason{Text: r.Text}) {
		t.Errorf("Unmarshal = %+v, %v", back, err)
	}
}
