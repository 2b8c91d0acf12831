package model

import (
	"errors"
	"math"
	"testing"
)

func polyNear(a, b []float64, tol float64) bool {
	a, b = poly(a).trim(), poly(b).trim()
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Abs(a[i]-b[i]) > tol*math.Max(1, math.Abs(b[i])) {
			return false
		}
	}
	return true
}

// Backing the plant out of a reference test: H = T/(K₀(1 − T)), i.e.
// G·ωn²/(K₀·(s² + 2ζωn s + (1 − G)ωn²)) (references §4).
func TestBuildBacksOutPlant(t *testing.T) {
	cases := []struct {
		name     string
		rt       ReferenceTest
		num, den []float64
		text     string
	}{
		{
			// Hand derivation, common practice, no source: G = 1, ζ = 0.6,
			// ωn = 14.5 at gain 1 gives 14.5² = 210.25 and 2·0.6·14.5 = 17.4.
			name: "G=1", rt: ReferenceTest{Gain: 1, StaticGain: 1, Damping: 0.6, NaturalFrequency: 14.5},
			num: []float64{210.25}, den: []float64{1, 17.4, 0}, text: "210.25 / (s^2 + 17.4 s)",
		},
		{
			// G = 0.8: a0 = (1 − G)ωn² = 0.2·100 = 20, b = 0.8·100/2 = 40.
			name: "G=0.8 at gain 2", rt: ReferenceTest{Gain: 2, StaticGain: 0.8, Damping: 0.5, NaturalFrequency: 10},
			num: []float64{40}, den: []float64{1, 10, 20}, text: "40 / (s^2 + 10 s + 20)",
		},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			s := mustBuild(t, Config{ReferenceTest: &tc.rt, Controller: Controller{Kp: tc.rt.Gain}})
			p := s.Plant()
			if !polyNear(p.Numerator, tc.num, 1e-12) || !polyNear(p.Denominator, tc.den, 1e-12) {
				t.Errorf("plant %v / %v, want %v / %v", p.Numerator, p.Denominator, tc.num, tc.den)
			}
			if got := p.String(); got != tc.text {
				t.Errorf("String() = %q, want %q", got, tc.text)
			}
			// At the test gain the closed loop is the measured one.
			cl := s.ClosedLoop()
			wn2 := tc.rt.NaturalFrequency * tc.rt.NaturalFrequency
			lead := cl.Denominator[0]
			wantDen := []float64{1, 2 * tc.rt.Damping * tc.rt.NaturalFrequency, wn2}
			if !polyNear(poly(cl.Denominator).scale(1/lead), wantDen, 1e-12) || !polyNear(poly(cl.Numerator).scale(1/lead), []float64{tc.rt.StaticGain * wn2}, 1e-12) {
				t.Errorf("closed loop %v", cl)
			}
		})
	}
}

// Closed-loop polynomials under PI and PD control, derived by hand from
// T = C·H/(1 + C·H) (block-diagram reduction, references §4).
func TestClosedLoopPolynomials(t *testing.T) {
	const b, a1, a0 = 210.25, 17.4, 20.0
	wf := 2 * math.Pi * 50
	cases := []struct {
		name     string
		plantDen []float64
		ctrl     Controller
		num, den []float64
	}{
		{
			// C = (kp s + ki)/s, H = b/(s² + a1 s + a0):
			// den = s³ + a1 s² + (a0 + b kp) s + b ki, num = b kp s + b ki.
			name: "PI on type-0", plantDen: []float64{1, a1, a0}, ctrl: Controller{Kp: 0.4, Ki: 3},
			num: []float64{b * 0.4, b * 3}, den: []float64{1, a1, a0 + b*0.4, b * 3},
		},
		{
			// C = (kp(s + ωf) + kd ωf s)/(s + ωf), H = b/(s² + a1 s):
			// den = s³ + (a1 + ωf)s² + (a1 ωf + b(kp + kd ωf))s + b kp ωf,
			// num = b(kp + kd ωf)s + b kp ωf.
			name: "PD with filter", plantDen: []float64{1, a1, 0}, ctrl: Controller{Kp: 0.5, Kd: 0.02, DerivativeFilterHz: 50},
			num: []float64{b * (0.5 + 0.02*wf), b * 0.5 * wf},
			den: []float64{1, a1 + wf, a1*wf + b*(0.5+0.02*wf), b * 0.5 * wf},
		},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			s := mustBuild(t, Config{Plant: &TransferFunc{Numerator: []float64{b}, Denominator: tc.plantDen}, Controller: tc.ctrl})
			cl := s.ClosedLoop()
			if !polyNear(cl.Numerator, tc.num, 1e-12) || !polyNear(cl.Denominator, tc.den, 1e-12) {
				t.Errorf("closed loop %v / %v, want %v / %v", cl.Numerator, cl.Denominator, tc.num, tc.den)
			}
		})
	}
}

// PI control removes the steady-state error of a type-0 plant: by the final
// value theorem the step settles at T(0) = b·ki/(b·ki) = 1, while P control
// alone settles at b·kp/(a0 + b·kp) (references §4; the final value theorem,
// Ogata 5th ed.).
func TestPIRemovesSteadyStateError(t *testing.T) {
	plant := &TransferFunc{Numerator: []float64{100}, Denominator: []float64{1, 12, 20}}
	for _, tc := range []struct {
		name  string
		ctrl  Controller
		final float64
	}{
		{"P only", Controller{Kp: 0.8}, 80.0 / 100},
		{"PI", Controller{Kp: 0.8, Ki: 2}, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s := mustBuild(t, Config{Plant: plant, Controller: tc.ctrl})
			dur, err := s.horizon(25)
			if err != nil {
				t.Fatal(err)
			}
			tr, err := s.Simulate(Ideal, 0, 1, dur, dur/2000)
			if err != nil {
				t.Fatal(err)
			}
			if got := tr.Response[len(tr.Response)-1]; math.Abs(got-tc.final) > 1e-6 {
				t.Errorf("final value %.9f, want %v", got, tc.final)
			}
		})
	}
}

func TestBuildRejects(t *testing.T) {
	rt := func(g, z, w, k float64) *ReferenceTest {
		return &ReferenceTest{Gain: k, StaticGain: g, Damping: z, NaturalFrequency: w}
	}
	ok := rt(1, 0.5, 20, 1)
	plant := &TransferFunc{Numerator: []float64{200}, Denominator: []float64{1, 20, 0}}
	p := Controller{Kp: 1}
	cases := []struct {
		name string
		cfg  Config
		key  string
	}{
		{"no plant", Config{Controller: p}, "model"},
		{"both", Config{ReferenceTest: ok, Plant: plant, Controller: p}, "model"},
		{"zero damping", Config{ReferenceTest: rt(1, 0, 20, 1), Controller: p}, "model.reference_test.damping"},
		{"negative frequency", Config{ReferenceTest: rt(1, 0.5, -2, 1), Controller: p}, "model.reference_test.natural_frequency_rad_s"},
		{"NaN static gain", Config{ReferenceTest: rt(math.NaN(), 0.5, 20, 1), Controller: p}, "model.reference_test.static_gain"},
		{"zero test gain", Config{ReferenceTest: rt(1, 0.5, 20, 0), Controller: p}, "model.reference_test.gain"},
		{"improper plant", Config{Plant: &TransferFunc{Numerator: []float64{1, 0, 0}, Denominator: []float64{1, 2}}, Controller: p}, "model.plant"},
		{"zero denominator", Config{Plant: &TransferFunc{Numerator: []float64{1}, Denominator: []float64{0, 0}}, Controller: p}, "model.plant.denominator"},
		{"empty numerator", Config{Plant: &TransferFunc{Denominator: []float64{1, 2}}, Controller: p}, "model.plant.numerator"},
		{"infinite coefficient", Config{Plant: &TransferFunc{Numerator: []float64{1}, Denominator: []float64{1, math.Inf(1)}}, Controller: p}, "model.plant.denominator"},
		{"negative dead time", Config{ReferenceTest: ok, PlantDeadTime: -0.001, Controller: p}, "model.plant_dead_time_s"},
		{"no gains", Config{ReferenceTest: ok}, "model.controller"},
		{"negative kp", Config{ReferenceTest: ok, Controller: Controller{Kp: -1}}, "model.controller.kp"},
		{"kd without filter", Config{ReferenceTest: ok, Controller: Controller{Kp: 1, Kd: 0.01}}, "model.controller.derivative_filter_hz"},
		{"zero sample period", Config{ReferenceTest: ok, Controller: p, Loop: &Loop{}}, "model.loop.sample_period_s"},
		{"negative delay", Config{ReferenceTest: ok, Controller: p, Loop: &Loop{SamplePeriod: 1e-3, Delay: -1}}, "model.loop.delay_s"},
		{"deadband above limit", Config{ReferenceTest: ok, Controller: p, Actuator: &Actuator{EffortLimit: 1, Deadband: 2}}, "model.actuator.deadband"},
		{"negative limit", Config{ReferenceTest: ok, Controller: p, Actuator: &Actuator{EffortLimit: -1}}, "model.actuator.effort_limit"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Build(tc.cfg)
			var fe *FieldError
			if !errors.As(err, &fe) {
				t.Fatalf("err = %v, want a *FieldError", err)
			}
			if fe.Key != tc.key {
				t.Errorf("key %q, want %q (%v)", fe.Key, tc.key, err)
			}
		})
	}
}

// The ideal loop's stability check: K/(s(s+1)(s+2)) under P control has the
// characteristic polynomial s³ + 3s² + 2s + K·kp, which by Routh–Hurwitz is
// stable iff K·kp < 6 (Ogata 5th ed. §5-7, Routh's stability criterion; the
// bound derived here). Above it the simulation reports the poles.
func TestIdealStabilityRouth(t *testing.T) {
	plant := &TransferFunc{Numerator: []float64{1}, Denominator: []float64{1, 3, 2, 0}}
	for _, tc := range []struct {
		kp       float64
		unstable bool
	}{{5.9, false}, {6.1, true}, {20, true}} {
		s := mustBuild(t, Config{Plant: plant, Controller: Controller{Kp: tc.kp}})
		_, err := s.Simulate(Ideal, 0, 1, 10, 0.01)
		var ue *UnstableError
		if got := errors.As(err, &ue); got != tc.unstable {
			t.Fatalf("kp=%v: unstable=%v, want %v (%v)", tc.kp, got, tc.unstable, err)
		}
		if tc.unstable && (ue.Kind != Ideal || len(ue.Poles) != 2) {
			t.Errorf("kp=%v: %v", tc.kp, err)
		}
	}
}
