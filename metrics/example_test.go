package metrics_test

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/stepgate/stepgate/metrics"
)

// A demonstration record: a first-order loop (τ = 50 ms) logged at 1 kHz,
// commanded from 0 to 10 at t = 0.2 s and back to 0 at t = 1.2 s; the log
// stops 0.1 s after the second step, before the response settles.
func ExampleMeasure() {
	const tau = 0.05
	var tr metrics.Trace
	for i := 0; i <= 1300; i++ {
		t := float64(i) / 1000
		cmd, y := 0.0, 0.0
		if t >= 0.2 {
			y = 10 * (1 - math.Exp(-(t-0.2)/tau))
		}
		if i >= 1200 {
			y -= 10 * (1 - math.Exp(-(t-1.2)/tau))
		} else if t >= 0.2 {
			cmd = 10
		}
		tr.Time = append(tr.Time, t)
		tr.Command = append(tr.Command, cmd)
		tr.Response = append(tr.Response, y)
	}
	if err := tr.Validate(); err != nil {
		fmt.Println(err)
		return
	}
	show := func(n metrics.Name, v metrics.Value) {
		if v.OK {
			fmt.Printf("  %-16s %.4f\n", n, v.V)
		} else {
			fmt.Printf("  %-16s unknown: %s\n", n, v.Why)
		}
	}
	for _, m := range metrics.Measure(tr, 0.5, metrics.DefaultOptions()) {
		fmt.Printf("step %d: %g -> %g at %.3f s\n", m.Step.Index, m.Step.From, m.Step.To, m.Start)
		show(metrics.FinalValue, m.FinalValue)
		show(metrics.RiseTime, m.RiseTime)
		show(metrics.SettlingTime, m.SettlingTime)
		fmt.Printf("  last outside band %.3f s\n", m.LastOutside.V)
	}
	// Output:
	// step 1: 0 -> 10 at 0.200 s
	//   final_value      10.0000
	//   rise_time_s      0.1099
	//   settling_time_s  0.1956
	//   last outside band 0.195 s
	// step 2: 10 -> 0 at 1.200 s
	//   final_value      unknown: record ends 0.1 s after the step, before the response settles: its level drifts by 0.3496 over the last 0.02 s (limit 0.1)
	//   rise_time_s      unknown: final value unknown: record ends 0.1 s after the step, before the response settles: its level drifts by 0.3496 over the last 0.02 s (limit 0.1)
	//   settling_time_s  unknown: final value unknown: record ends 0.1 s after the step, before the response settles: its level drifts by 0.3496 over the last 0.02 s (limit 0.1)
	//   last outside band 0.100 s
}

// The expanded uncertainty (k = 2) of each metric of a step logged by an
// encoder with a count of 0.01: a first-order loop (τ = 50 ms) at 1 kHz
// with Gaussian noise of 0.02 from a seeded generator, so the output is
// fixed. The count is found in the record itself.
func ExampleMeasureUncertainty() {
	rng := rand.New(rand.NewPCG(1, 2))
	var tr metrics.Trace
	for i := 0; i <= 1500; i++ {
		t := float64(i) / 1000
		cmd, y := 0.0, 0.0
		if t >= 0.5 {
			cmd, y = 10, 10*(1-math.Exp(-(t-0.5)/0.05))
		}
		y = 0.01 * math.Round((y+0.02*rng.NormFloat64())/0.01)
		tr.Time = append(tr.Time, t)
		tr.Command = append(tr.Command, cmd)
		tr.Response = append(tr.Response, y)
	}
	o := metrics.DefaultOptions()
	m := metrics.Measure(tr, 1, o)[0]
	u := metrics.MeasureUncertainty(tr, m, o, metrics.UncertaintyOptions{Seed: 1})
	fmt.Printf("noise %.3f, count %g (found in the record: %v)\n", u.Noise, u.Resolution, u.ResolutionFound)
	for _, n := range []metrics.Name{metrics.FinalValue, metrics.RiseTime, metrics.SettlingTime} {
		v, _ := m.Get(n)
		fmt.Printf("%-16s %.4f ± %.4f %s\n", n, v.V, u.Expanded(n).V, n.Unit("mm"))
	}
	// Output:
	// noise 0.021, count 0.01 (found in the record: true)
	// final_value      10.0008 ± 0.0028 mm
	// rise_time_s      0.1087 ± 0.0017 s
	// settling_time_s  0.2090 ± 0.0064 s
}

// The catalogue gives every metric's label and unit as the reports print
// them.
func ExampleCatalogue() {
	for _, m := range metrics.Catalogue()[:4] {
		fmt.Printf("%-14s %-14s %q\n", m.Name, m.Label, m.Name.Unit("mm"))
	}
	// Output:
	// step_size      step size      "mm"
	// initial_value  initial value  "mm"
	// final_value    final value    "mm"
	// dead_time_s    dead time      "s"
}
