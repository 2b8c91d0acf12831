package model

import (
	"errors"
	"math"
	"testing"
	"time"

	"github.com/stepgate/stepgate/metrics"
)

// delayedIntegratorStep is the unit-step response of the loop
// y'(t) = a·(1 − y(t − θ)) (plant K/s with dead time θ under P control,
// a = K·kp), at rest before the step: y(t) = Σₙ (−1)ⁿ⁺¹ aⁿ (t − nθ)ⁿ/n! over
// the n with t > nθ. Derived here by the method of steps (R. Bellman and
// K. L. Cooke, Differential-Difference Equations, 1963; from memory); putting
// the series into the delay equation verifies it term by term.
func delayedIntegratorStep(a, theta, t float64) float64 {
	y := 0.0
	for n := 1; float64(n)*theta < t; n++ {
		term := 1.0
		for k := 1; k <= n; k++ {
			term *= a * (t - float64(n)*theta) / float64(k)
		}
		if n%2 == 0 {
			term = -term
		}
		y += term
	}
	return y
}

// The plant dead time lies inside the loop: nothing moves before θ, and the
// response follows the method-of-steps series above.
func TestIdealDeadTimeMatchesMethodOfSteps(t *testing.T) {
	for _, tc := range []struct{ k, kp, theta, dt float64 }{
		{50, 0.2, 0.05, 1e-3},   // aθ = 0.5
		{20, 1, 0.07, 2.5e-3},   // aθ = 1.4, close to the π/2 margin
		{100, 0.3, 0.012, 1e-3}, // dt not a multiple of the fine step
	} {
		s := mustBuild(t, Config{
			Plant:         &TransferFunc{Numerator: []float64{tc.k}, Denominator: []float64{1, 0}},
			PlantDeadTime: tc.theta,
			Controller:    Controller{Kp: tc.kp},
		})
		a := tc.k * tc.kp
		dur := 12 * tc.theta
		tr, err := s.Simulate(Ideal, 0, 1, dur, tc.dt)
		if err != nil {
			t.Fatal(err)
		}
		worst := 0.0
		for i, tm := range tr.Time {
			want := 0.0
			if tm > 0 {
				want = delayedIntegratorStep(a, tc.theta, tm)
			}
			if tm <= tc.theta && tr.Response[i] != 0 {
				t.Fatalf("aθ=%v: response %v at t=%v, before the dead time", a*tc.theta, tr.Response[i], tm)
			}
			worst = math.Max(worst, math.Abs(tr.Response[i]-want))
		}
		if worst > 1e-6 {
			t.Errorf("aθ=%v: largest deviation from the series %.3g > 1e-6", a*tc.theta, worst)
		}
	}
}

// K/s with dead time θ under P control is stable iff K·kp·θ < π/2: the loop
// gain K·kp/ω crosses 1 at ω = K·kp, where the phase −π/2 − ω·θ must stay
// above −π (Nyquist criterion; derived here). An unstable loop is reported
// as an *UnstableError, in bounded time.
func TestIdealDeadTimeMargin(t *testing.T) {
	for _, tc := range []struct {
		atheta   float64
		unstable bool
	}{{1.4, false}, {3, true}} {
		theta := 0.05
		s := mustBuild(t, Config{
			Plant:         &TransferFunc{Numerator: []float64{1}, Denominator: []float64{1, 0}},
			PlantDeadTime: theta,
			Controller:    Controller{Kp: tc.atheta / theta},
		})
		start := time.Now()
		tr, err := s.Simulate(Ideal, 0, 1, 30, 1e-3)
		if el := time.Since(start); el > 5*time.Second {
			t.Errorf("aθ=%v took %v", tc.atheta, el)
		}
		var ue *UnstableError
		if got := errors.As(err, &ue); got != tc.unstable {
			t.Fatalf("aθ=%v: unstable=%v, want %v (%v)", tc.atheta, got, tc.unstable, err)
		}
		if !tc.unstable {
			if last := tr.Response[len(tr.Response)-1]; math.Abs(last-1) > 1e-6 {
				t.Errorf("aθ=%v settles at %v, want 1", tc.atheta, last)
			}
		}
	}
}

// delayTrace returns tr as seen behind a pure delay of k samples in series
// with the loop (in the command path, or in the measurement's transport to
// the logger): the command still steps at t = 0, the response and effort
// follow k samples later. The samples shifted in from before the step are
// the rest values tr holds at negative times (k must not exceed them).
func delayTrace(tr metrics.Trace, k int) metrics.Trace {
	d := tr.Clone()
	for i := k; i < len(tr.Time); i++ {
		d.Response[i] = tr.Response[i-k]
		d.Effort[i] = tr.Effort[i-k]
	}
	return d
}

// A pure dead time θ in series with the closed loop shifts the response by
// θ: L{f(t − θ)·1(t − θ)} = e^(−sθ)·F(s), the time-shift property of the
// Laplace transform (any control text, e.g. K. Ogata, Modern Control
// Engineering, 5th ed., §2-3; from memory). Measured from the command step,
// the dead time, peak time and settling time therefore grow by exactly θ,
// while the rise time (a difference of two instants) and the overshoot (a
// ratio of levels) do not change.
//
// θ is a whole number of samples, so the delayed record holds the same
// samples k places later: every crossing is interpolated between the same
// two values, and an instant read from it differs from the undelayed one by
// t[i+k] − t[i] = k·dt up to the rounding of the grid times (each n·dt is
// rounded once, a few ulps of 20 s, about 10⁻¹⁴ s); hence 1e-12 s. The
// record runs 20 s, so both final-value windows hold the settled response
// (e^(−σt) < 10⁻¹⁸ there) and the two final values agree.
//
// The loops are built from a reference test at gain 1 (references §2):
// Ogata 5th ed. Example 5-1, ζ = 0.6, ωn = 5 rad/s (from memory), and
// N. S. Nise, Control Systems Engineering, Example 4.5, ζ = 0.75,
// ωn = 10 rad/s (from memory). The undelayed metrics are first checked
// against the closed forms tp = π/ωd and Mp = exp(−πζ/√(1 − ζ²)) (Ogata 5th
// ed. §5-3): peak time to the sample period, overshoot to 0.01 point.
//
// A plant dead time inside the loop is different: the loop then closes
// around e^(−sθ)·H, so T = C·H·e^(−sθ)/(1 + C·H·e^(−sθ)) has the delay in
// its characteristic equation as well, and the response changes shape and
// stability rather than moving in time; TestIdealDeadTimeMatchesMethodOfSteps
// and TestIdealDeadTimeMargin above check that case.
func TestSeriesDeadTimeShiftsResponse(t *testing.T) {
	const dt, dur, tol = 1e-3, 20.0, 1e-12
	for _, tc := range []struct {
		name     string
		zeta, wn float64
		from, to float64
		k        int // delay in samples: θ = k·dt
	}{
		{"Ogata Ex. 5-1, one sample", 0.6, 5, 0, 1, 1},
		{"Ogata Ex. 5-1, 50 ms", 0.6, 5, 0, 1, 50},
		{"Ogata Ex. 5-1, 250 ms, down-step", 0.6, 5, 2, -1, 250},
		{"Nise Ex. 4.5, 120 ms", 0.75, 10, 0, 3, 120},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s := mustBuild(t, Config{
				ReferenceTest: &ReferenceTest{Gain: 1, StaticGain: 1, Damping: tc.zeta, NaturalFrequency: tc.wn},
				Controller:    Controller{Kp: 1},
			})
			tr, err := s.Simulate(Ideal, tc.from, tc.to, dur, dt)
			if err != nil {
				t.Fatal(err)
			}
			theta := float64(tc.k) * dt
			minChange := math.Abs(tc.to-tc.from) / 2
			ms := metrics.Measure(tr, minChange, metrics.DefaultOptions())
			md := metrics.Measure(delayTrace(tr, tc.k), minChange, metrics.DefaultOptions())
			if len(ms) != 1 || len(md) != 1 {
				t.Fatalf("found %d and %d steps, want 1 each", len(ms), len(md))
			}
			m, d := ms[0], md[0]
			if m.Start != 0 || d.Start != 0 {
				t.Fatalf("step instants %v and %v, want both at t = 0 (the command is not delayed)", m.Start, d.Start)
			}
			for _, n := range []metrics.Name{metrics.InitialValue, metrics.FinalValue, metrics.DeadTime, metrics.RiseTime, metrics.PeakTime, metrics.Overshoot, metrics.SettlingTime} {
				a, _ := m.Get(n)
				b, _ := d.Get(n)
				if !a.OK || !b.OK {
					t.Fatalf("%s unknown: undelayed %q, delayed %q", n, a.Why, b.Why)
				}
			}

			wd := tc.wn * math.Sqrt(1-tc.zeta*tc.zeta)
			if tp := math.Pi / wd; math.Abs(m.PeakTime.V-tp) > dt/2 {
				t.Errorf("undelayed peak time %.6f s, closed form π/ωd = %.6f s", m.PeakTime.V, tp)
			}
			if mp := 100 * math.Exp(-math.Pi*tc.zeta/math.Sqrt(1-tc.zeta*tc.zeta)); math.Abs(m.Overshoot.V-mp) > 0.01 {
				t.Errorf("undelayed overshoot %.4f %%, closed form %.4f %%", m.Overshoot.V, mp)
			}

			if got := d.FinalValue.V - m.FinalValue.V; math.Abs(got) > tol*math.Abs(tc.to-tc.from) {
				t.Errorf("final values differ by %.3g", got)
			}
			for _, c := range []struct {
				name        string
				orig, delay float64
				shift       float64
			}{
				{"dead time", m.DeadTime.V, d.DeadTime.V, theta},
				{"peak time", m.PeakTime.V, d.PeakTime.V, theta},
				{"settling time", m.SettlingTime.V, d.SettlingTime.V, theta},
				{"rise time", m.RiseTime.V, d.RiseTime.V, 0},
			} {
				if got := c.delay - c.orig; math.Abs(got-c.shift) > tol {
					t.Errorf("%s %.9f s → %.9f s behind θ = %v s: shifted by %.3g s, want %v s", c.name, c.orig, c.delay, theta, got, c.shift)
				}
			}
			if got := d.Overshoot.V - m.Overshoot.V; math.Abs(got) > 1e-9 {
				t.Errorf("overshoot %.9f %% → %.9f %%, want unchanged", m.Overshoot.V, d.Overshoot.V)
			}
		})
	}
}
