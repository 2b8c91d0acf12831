package metrics

import (
	"fmt"
	"math"
	"testing"
)

// Tolerances for noise-free records sampled at 1 kHz.
//
// A crossing instant is interpolated linearly between the two samples around
// it (IEEE Std 181-2011 §5.3.3). Over one sample period dt the error of that
// interpolation is at most dt²·max|y″|/(8·|y′|) at the crossing, below 5 µs
// for every response here (dt = 1 ms, |y″/y′| < 40 /s at the levels used),
// and the state levels of these long, settled records are exact to better
// than 1e-6 of the step. So:
//   - tolExact (10 µs) against the exact value computed from the closed form
//     by bisection in this file;
//   - tolTable (0.1 ms) against the values of references.md §2–§3, which are
//     rounded to 0.1 ms (half a unit: 0.05 ms) plus tolExact, with margin;
//   - a peak is a sample, not interpolated, so its time is only known to one
//     sample period: tolPeak = dt.
const (
	dt       = 1e-3
	tolExact = 10e-6
	tolTable = 0.1e-3
	tolPeak  = dt
)

// loopCase is a closed-form loop with the reference values of its unit-step
// response; NaN marks a value the source does not give.
type loopCase struct {
	name   string
	source string
	f      unitResponse
	settle float64 // how long the record runs after the step, seconds
	// Values from references.md (computed from the closed form there).
	rise, peakT, os, ts2, ts5 float64
}

// loopCases are the worked examples of references.md §2 and the first-order
// relations of §3.
func loopCases() []loopCase {
	nan := math.NaN()
	tau := 0.1
	return []loopCase{
		{
			// K. Ogata, Modern Control Engineering, 5th ed., Example 5-1 (from
			// memory): ζ = 0.6, ωn = 5 rad/s; exact values computed in
			// references.md §2.
			name: "Ogata Ex 5-1", source: "Ogata 5th ed. Example 5-1",
			f: underdamped(0.6, 5), settle: 8,
			rise: 0.3708, peakT: 0.7854, os: 9.48, ts2: 1.1886, ts5: 1.0458,
		},
		{
			// N. S. Nise, Control Systems Engineering, Example 4.5 (from
			// memory): 100/(s² + 15s + 100), ζ = 0.75, ωn = 10 rad/s;
			// exact values computed in references.md §2.
			name: "Nise Ex 4.5", source: "Nise Example 4.5",
			f: underdamped(0.75, 10), settle: 4,
			rise: 0.2288, peakT: 0.4750, os: 2.838, ts2: 0.5743, ts5: 0.3125,
		},
		{
			// Critically damped, ζ = 1, ωn = 1 rad/s: 1 − e^(−t)(1 + t),
			// references.md §2 (computed). No overshoot.
			name: "critical wn=1", source: "closed form 1 − e^(−t)(1 + t)",
			f: critical(1), settle: 25,
			rise: 3.3579, peakT: nan, os: 0, ts2: 5.8339, ts5: nan,
		},
		{
			// First order, τ = 0.1 s: rise 10–90 % = τ ln 9, ts(2 %) = τ ln 50,
			// ts(5 %) = τ ln 20 (references.md §3, closed form).
			name: "first order tau=0.1", source: "first-order closed form",
			f: firstOrder(tau), settle: 2,
			rise: 2.1972 * tau, peakT: nan, os: 0, ts2: 3.9120 * tau, ts5: 2.9957 * tau,
		},
	}
}

func near(t *testing.T, what string, got Value, want, tol float64) {
	t.Helper()
	if !got.OK {
		t.Errorf("%s: unknown (%s), want %.6g", what, got.Why, want)
		return
	}
	if math.Abs(got.V-want) > tol {
		t.Errorf("%s = %.7g, want %.7g ± %.2g (off by %.3g)", what, got.V, want, tol, got.V-want)
	}
}

// TestClosedFormReferences samples each reference response like a rig (1 kHz,
// a 0.5 s hold before the step, the clock not starting at zero) and checks
// every metric against references.md and against the closed form.
func TestClosedFormReferences(t *testing.T) {
	for _, c := range loopCases() {
		for _, band := range []float64{0.02, 0.05} {
			t.Run(fmt.Sprintf("%s/band=%g", c.name, band), func(t *testing.T) {
				r := rig{dt: dt, t0: 12.3, f: c.f}
				tr := r.record([]segment{{0.5, 0}, {c.settle, 25}})
				o := DefaultOptions()
				o.Band = band
				ms := Measure(tr, 1, o)
				if len(ms) != 1 {
					t.Fatalf("found %d steps, want 1", len(ms))
				}
				m := ms[0]
				near(t, "step start", Known(m.Start), 12.8, 1e-9)
				near(t, "step_size", m.StepSize, 25, 0)
				near(t, "initial_value", m.InitialValue, 0, 1e-9)
				near(t, "final_value", m.FinalValue, 25, 25e-6)

				// Rise time, 10–90 %: table value and exact crossing times.
				exRise := exactCrossing(c.f, 0.9, c.settle) - exactCrossing(c.f, 0.1, c.settle)
				near(t, c.source+" rise_time_s vs references.md", m.RiseTime, c.rise, tolTable)
				near(t, "rise_time_s vs closed form", m.RiseTime, exRise, tolExact)

				// Dead time at the 2 % departure level, from the closed form.
				near(t, "dead_time_s vs closed form", m.DeadTime, exactCrossing(c.f, 0.02, c.settle), tolExact)

				// Overshoot and peak.
				if math.IsNaN(c.peakT) {
					// Monotone response: the largest sample is the last,
					// above the mean of the final window by less than the
					// final value's error (1e-6 of the step).
					near(t, "overshoot_pct", m.Overshoot, 0, 1e-4)
				} else {
					near(t, c.source+" peak_time_s", m.PeakTime, c.peakT, tolPeak)
					// The peak sample lies within dt of the true peak, where
					// the response is flat to O(dt²): 1e-3 percentage points.
					near(t, c.source+" overshoot_pct", m.Overshoot, c.os, 0.005+1e-3)
					near(t, "peak_value", m.PeakValue, 25*(1+c.os/100), 25*(0.005+1e-3)/100)
				}

				// Settling time, band centred on the final value.
				want := c.ts2
				if band == 0.05 {
					want = c.ts5
				}
				if !math.IsNaN(want) {
					near(t, c.source+" settling_time_s vs references.md", m.SettlingTime, want, tolTable)
				}
				near(t, "settling_time_s vs closed form", m.SettlingTime,
					exactSettling(c.f, 1, band, c.settle), tolExact)
				near(t, "steady_state_error", m.SteadyStateError, 0, 25e-6)
				near(t, "steady_state_error_pct", m.SteadyStateErrorPct, 0, 1e-4)
				near(t, "duration", Known(m.Duration), c.settle, 1e-9)
				// Settled record: the last sample outside the band is the one
				// just before the settling instant.
				near(t, "last outside", m.LastOutside, m.SettlingTime.V, dt)
			})
		}
	}
}

// TestPublishedRoundedValues compares with the rounded values the textbooks
// print, which are the approximations the texts teach; the exact values
// differ from them and the test says by how much it allows.
func TestPublishedRoundedValues(t *testing.T) {
	type want struct {
		what string
		got  func(m StepMetrics) Value
		v    float64
		tol  float64
	}
	tests := []struct {
		name  string
		f     unitResponse
		zeta  float64
		wn    float64
		opts  func(*Options)
		wants []want
	}{
		{
			// Ogata 5th ed. Example 5-1 (from memory): tr (0–100 %) = 0.55 s,
			// tp = 0.785 s, Mp = 9.5 %.
			name: "Ogata Ex 5-1 0-100% rise", f: underdamped(0.6, 5), zeta: 0.6, wn: 5,
			opts: func(o *Options) { o.RiseLow, o.RiseHigh = 0, 1 },
			wants: []want{
				{"tr(0–100 %)", func(m StepMetrics) Value { return m.RiseTime }, 0.55, 0.005 + tolTable},
				{"tp", func(m StepMetrics) Value { return m.PeakTime }, 0.785, 0.0005 + tolPeak},
				{"Mp %", func(m StepMetrics) Value { return m.Overshoot }, 9.5, 0.05 + 0.01},
			},
		},
		{
			// Nise Example 4.5 (from memory): Tp = 0.475 s, %OS = 2.838 %,
			// Tr ≈ 0.23 s read from the normalised rise-time chart.
			name: "Nise Ex 4.5", f: underdamped(0.75, 10), zeta: 0.75, wn: 10,
			wants: []want{
				{"Tp", func(m StepMetrics) Value { return m.PeakTime }, 0.475, 0.0005 + tolPeak},
				{"%OS", func(m StepMetrics) Value { return m.Overshoot }, 2.838, 0.0005 + 0.001},
				{"Tr (chart)", func(m StepMetrics) Value { return m.RiseTime }, 0.23, 0.005},
			},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			tr := rig{dt: dt, t0: 3, f: tc.f}.record([]segment{{0.5, 0}, {5, 1}})
			o := DefaultOptions()
			if tc.opts != nil {
				tc.opts(&o)
			}
			ms := Measure(tr, 0.5, o)
			if len(ms) != 1 {
				t.Fatalf("found %d steps, want 1", len(ms))
			}
			for _, w := range tc.wants {
				near(t, w.what, w.got(ms[0]), w.v, w.tol)
			}
			// The textbooks' 4/σ (2 % band) is an approximation, neither
			// bound nor exact (references.md §2); the envelope
			// e^(−σt)/√(1−ζ²) is a true bound on |y − 1| (Ogata 5th ed.
			// §5-3), so the exact 2 % settling time cannot exceed the time
			// the envelope takes to shrink to 2 %.
			sigma := tc.zeta * tc.wn
			envelope := math.Log(1/(0.02*math.Sqrt(1-tc.zeta*tc.zeta))) / sigma
			o.RiseLow, o.RiseHigh = 0.1, 0.9
			m := MeasureStep(tr, FindSteps(tr, 0.5)[0], o)
			if !m.SettlingTime.OK || m.SettlingTime.V > envelope {
				t.Errorf("ts(2 %%) = %+v, want at most the envelope bound %.4f s (4/σ = %.4f s)",
					m.SettlingTime, envelope, 4/sigma)
			}
		})
	}
}

// TestPeakOvershootFormula checks peak time π/ωd and overshoot
// exp(−πζ/√(1−ζ²)) (Ogata 5th ed. §5-3, eqs. 5-20 and 5-21; references.md
// §2) over a range of damping ratios.
func TestPeakOvershootFormula(t *testing.T) {
	for _, zeta := range []float64{0.1, 0.3, 0.5, 0.7, 0.9} {
		t.Run(fmt.Sprintf("zeta=%g", zeta), func(t *testing.T) {
			wn := 8.0
			wd := wn * math.Sqrt(1-zeta*zeta)
			tr := rig{dt: dt, t0: 0.25, f: underdamped(zeta, wn)}.record([]segment{{0.4, -2}, {25 / (zeta * wn), 3}})
			ms := Measure(tr, 0.1, DefaultOptions())
			if len(ms) != 1 {
				t.Fatalf("found %d steps, want 1", len(ms))
			}
			mp := math.Exp(-math.Pi * zeta / math.Sqrt(1-zeta*zeta))
			near(t, "peak_time_s", ms[0].PeakTime, math.Pi/wd, tolPeak)
			// Peak sample within dt of the true peak: the response there is
			// flat to ωn²·dt²/2 relative, 3.2e-5, i.e. 3.2e-3 percentage points.
			near(t, "overshoot_pct", ms[0].Overshoot, 100*mp, 4e-3)
		})
	}
}

// TestDeadTimeFirstOrder checks the dead time of a first-order loop behind a
// transport delay θ: the 2 % level is reached at θ + τ·ln(1/0.98)
// (first-order closed form, references.md §3, shifted by θ).
func TestDeadTimeFirstOrder(t *testing.T) {
	tests := []struct {
		theta, tau, level float64
	}{
		{0, 0.1, 0.02},
		{0.0125, 0.1, 0.02},
		{0.04, 0.05, 0.05},
		{0.1003, 0.2, 0.10},
	}
	for _, tc := range tests {
		t.Run(fmt.Sprintf("theta=%g tau=%g level=%g", tc.theta, tc.tau, tc.level), func(t *testing.T) {
			tr := rig{dt: dt, t0: 100, f: delayed(firstOrder(tc.tau), tc.theta)}.record([]segment{{1, 10}, {25 * tc.tau, 4}})
			o := DefaultOptions()
			o.DeadTimeLevel = tc.level
			ms := Measure(tr, 1, o)
			if len(ms) != 1 {
				t.Fatalf("found %d steps, want 1", len(ms))
			}
			// The corner of the response at θ may fall between samples,
			// but every crossing here comes τ·ln(1/(1−level)) ≥ 2 ms after
			// it, more than one sample period, so the interpolation sees
			// the smooth part of the curve and tolExact applies.
			want := tc.theta + tc.tau*math.Log(1/(1-tc.level))
			near(t, "dead_time_s", ms[0].DeadTime, want, tolExact)
			near(t, "rise_time_s", ms[0].RiseTime, tc.tau*math.Log(9), tolExact)
		})
	}
}
