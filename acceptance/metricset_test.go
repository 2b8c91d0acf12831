package acceptance

import (
	"encoding/json"
	"testing"

	"github.com/stepgate/stepgate/metrics"
)

// A MetricSet encodes exactly as the map of its values would.
func TestMetricSetJSONMatchesMap(t *testing.T) {
	m := map[string]metrics.Value{}
	for i, n := range metrics.Names {
		if i%3 == 0 {
			m[string(n)] = metrics.Unknown("why")
		} else {
			m[string(n)] = metrics.Known(float64(i) * 1.1e-7)
		}
	}
	want, _ := json.Marshal(m)
	got, err := json.Marshal(MetricsOf(m))
	if err != nil || string(got) != string(want) {
		t.Fatalf("MetricSet JSON %s (%v), map JSON %s", got, err, want)
	}
}
