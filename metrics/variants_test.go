package metrics

import (
	"fmt"
	"math"
	"testing"
)

// TestStepVariants checks that the metrics of the Ogata Example 5-1 loop
// (ζ = 0.6, ωn = 5 rad/s; K. Ogata, Modern Control Engineering, 5th ed.,
// from memory) do not depend on the direction of the step, its size, its
// place in the record, the loop's static gain, or uniform sampling. Each
// expected value comes from the closed form (references.md §2) scaled by the
// gain and the step, found by bisection in synth_test.go.
func TestStepVariants(t *testing.T) {
	f := underdamped(0.6, 5)
	const hold = 8.0
	tests := []struct {
		name   string
		rig    rig
		segs   []segment
		tol    float64 // crossing-time tolerance
		tolPkT float64 // peak-time tolerance
	}{
		{"up 0 to 25", rig{dt: dt, f: f}, []segment{{0.5, 0}, {hold, 25}}, tolExact, tolPeak},
		{"down 25 to 0", rig{dt: dt, f: f}, []segment{{0.5, 25}, {hold, 0}}, tolExact, tolPeak},
		{"down -3 to -40, late clock", rig{dt: dt, t0: 86400, f: f}, []segment{{1.7, -3}, {hold, -40}}, tolExact, tolPeak},
		{"gain 0.96, 5 to 30", rig{dt: dt, gain: 0.96, f: f}, []segment{{0.5, 5}, {hold, 30}}, tolExact, tolPeak},
		{"gain 1.04, down 30 to 5", rig{dt: dt, gain: 1.04, f: f}, []segment{{0.5, 30}, {hold, 5}}, tolExact, tolPeak},
		{"out and back", rig{dt: dt, t0: 2, f: f}, []segment{{0.5, 0}, {hold, 25}, {hold, 0}}, tolExact, tolPeak},
		{"three steps, gain 0.98", rig{dt: dt, gain: 0.98, f: f}, []segment{{0.5, 0}, {hold, 10}, {hold, 35}, {hold, 20}}, tolExact, tolPeak},
		// Non-uniform sampling: spacing uniformly random in 0.5–1.5 ms.
		// Interpolation over intervals up to 1.5 ms errs by (1.5)² times
		// the 1 kHz bound, still within tolExact; the peak sample may be
		// up to one spacing, 1.5 ms, from the true peak.
		{"jittered sampling", rig{dt: dt, jitter: 0.5, seed: 7, f: f}, []segment{{0.5, 0}, {hold, 25}, {hold, 0}}, tolExact, 1.5 * dt},
		// 200 Hz rig: interpolation error grows with dt², 25 × the 1 kHz
		// bound of 5 µs, so 0.15 ms; the peak only to 5 ms.
		{"200 Hz", rig{dt: 5e-3, f: f}, []segment{{0.5, 0}, {hold, 25}}, 0.15e-3, 5e-3},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			tr := tc.rig.record(tc.segs)
			if err := tr.Validate(); err != nil {
				t.Fatal(err)
			}
			g := tc.rig.gain
			if g == 0 {
				g = 1
			}
			ms := Measure(tr, 1, DefaultOptions())
			if len(ms) != len(tc.segs)-1 {
				t.Fatalf("found %d steps, want %d", len(ms), len(tc.segs)-1)
			}
			var at float64
			for i, m := range ms {
				from, to := tc.segs[i].cmd, tc.segs[i+1].cmd
				at += tc.segs[i].dur
				size := to - from
				name := fmt.Sprintf("step %d (%g→%g)", i+1, from, to)
				if m.Step.Index != i+1 || m.Step.From != from || m.Step.To != to {
					t.Errorf("%s: step = %+v", name, m.Step)
				}
				// Step instant: first sample at or after the nominal change.
				if m.Start < tc.rig.t0+at-1e-9 || m.Start > tc.rig.t0+at+1.5*tc.rig.dt {
					t.Errorf("%s: start %.6f, want within a sample after %.6f", name, m.Start, tc.rig.t0+at)
				}
				near(t, name+" step_size", m.StepSize, size, 0)
				near(t, name+" initial_value", m.InitialValue, g*from, 1e-6*math.Abs(size))
				near(t, name+" final_value", m.FinalValue, g*to, 1e-6*math.Abs(size))
				// Rise time 10–90 % of the transition, independent of gain.
				rise := exactCrossing(f, 0.9, hold) - exactCrossing(f, 0.1, hold)
				near(t, name+" rise_time_s", m.RiseTime, rise, tc.tol)
				near(t, name+" dead_time_s", m.DeadTime, exactCrossing(f, 0.02, hold), tc.tol)
				near(t, name+" peak_time_s", m.PeakTime, math.Pi/4, tc.tolPkT)
				near(t, name+" overshoot_pct", m.Overshoot, 100*math.Exp(-math.Pi*0.6/0.8), 0.01)
				near(t, name+" peak_value", m.PeakValue, g*(to+size*math.Exp(-math.Pi*0.6/0.8)), 1e-4*math.Abs(size))
				// The band is ±2 % of the command change around the final
				// value, i.e. ±2 %/G of the response's own transition.
				near(t, name+" settling_time_s", m.SettlingTime, exactSettling(f, 1, 0.02/g, hold), tc.tol)
				sse := math.Abs(1-g) * math.Abs(to)
				near(t, name+" steady_state_error", m.SteadyStateError, sse, 1e-6*math.Abs(size))
				near(t, name+" steady_state_error_pct", m.SteadyStateErrorPct, 100*sse/math.Abs(size), 1e-4)
			}
		})
	}
}

// TestDownStepMirrorsUpStep checks that a down-step measures exactly like
// the mirrored up-step: same times and percentages, mirrored levels.
func TestDownStepMirrorsUpStep(t *testing.T) {
	for _, f := range []unitResponse{underdamped(0.3, 12), firstOrder(0.07), critical(4)} {
		up := rig{dt: dt, t0: 5, f: f}.record([]segment{{0.6, 0}, {4, 25}})
		down := up
		down.Command = make([]float64, len(up.Command))
		down.Response = make([]float64, len(up.Response))
		for i := range up.Command {
			down.Command[i] = -up.Command[i]
			down.Response[i] = -up.Response[i]
		}
		mu := Measure(up, 1, DefaultOptions())
		md := Measure(down, 1, DefaultOptions())
		if len(mu) != 1 || len(md) != 1 {
			t.Fatalf("steps: up %d, down %d", len(mu), len(md))
		}
		for _, n := range Names {
			a, _ := mu[0].Get(n)
			b, _ := md[0].Get(n)
			if !a.OK || !b.OK {
				t.Errorf("%s: up %+v, down %+v", n, a, b)
				continue
			}
			want := a.V
			switch n {
			case StepSize, InitialValue, FinalValue, PeakValue:
				want = -a.V
			}
			if math.Abs(b.V-want) > 1e-9*math.Max(1, math.Abs(want)) {
				t.Errorf("%s: down %.12g, want %.12g", n, b.V, want)
			}
		}
	}
}
