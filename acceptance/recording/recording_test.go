package recording_test

import (
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/recording"
	"github.com/stepgate/stepgate/metrics"
)

// A unit maps onto the record's row with its serial, station, lot, shift,
// start time and every metric: a value, or the reason it is unknown; a
// file without content (no SHA-256) is left out and named.
func TestUnits(t *testing.T) {
	var ms acceptance.MetricSet
	ms.Set(metrics.Overshoot, metrics.Known(4.2))
	b := &acceptance.Batch{Units: []acceptance.UnitResult{
		{Unit: "S-1", File: "a.csv", SHA256: "ab", Verdict: acceptance.Pass, Lot: "L1", Shift: "A",
			Metadata: map[string]string{"station": " EOL-2 ", "started_at": "2026-11-30T06:00:00Z"},
			Steps:    []acceptance.StepResult{{Index: 1, Verdict: acceptance.Pass, Metrics: ms}}},
		{Unit: "S-2", File: "gone.csv", Verdict: acceptance.Invalid},
	}}
	units, left := recording.Units(b)
	if len(units) != 1 || len(left) != 1 || left[0] != "gone.csv" {
		t.Fatalf("units %d, left %q", len(units), left)
	}
	u := units[0]
	if u.Serial != "S-1" || u.Station != "EOL-2" || u.Lot != "L1" || u.Shift != "A" || u.StartedAt.Hour() != 6 || u.Verdict != "pass" {
		t.Errorf("unit %+v", u)
	}
	if len(u.Steps) != 1 || len(u.Steps[0].Metrics) != len(metrics.Names) {
		t.Fatalf("steps %+v", u.Steps)
	}
	for _, m := range u.Steps[0].Metrics {
		switch {
		case m.Name == string(metrics.Overshoot) && (!m.Value.Valid || m.Value.Value != 4.2):
			t.Errorf("overshoot %+v", m)
		case m.Name != string(metrics.Overshoot) && (m.Value.Valid || m.Reason == ""):
			t.Errorf("%s: an unknown metric needs a reason: %+v", m.Name, m)
		}
	}
	if got := recording.Serials(&acceptance.Batch{Units: []acceptance.UnitResult{{Unit: "A"}, {Unit: "A"}, {Unit: "B"}}}); len(got) != 2 {
		t.Errorf("serials %q", got)
	}
}
