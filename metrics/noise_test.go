package metrics

import (
	"fmt"
	"math"
	"testing"
)

// TestNoiseAndQuantisation measures the reference loops of references.md
// §2–§3 through Gaussian measurement noise and encoder quantisation, and
// checks each metric against the closed form within a tolerance derived from
// the disturbance, not fitted to the results:
//
//   - σe = √(σ² + q²/12) is the combined noise, q²/12 being the variance of a
//     uniform quantiser of step q (B. Widrow's quantisation noise model,
//     references.md §5).
//   - A state level averages N samples: it is off by at most q/2 (a
//     quantiser's bias when the noise is too small to dither it) plus 5σe/√N.
//   - A level crossing is shifted by the amplitude disturbance divided by the
//     response's slope there, the usual first-order propagation of amplitude
//     noise into a time instant (IEC 62754:2017, from memory). The first
//     crossing can be triggered by the largest noise sample near the level,
//     taken as 6σe + q, plus the error of the level itself.
//   - The peak sample can be any sample within 6σe + q of the true peak
//     value; around the peak y ≈ yp − ½|y″|(t − tp)², so its time is off by
//     at most √(2(6σe + q)/|y″|) plus one sample period.
//   - Overshoot is off by (6σe + q + final-value error)/|step| × 100.
func TestNoiseAndQuantisation(t *testing.T) {
	const step = 25.0
	disturbances := []struct {
		name         string
		sigma, quant float64
	}{
		// 0.02 of a 25-unit step (0.08 %) and a 0.01 encoder count.
		{"noise 0.02 + quantisation 0.01", 0.02, 0.01},
		{"quantisation 0.01 only", 0, 0.01},
		{"noise 0.05", 0.05, 0},
	}
	for _, c := range loopCases() {
		// Exact values from the closed form, once per loop.
		t10 := exactCrossing(c.f, 0.1, c.settle)
		t90 := exactCrossing(c.f, 0.9, c.settle)
		t02 := exactCrossing(c.f, 0.02, c.settle)
		ts := exactSettling(c.f, 1, 0.02, c.settle)
		slope := func(at float64) float64 { // units per second
			const h = 1e-6
			return math.Abs(c.f(at+h)-c.f(math.Max(at-h, 0))) / (at + h - math.Max(at-h, 0)) * step
		}
		for _, d := range disturbances {
			for _, seed := range []uint64{1, 2, 3} {
				t.Run(fmt.Sprintf("%s/%s/seed=%d", c.name, d.name, seed), func(t *testing.T) {
					r := rig{dt: dt, t0: 7.5, f: c.f, noise: d.sigma, quant: d.quant, seed: seed}
					tr := r.record([]segment{{0.5, 0}, {c.settle, step}})
					ms := Measure(tr, 1, DefaultOptions())
					if len(ms) != 1 {
						t.Fatalf("found %d steps, want 1", len(ms))
					}
					m := ms[0]
					se := math.Sqrt(d.sigma*d.sigma + d.quant*d.quant/12)
					spike := 6*se + d.quant
					nInit := 250.0 // last half of the 0.5 s hold at 1 kHz
					nFinal := math.Ceil(0.2 * c.settle / dt)
					tolInit := d.quant/2 + 5*se/math.Sqrt(nInit)
					tolFinal := d.quant/2 + 5*se/math.Sqrt(nFinal)
					near(t, "initial_value", m.InitialValue, 0, tolInit)
					near(t, "final_value", m.FinalValue, step, tolFinal)

					levelErr := tolInit + tolFinal
					crossTol := func(at float64) float64 { return tolExact + (spike+levelErr)/slope(at) }
					near(t, "rise_time_s", m.RiseTime, t90-t10, crossTol(t10)+crossTol(t90))
					near(t, "dead_time_s", m.DeadTime, t02, crossTol(t02))
					near(t, "settling_time_s", m.SettlingTime, ts, tolExact+(spike+tolFinal)/slope(ts))
					near(t, "overshoot_pct", m.Overshoot, c.os, (spike+tolFinal)/step*100+0.005)
					if !math.IsNaN(c.peakT) {
						const h = 1e-4
						curv := math.Abs(c.f(c.peakT+h)-2*c.f(c.peakT)+c.f(c.peakT-h)) / (h * h) * step
						near(t, "peak_time_s", m.PeakTime, c.peakT, math.Sqrt(2*spike/curv)+dt)
					}
					near(t, "steady_state_error", m.SteadyStateError, 0, tolFinal)
				})
			}
		}
	}
}
