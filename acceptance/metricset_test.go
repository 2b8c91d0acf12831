package acceptance

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stepgate/stepgate/metrics"
)

// appendJSONFloat must write exactly what encoding/json writes for a
// float64 (the Go standard library is the reference), across magnitudes
// and the exponent boundaries at 1e-6 and 1e21.
func TestAppendJSONFloatMatchesEncodingJSON(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	vals := []float64{0, math.Copysign(0, -1), 1, -1, 0.1, 1e-6, 9.999999e-7, 1e-7, 1e21, 9.99e20, 1e22, 123456789.125, -2.5e-12, math.MaxFloat64, math.SmallestNonzeroFloat64}
	for i := 0; i < 100000; i++ {
		vals = append(vals, math.Float64frombits(rng.Uint64()))
		vals = append(vals, (rng.Float64()-0.5)*math.Pow(10, float64(rng.IntN(60)-30)))
	}
	for _, v := range vals {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		want, err := json.Marshal(v)
		if err != nil {
			t.Fatal(err)
		}
		if got := appendJSONFloat(nil, v); string(got) != string(want) {
			t.Fatalf("appendJSONFloat(%v) = %s, encoding/json gives %s", v, got, want)
		}
	}
}

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
