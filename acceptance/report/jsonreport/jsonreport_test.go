package jsonreport

import (
	"bytes"
	"encoding/json"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// The streamed writer must give exactly the bytes of encoding/json's
// MarshalIndent (the Go standard library is the reference), for batches
// with no units, one unit and several, with and without a model.
func TestWriteMatchesMarshalIndent(t *testing.T) {
	limit := 8.0
	step := acceptance.StepResult{
		Index: 1, From: 0, To: 25, Verdict: acceptance.Fail,
		Reasons: []acceptance.Reason{{Kind: acceptance.AboveMax, Metric: "overshoot_pct", Step: 1, Value: 9.1, Limit: 8, Text: "overshoot_pct 9.1 > 8 at step 1"}},
		Metrics: acceptance.MetricsOf(map[metrics.Name]metrics.Value{"overshoot_pct": metrics.Known(9.1), "settling_time_s": metrics.Unknown("record ends")}),
		Checks:  []acceptance.Check{{Metric: "overshoot_pct", Max: &limit, Verdict: acceptance.Fail}},
	}
	unit := func(id string) acceptance.UnitResult {
		return acceptance.UnitResult{Unit: id, File: id + ".csv", Metadata: map[string]string{"station": "EOL-2", "serial": id},
			Verdict: acceptance.Fail, Reasons: []acceptance.Reason{{Text: "x"}}, Steps: []acceptance.StepResult{step}}
	}
	cases := []struct {
		name string
		b    acceptance.Batch
	}{
		{"no units", acceptance.Batch{Units: []acceptance.UnitResult{}, Limits: map[metrics.Name]spec.Limit{}}},
		{"nil units", acceptance.Batch{}},
		{"one unit", acceptance.Batch{Units: []acceptance.UnitResult{unit("A1")}, ReportDate: "2026-12-01"}},
		{"three units and a model", acceptance.Batch{
			Tool: acceptance.ToolInfo{Name: "stepgate", Version: "t"}, Units: []acceptance.UnitResult{unit("A1"), unit("A2"), unit("=1+1")},
			Model: &acceptance.ModelSummary{Plant: "1 / s", Warnings: []string{"w"}}, Limits: map[metrics.Name]spec.Limit{"overshoot_pct": {Max: &limit}},
		}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var got bytes.Buffer
			if err := writeBatch(&got, &c.b); err != nil {
				t.Fatal(err)
			}
			want, err := json.MarshalIndent(&c.b, "", "  ")
			if err != nil {
				t.Fatal(err)
			}
			want = append(want, '\n')
			if !bytes.Equal(got.Bytes(), want) {
				t.Errorf("streamed JSON differs from MarshalIndent:\n got %s\nwant %s", got.Bytes(), want)
			}
		})
	}
}
