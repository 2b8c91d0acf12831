package digest_test

import (
	"fmt"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

func ExampleNew() {
	max := 10.0
	limits := map[metrics.Name]spec.Limit{"overshoot_pct": {Max: &max}}
	b := &acceptance.Batch{
		Spec:       acceptance.SpecInfo{SpecID: "DEMO", Revision: "A"},
		Limits:     limits,
		ReportDate: "2024-05-17",
	}
	// Overshoot of four units: 4, 6, 8 and 14 %; the last fails.
	for i, v := range []float64{4, 6, 8, 14} {
		verdict := acceptance.Pass
		check := acceptance.Check{Metric: "overshoot_pct", Value: &v, Max: &max, Verdict: acceptance.Pass}
		if v > max {
			verdict, check.Verdict = acceptance.Fail, acceptance.Fail
		}
		b.Units = append(b.Units, acceptance.UnitResult{
			Unit: fmt.Sprintf("SN-%d", i+1), Verdict: verdict,
			Steps: []acceptance.StepResult{{Index: 1, From: 0, To: 10, Verdict: verdict,
				Metrics: acceptance.MetricsOf(map[metrics.Name]metrics.Value{"overshoot_pct": metrics.Known(v)}),
				Checks:  []acceptance.Check{check}}},
		})
	}
	b.Summary = acceptance.Count(b.Units)
	d, err := digest.New(b)
	if err != nil {
		fmt.Println(err)
		return
	}
	s := d.Stats[0]
	fmt.Printf("yield %s\n", digest.Percent(d.Yield.V))
	fmt.Printf("%s: n %d, mean %s, sd %s, %s %s (indicative: %v)\n", s.Label, s.N, digest.Num(s.Mean.V), digest.Num(s.SD.V),
		s.Capability.Index, digest.Num(s.Capability.Value.V), s.Capability.Indicative)
	for _, c := range d.Causes {
		fmt.Printf("%s: %d unit\n", c.Label, c.Units)
	}
	// Output:
	// yield 75.0 %
	// overshoot: n 4, mean 8, sd 4.32, Cpu 0.1543 (indicative: true)
	// overshoot above its max: 1 unit
}
