package model

import (
	"errors"
	"math"
	"testing"
	"time"
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
