package model

import (
	"errors"
	"math"
	"testing"
	"time"
)

// secondOrderStep is the unit-step response of G·ωn²/(s² + 2ζωn s + ωn²)
// for 0 < ζ < 1: y(t) = G·[1 − e^(−σt)(cos ωd t + (σ/ωd) sin ωd t)],
// σ = ζωn, ωd = ωn√(1−ζ²). Source: K. Ogata, Modern Control Engineering,
// 5th ed., §5-3 (references §2).
func secondOrderStep(g, zeta, wn, t float64) float64 {
	sigma := zeta * wn
	wd := wn * math.Sqrt(1-zeta*zeta)
	return g * (1 - math.Exp(-sigma*t)*(math.Cos(wd*t)+sigma/wd*math.Sin(wd*t)))
}

func mustBuild(t testing.TB, c Config) *System {
	t.Helper()
	s, err := Build(c)
	if err != nil {
		t.Fatalf("Build: %v", err)
	}
	return s
}

// At the reference test's own gain, P control reproduces the measured closed
// loop T exactly, so the ideal simulation must match the second-order closed
// form (Ogata 5th ed. §5-3; references §2) at every sample. The loop starts at
// rest at `from`, where the closed loop holds G·from.
func TestIdealMatchesSecondOrderClosedForm(t *testing.T) {
	cases := []struct {
		name            string
		k0, g, zeta, wn float64
		from, to        float64
	}{
		{"type-1 loop ζ=0.45", 1, 1, 0.45, 22, 0, 1},
		{"type-1 loop at gain 0.55, down-step", 0.55, 1, 0.6, 14.5, 2, -3},
		{"type-0 loop G=0.8", 2, 0.8, 0.3, 40, 0, 5},
		{"Ogata Example 5-1 parameters", 1, 1, 0.6, 5, 0, 1},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			s := mustBuild(t, Config{
				ReferenceTest: &ReferenceTest{Gain: tc.k0, StaticGain: tc.g, Damping: tc.zeta, NaturalFrequency: tc.wn},
				Controller:    Controller{Kp: tc.k0},
			})
			dur, dt := 8/(tc.zeta*tc.wn), 1e-3
			tr, err := s.Simulate(Ideal, tc.from, tc.to, dur, dt)
			if err != nil {
				t.Fatal(err)
			}
			worst := 0.0
			for i, tm := range tr.Time {
				want := tc.g * tc.from
				if tm >= 0 {
					want += (tc.to - tc.from) * secondOrderStep(tc.g, tc.zeta, tc.wn, tm)
				}
				worst = math.Max(worst, math.Abs(tr.Response[i]-want))
			}
			if worst > 1e-6*math.Abs(tc.to-tc.from) {
				t.Errorf("largest deviation from the closed form %.3g, want ≤ 1e-6 of the step", worst)
			}
		})
	}
}

// Zero-order hold of 1/(τs + 1) with period T: y[k] = 1 − e^(−kT/τ) exactly
// at the sample instants for a unit step (references §5; G. F. Franklin,
// J. D. Powell, M. L. Workman, Digital Control of Dynamic Systems, 3rd ed.).
func TestZeroOrderHoldFirstOrder(t *testing.T) {
	for _, tc := range []struct{ tau, period float64 }{{0.05, 1e-3}, {2, 0.5}, {1e-3, 1e-2}} {
		ss := realise(poly{1}, poly{tc.tau, 1})
		phi, gamma := zoh(ss, tc.period)
		x := make([]float64, ss.n)
		for k := 1; k <= 50; k++ {
			nx := make([]float64, ss.n)
			for i := range nx {
				nx[i] = gamma[i] + dot(phi[i*ss.n:(i+1)*ss.n], x)
			}
			x = nx
			got := ss.output(x, 1)
			want := 1 - math.Exp(-float64(k)*tc.period/tc.tau)
			if math.Abs(got-want) > 1e-12 {
				t.Fatalf("τ=%v T=%v k=%d: y=%.15g, want %.15g", tc.tau, tc.period, k, got, want)
			}
		}
	}
}

// Sampled P control of an integrator K/s: the ZOH equivalent is Φ = 1,
// Γ = K·T (Franklin, Powell, Workman 3rd ed.), so with e[k] = 1 − y[k] the
// loop gives y[k+1] = y[k] + a·(1 − y[k−d]) (0 for k < d) with a = K·kp·T and d whole
// periods of delay. Derived here from the ZOH equivalent; the recursion is
// checked at every sample instant.
func TestRealisedIntegratorRecursion(t *testing.T) {
	for _, tc := range []struct {
		name      string
		k, kp, ts float64
		delaySamp int
	}{
		{"no delay", 50, 4, 1e-3, 0},
		{"one period delay", 50, 4, 1e-3, 1},
		{"three periods delay", 20, 2, 2e-3, 3},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s := mustBuild(t, Config{
				Plant:      &TransferFunc{Numerator: []float64{tc.k}, Denominator: []float64{1, 0}},
				Controller: Controller{Kp: tc.kp},
				Loop:       &Loop{SamplePeriod: tc.ts, Delay: float64(tc.delaySamp) * tc.ts},
			})
			tr, err := s.Simulate(Realised, 0, 1, 0.5, tc.ts)
			if err != nil {
				t.Fatal(err)
			}
			a := tc.k * tc.kp * tc.ts
			y := []float64{0}
			// u[k] = kp·(1 − y[k]) for k ≥ 0; before the step the command
			// and the response are 0, so u = 0.
			pushed := func(k int) float64 {
				if k < 0 {
					return 0
				}
				return 1 - y[k]
			}
			i0 := 0
			for tr.Time[i0] < 0 {
				i0++
			}
			for k := 0; i0+k < len(tr.Time); k++ {
				if got := tr.Response[i0+k]; math.Abs(got-y[k]) > 1e-9 {
					t.Fatalf("sample %d: y=%.12g, recursion gives %.12g", k, got, y[k])
				}
				y = append(y, y[k]+a*pushed(k-tc.delaySamp))
			}
		})
	}
}

// The discrete poles of the sampled integrator loop above: with no delay the
// loop is y[k+1] = (1 − a)·y[k] + a, stable iff 0 < a < 2; with one period
// of delay z² − z + a = 0, stable iff a < 1 (Jury's test on a second-order
// polynomial, Franklin, Powell, Workman 3rd ed.). The realised simulation
// must report the unstable side as an *UnstableError, promptly.
func TestRealisedStabilityBoundary(t *testing.T) {
	for _, tc := range []struct {
		name     string
		a        float64
		delay    int
		unstable bool
	}{
		{"a=1.9 no delay", 1.9, 0, false},
		{"a=2.1 no delay", 2.1, 0, true},
		{"a=0.9 one delay", 0.9, 1, false},
		{"a=1.1 one delay", 1.1, 1, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			ts := 1e-3
			s := mustBuild(t, Config{
				Plant:      &TransferFunc{Numerator: []float64{1}, Denominator: []float64{1, 0}},
				Controller: Controller{Kp: tc.a / ts},
				Loop:       &Loop{SamplePeriod: ts, Delay: float64(tc.delay) * ts},
			})
			start := time.Now()
			_, err := s.Simulate(Realised, 0, 1, 1, ts)
			if el := time.Since(start); el > 2*time.Second {
				t.Errorf("took %v", el)
			}
			var ue *UnstableError
			if got := errors.As(err, &ue); got != tc.unstable {
				t.Fatalf("unstable=%v, want %v (err %v)", got, tc.unstable, err)
			}
			if tc.unstable && ue.Kind != Realised {
				t.Errorf("kind %v", ue.Kind)
			}
		})
	}
}
