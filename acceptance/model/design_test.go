package model

import (
	"math"
	"strings"
	"testing"
)

func TestOvershootDampingConversion(t *testing.T) {
	// Ogata 5th ed. Example 5-1 (from memory, references §2): ζ = 0.6 gives
	// Mp = 9.5 %; the exact value from the closed form is 9.48 %.
	pct, err := OvershootFromDamping(0.6)
	if err != nil || math.Abs(pct-9.4780) > 1e-3 {
		t.Fatalf("OvershootFromDamping(0.6) = %v, %v; want 9.478", pct, err)
	}
	// Nise Example 4.5 (from memory, references §2): ζ = 0.75 → %OS 2.838.
	pct, _ = OvershootFromDamping(0.75)
	if math.Abs(pct-2.838) > 1e-3 {
		t.Errorf("OvershootFromDamping(0.75) = %v, want 2.838", pct)
	}
	// The inverse relation ζ = −ln(Mp)/√(π² + ln²Mp) (references §2).
	for _, z := range []float64{0.05, 0.3, 0.6, 0.75, 0.95} {
		p, _ := OvershootFromDamping(z)
		back, err := DampingFromOvershoot(p)
		if err != nil || math.Abs(back-z) > 1e-12 {
			t.Errorf("round trip ζ=%v: %v, %v", z, back, err)
		}
	}
	if z, _ := DampingFromOvershoot(0); z != 1 {
		t.Errorf("0 %% overshoot gives ζ=%v, want 1", z)
	}
	for _, bad := range []float64{-1, 100, math.NaN()} {
		if _, err := DampingFromOvershoot(bad); err == nil {
			t.Errorf("DampingFromOvershoot(%v) accepted", bad)
		}
	}
}

// Closed-form P gains by coefficient matching (references §4).
func TestDesignGainClosedForm(t *testing.T) {
	cases := []struct {
		name   string
		cfg    Config
		target Target
		want   float64
		src    string
	}{
		{
			// Hand derivation, common practice, no source: the plant backed
			// out of the gain-1 test (ζ = 0.6, ωn = 14.5, G = 1) is
			// 210.25/(s² + 17.4 s); ζ = 1 needs ωn = 8.7, kp = 8.7²/210.25.
			name:   "critical damping from the reference test",
			cfg:    Config{ReferenceTest: &ReferenceTest{Gain: 1, StaticGain: 1, Damping: 0.6, NaturalFrequency: 14.5}, Controller: Controller{Kp: 1}},
			target: DampingTarget(1),
			want:   0.36,
		},
		{
			// kp = a²/(4ζ²K) for K/(s(s + a)) (references §4): 20²/(4·0.5²·200) = 2.
			name:   "K/(s(s+a)) at ζ=0.5",
			cfg:    Config{Plant: &TransferFunc{Numerator: []float64{200}, Denominator: []float64{1, 20, 0}}, Controller: Controller{Kp: 0.55}},
			target: DampingTarget(0.5),
			want:   2,
		},
		{
			// Type-0: b/(s² + a1 s + a0) with b = 100, a1 = 12, a0 = 20;
			// ζ = 0.6 needs ωn = 10, so kp = (100 − 20)/100 = 0.8
			// (coefficient matching, hand derivation).
			name:   "type-0 plant",
			cfg:    Config{Plant: &TransferFunc{Numerator: []float64{100}, Denominator: []float64{1, 12, 20}}, Controller: Controller{Kp: 1}},
			target: DampingTarget(0.6),
			want:   0.8,
		},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			s := mustBuild(t, tc.cfg)
			d, err := s.DesignGain(tc.target, 0, 1)
			if err != nil {
				t.Fatal(err)
			}
			if d.Ideal == nil || math.Abs(d.Ideal.Kp-tc.want) > 1e-12*tc.want {
				t.Fatalf("ideal design %+v (%s), want kp=%v", d.Ideal, d.IdealWhy, tc.want)
			}
			if !strings.HasPrefix(d.Ideal.Method, "closed form") {
				t.Errorf("method %q", d.Ideal.Method)
			}
			if d.Realised != nil || d.RealisedWhy == "" {
				t.Errorf("no loop section, yet realised %+v %q", d.Realised, d.RealisedWhy)
			}
		})
	}
}

// Root finding on the simulated overshoot must agree with the closed form
// where both apply. The closed form is coefficient matching (references §4);
// the overshoot that root finding aims at is exp(−πζ/√(1 − ζ²)) (Ogata 5th
// ed. §5-3).
func TestDesignGainRootFindingAgreesWithClosedForm(t *testing.T) {
	cfg := Config{
		Plant:      &TransferFunc{Numerator: []float64{210.25}, Denominator: []float64{1, 17.4, 0}},
		Controller: Controller{Kp: 1},
	}
	s := mustBuild(t, cfg)
	closed, _, why := s.closedFormGain(0.5)
	if why != "" {
		t.Fatal(why)
	}
	pct, _ := OvershootFromDamping(0.5)
	g, err := s.rootFindGain(Ideal, pct, true, 0, 1)
	if err != nil {
		t.Fatal(err)
	}
	if rel := math.Abs(g.Kp-closed) / closed; rel > 1e-4 {
		t.Errorf("root finding kp=%.8g, closed form %.8g (relative gap %.2g > 1e-4)", g.Kp, closed, rel)
	}
}

// A designed gain meets its overshoot target when the step is simulated again
// and measured by the metrics package, for loops without a closed form: PI
// control, a plant dead time, and a realised sampled loop.
func TestDesignGainOvershootTargetMet(t *testing.T) {
	plant := &TransferFunc{Numerator: []float64{210.25}, Denominator: []float64{1, 17.4, 0}}
	cases := []struct {
		name string
		cfg  Config
		pct  float64
	}{
		{"PI control", Config{Plant: &TransferFunc{Numerator: []float64{100}, Denominator: []float64{1, 12, 20}}, Controller: Controller{Kp: 1, Ki: 0.5}}, 10},
		{"plant dead time", Config{Plant: plant, PlantDeadTime: 0.01, Controller: Controller{Kp: 0.3}}, 5},
		{"sampled loop with delay", Config{Plant: plant, Controller: Controller{Kp: 0.3}, Loop: &Loop{SamplePeriod: 0.002, Delay: 0.003}}, 15},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			s := mustBuild(t, tc.cfg)
			d, err := s.DesignGain(OvershootTarget(tc.pct), 0, 1)
			if err != nil {
				t.Fatal(err)
			}
			for _, g := range []*GainDesign{d.Ideal, d.Realised} {
				if g == nil {
					continue
				}
				os := s.WithGain(g.Kp).measuredOvershoot(g.Kind, 0, 1)
				if !os.OK || math.Abs(os.V-tc.pct) > designOvershootTol {
					t.Errorf("%v kp=%v re-simulated overshoot %+v, want %v %%", g.Kind, g.Kp, os, tc.pct)
				}
			}
			if d.Ideal == nil {
				t.Errorf("no ideal design: %s", d.IdealWhy)
			}
			if s.Realised() && d.Realised == nil {
				t.Errorf("no realised design: %s", d.RealisedWhy)
			}
		})
	}
}

func TestDesignGainUnreachable(t *testing.T) {
	// Type-0 b/(s² + a1 s + a0) under P control: the damping a1/(2√(a0 + b·kp))
	// is at most a1/(2√a0) = 12/(2√20) = 1.342 (coefficient matching), so
	// ζ = 1.5 is out of reach.
	s := mustBuild(t, Config{Plant: &TransferFunc{Numerator: []float64{100}, Denominator: []float64{1, 12, 20}}, Controller: Controller{Kp: 1}})
	if _, err := s.DesignGain(DampingTarget(1.5), 0, 1); err == nil || !strings.Contains(err.Error(), "out of reach") {
		t.Errorf("err = %v", err)
	}
	// A first-order plant under P control never overshoots (its closed loop
	// is first order), so no gain reaches 10 %.
	s = mustBuild(t, Config{Plant: &TransferFunc{Numerator: []float64{5}, Denominator: []float64{1, 2}}, Controller: Controller{Kp: 1}})
	if _, err := s.DesignGain(OvershootTarget(10), 0, 1); err == nil || !strings.Contains(err.Error(), "stays below") {
		t.Errorf("err = %v", err)
	}
	if _, err := s.DesignGain(OvershootTarget(120), 0, 1); err == nil {
		t.Error("overshoot 120 % accepted")
	}
}

func TestLoopWhy(t *testing.T) {
	tests := []struct{ kind, why, want string }{
		{"realised", "realised loop: overshoot 5 % is not reachable", "realised loop: overshoot 5 % is not reachable"},
		{"realised", "the config has no loop or actuator section", "realised: the config has no loop or actuator section"},
		{"ideal", "realised loop: x", "ideal: realised loop: x"},
	}
	for _, tc := range tests {
		if got := LoopWhy(tc.kind, tc.why); got != tc.want {
			t.Errorf("LoopWhy(%q, %q) = %q, want %q", tc.kind, tc.why, got, tc.want)
		}
	}
}
