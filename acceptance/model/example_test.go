package model_test

import (
	"fmt"
	"math"

	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/metrics"
)

// A spec's model section: a closed-loop reference test at gain 1, the gain
// under test, and the drive's sampling, delay and effort limit. The demo
// values are invented.
func demoConfig() model.Config {
	return model.Config{
		ReferenceTest: &model.ReferenceTest{Gain: 1, StaticGain: 1, Damping: 0.45, NaturalFrequency: 22},
		Controller:    model.Controller{Kp: 0.55},
		Loop:          &model.Loop{SamplePeriod: 0.001, Delay: 0.002},
		Actuator:      &model.Actuator{EffortLimit: 5},
	}
}

func ExampleBuild() {
	sys, err := model.Build(demoConfig())
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("plant:", sys.Plant())
	pred, err := sys.Predict(0, 10, 1, 0.001)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, k := range []struct {
		name string
		tr   metrics.Trace
	}{{"ideal", pred.Ideal}, {"realised", pred.Realised}} {
		m := metrics.Measure(k.tr, 5, metrics.DefaultOptions())[0]
		fmt.Printf("%-8s overshoot %.2f %%, peak at %.3f s, settled in %.3f s\n",
			k.name, m.Overshoot.V, m.PeakTime.V, m.SettlingTime.V)
	}
	// Output:
	// plant: 484 / (s^2 + 19.8 s)
	// ideal    overshoot 9.09 %, peak at 0.242 s, settled in 0.365 s
	// realised overshoot 10.24 %, peak at 0.242 s, settled in 0.367 s
}

func ExampleSystem_DesignGain() {
	sys, err := model.Build(demoConfig())
	if err != nil {
		fmt.Println(err)
		return
	}
	d, err := sys.DesignGain(model.OvershootTarget(10), 0, 10)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("ideal    kp = %.4f (%s)\n", d.Ideal.Kp, d.Ideal.Method)
	fmt.Printf("realised kp = %.4f, overshoot %.2f %%\n", d.Realised.Kp, d.Realised.OvershootPct.V)
	// Output:
	// ideal    kp = 0.5795 (closed form: coefficient matching of s² + a1·s + (a0 + b·kp))
	// realised kp = 0.5428, overshoot 10.00 %
}

func ExampleIdentify() {
	// A recorded step stands in here for a rig log: the gain-1 reference
	// loop simulated, then quantised to 0.01 units.
	sys, err := model.Build(model.Config{
		ReferenceTest: &model.ReferenceTest{Gain: 1, StaticGain: 1, Damping: 0.45, NaturalFrequency: 22},
		Controller:    model.Controller{Kp: 1},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	tr, err := sys.Simulate(model.Ideal, 0, 10, 1, 0.001)
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, y := range tr.Response {
		tr.Response[i] = math.Round(y*100) / 100
	}
	step := metrics.FindSteps(tr, 5)[0]
	fit, err := model.Identify(tr, step, 1)
	if err != nil {
		fmt.Println(err)
		return
	}
	r := fit.Reference
	fmt.Printf("reference_test: {gain: %g, static_gain: %.3f, damping: %.3f, natural_frequency_rad_s: %.2f}\n",
		r.Gain, r.StaticGain, r.Damping, r.NaturalFrequency)
	fmt.Printf("dead time %.4f s, RMS residual %.4f\n", fit.DeadTime, fit.RMSResidual)
	// Output:
	// reference_test: {gain: 1, static_gain: 1.000, damping: 0.450, natural_frequency_rad_s: 22.00}
	// dead time 0.0000 s, RMS residual 0.0026
}
