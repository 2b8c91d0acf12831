package digest

import (
	"fmt"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/metrics"
)

// scaleBatch is n units of two steps each, every tenth failing its
// overshoot limit, with predictions, evidence and fits: the shape of a
// large line's batch, without records.
func scaleBatch(n int) *acceptance.Batch {
	b := notesBatch()
	limits := b.Limits
	units := make([]acceptance.UnitResult, n)
	for i := range units {
		os := 5 + float64(i%7)
		if i%10 == 0 {
			os = 25
		}
		var steps []acceptance.StepResult
		for k := 1; k <= 2; k++ {
			s := step(k, limits, map[metrics.Name]float64{"overshoot_pct": os, "steady_state_error": 0.01 * float64(i%3),
				"rise_time_s": 0.1, "settling_time_s": 0.4, "dead_time_s": 0.01})
			s.Predicted = &acceptance.Prediction{Kind: "realised", Metrics: acceptance.MetricsOf(map[metrics.Name]metrics.Value{
				"overshoot_pct": metrics.Known(6), "steady_state_error": metrics.Known(0.01)})}
			s.Evidence = &acceptance.StepEvidence{EffortSaturatedPct: metrics.Known(float64(i % 40)),
				EffortLimit: metrics.Known(100), FinalDrift: metrics.Known(0.0005)}
			steps = append(steps, s)
		}
		u := unit(fmt.Sprintf("SN-%06d", i), steps...)
		u.Fit = &acceptance.Fit{Step: 1, StaticGain: metrics.Known(1), Damping: metrics.Known(0.6),
			NaturalFrequency: metrics.Known(12 + float64(i%5)/10), DeadTime: metrics.Known(0.007), RMSResidual: metrics.Known(0.01)}
		units[i] = u
	}
	b.Units = units
	b.Summary = acceptance.Count(units)
	return b
}

// BenchmarkNew digests a batch of 20,000 units (40,000 steps).
func BenchmarkNew(b *testing.B) {
	batch := scaleBatch(20000)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := New(batch); err != nil {
			b.Fatal(err)
		}
	}
}
