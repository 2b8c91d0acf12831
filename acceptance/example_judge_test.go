package acceptance_test

import (
	"fmt"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// A step whose record ends before the response settles: the settling time
// is unknown, but the last sample outside the band is later than the limit,
// so the step fails rather than being invalid.
func ExampleJudgeStep() {
	s, err := spec.Parse([]byte(`spec_id: LA-40-EOL
revision: A
signals: {time: t, command: setpoint, response: position}
steps: {min_change: 0.5}
limits:
  overshoot_pct: {max: 8}
  settling_time_s: {max: 0.35}
`), "la40.yaml")
	if err != nil {
		fmt.Println(err)
		return
	}
	m := metrics.StepMetrics{
		Step:         metrics.Step{Index: 1, From: 0, To: 10},
		Overshoot:    metrics.Known(6.2),
		SettlingTime: metrics.Unknown("still outside the band at the end of the record"),
		LastOutside:  metrics.Known(0.52),
	}
	r := acceptance.JudgeStep(s, m)
	for _, c := range r.Checks {
		fmt.Println(c.Metric, c.Verdict)
	}
	fmt.Println(r.Verdict, r.Reasons)
	// Output:
	// overshoot_pct pass
	// settling_time_s fail
	// fail [settling_time_s > 0.35 at step 1: still outside the ±2 % band 0.52 s after the step]
}
