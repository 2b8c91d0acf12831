package rigsim

import (
	"math"
	"strings"
	"testing"
)

// The derivative term acts as damping: PD control of an undamped mass
// J·s² gives the closed loop (Kd·s + Kp)/(J·s² + Kd·s + Kp), and a
// transfer-function plant 1/(s² + b·s) under P control gives the standard
// second-order loop (references.md §4, coefficient matching). The
// PD loop's unit-step response is the standard one plus its derivative
// scaled by Kd/Kp: y = y₂ + (Kd/Kp)·ẏ₂ with ẏ₂ = (ωn/√(1−ζ²))·e^(−ζωn t)·sin ωd t
// (Ogata, Modern Control Engineering, 5th ed., §5-3, from memory: the impulse
// response of the standard loop; references.md §2). A derivative filter
// of time constant Tf spreads the derivative kick of the step (velocity
// Kd/J) over about Tf, so it moves the response by about Kd·Tf/J: the
// filtered case must lie within 1.5 times that of the closed form and
// at least a fifth of it away (the filter acts).
func TestDerivativeAndTransferFunctionLoops(t *testing.T) {
	const zeta, wn, t0 = 0.6, 5.0, 0.1
	pd := func(tf float64) Rig {
		return Rig{
			Plant:      Mass{Inertia: 1},
			Controller: PID{Kp: wn * wn, Kd: 2 * zeta * wn, DerivativeFilter: tf},
			Loop:       Loop{SampleRate: 50000, FineSteps: 4},
		}
	}
	wd := wn * math.Sqrt(1-zeta*zeta)
	pdWant := func(t float64) float64 {
		if t <= 0 {
			return 0
		}
		dy := wn / math.Sqrt(1-zeta*zeta) * math.Exp(-zeta*wn*t) * math.Sin(wd*t)
		return secondOrderStep(zeta, wn, t) + 2*zeta/wn*dy
	}
	cases := []struct {
		name     string
		rig      Rig
		want     func(float64) float64
		tol, min float64
	}{
		{"PD on J·s²", pd(0), pdWant, 2e-4, 0},
		{"PD with a 0.1 ms filter", pd(1e-4), pdWant, 1.5 * 2 * zeta * wn * 1e-4, 0.2 * 2 * zeta * wn * 1e-4},
		{"P on 1/(s² + 6s) as a transfer function", Rig{
			Plant:      TransferFunc{Num: []float64{1}, Den: []float64{1, 2 * zeta * wn, 0}},
			Controller: PID{Kp: wn * wn},
			Loop:       Loop{SampleRate: 50000, FineSteps: 4},
		}, func(t float64) float64 { return secondOrderStep(zeta, wn, t) }, 1e-4, 0},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rec, err := Simulate(c.rig, Step{Time: t0, To: 1}, 3)
			if err != nil {
				t.Fatal(err)
			}
			var worst float64
			for i, ti := range rec.T {
				worst = math.Max(worst, math.Abs(rec.Position[i]-c.want(ti-t0)))
			}
			if worst > c.tol || worst < c.min {
				t.Errorf("largest deviation from the closed form %.3g, want in [%.3g, %.3g]", worst, c.min, c.tol)
			}
		})
	}
}

// A constant disturbance force leaves a P loop off target by d/(kt·Kp)
// but a PI loop on target (final-value theorem: the integrator's pole at
// the origin rejects a constant load; any control text, e.g. Ogata 5th
// ed. §5-8, from memory).
func TestIntegralRejectsConstantLoad(t *testing.T) {
	const d = 2.0
	for _, c := range []struct {
		name    string
		pid     PID
		wantOff float64
	}{
		{"P", PID{Kp: 100, Kd: 10}, d / 100},
		{"PI", PID{Kp: 100, Ki: 200, Kd: 10}, 0},
	} {
		rig := Rig{
			Plant:      Mass{Inertia: 1, Damping: 2, Disturbance: func(float64) float64 { return d }},
			Controller: c.pid,
			Loop:       Loop{SampleRate: 1000},
		}
		rec, err := Simulate(rig, Step{Time: 0.01, To: 0.5}, 30)
		if err != nil {
			t.Fatal(err)
		}
		if off := rec.Position[rec.Len()-1] - 0.5; math.Abs(off-c.wantOff) > 1e-6 {
			t.Errorf("%s: final offset %.3g under a load of %g, want %.3g", c.name, off, d, c.wantOff)
		}
	}
}

// Unusable inputs are refused with a message naming the parameter.
func TestSimulateRefusesBadInputs(t *testing.T) {
	good := pLoop(0.6, 5)
	cases := []struct {
		name string
		edit func(*Rig)
		want string
	}{
		{"no plant", func(r *Rig) { r.Plant = nil }, "no plant"},
		{"zero rate", func(r *Rig) { r.Loop.SampleRate = 0 }, "sample rate"},
		{"negative delay", func(r *Rig) { r.Loop.Delay = -1 }, "loop delay"},
		{"NaN gain", func(r *Rig) { r.Controller.Kd = math.NaN() }, "gain"},
		{"zero inertia", func(r *Rig) { r.Plant = Mass{} }, "inertia"},
		{"negative friction", func(r *Rig) { r.Plant = Mass{Inertia: 1, Friction: Friction{Static: -1}} }, "friction"},
		{"improper transfer function", func(r *Rig) { r.Plant = TransferFunc{Num: []float64{1, 0}, Den: []float64{1, 1}} }, "strictly proper"},
		{"negative noise", func(r *Rig) { r.Encoder.NoiseSD = -1 }, "noise"},
	}
	for _, c := range cases {
		r := good
		c.edit(&r)
		_, err := Simulate(r, Step{To: 1}, 1)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one naming %q", c.name, err, c.want)
		}
	}
	if _, err := Simulate(good, nil, 1); err == nil {
		t.Error("no command accepted")
	}
	if _, err := Simulate(good, Step{}, math.Inf(1)); err == nil {
		t.Error("infinite duration accepted")
	}
}
