package rigsim

import (
	"math"
	"testing"
)

// With static (breakaway) friction Fs, a proportional loop cannot move the
// mass once kt·Kp·|e| ≤ Fs: the mass stalls anywhere in the band
// |e| ≤ Fs/(kt·Kp) around the target, and a step smaller than the band
// does not move it at all (the force balance of a P loop against Coulomb
// and static friction; Karnopp 1985's stick condition, references.md
// §13). Here kt = 1, Kp = 10, Fs = 0.5: band 0.05. Small steps stall
// short of the target; a larger one overshoots and stalls beyond it, still
// within the band.
func TestStaticFrictionStallBand(t *testing.T) {
	const kp, fs, t0 = 10.0, 0.5, 0.05
	band := fs / kp
	cases := []struct {
		name         string
		step         float64
		moves, short bool
	}{
		{"step inside the band does not move", 0.04, false, false},
		{"step on the band edge does not move", 0.05, false, false},
		{"small step stalls short", 0.2, true, true},
		{"small step down stalls short", -0.3, true, true},
		{"large step stalls beyond, in the band", 1, true, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rig := Rig{
				Plant:      Mass{Inertia: 1, Damping: 4, Friction: Friction{Coulomb: 0.3, Static: fs}},
				Controller: PID{Kp: kp},
				Loop:       Loop{SampleRate: 1000},
			}
			rec, err := Simulate(rig, Step{Time: t0, To: c.step}, 4)
			if err != nil {
				t.Fatal(err)
			}
			n := rec.Len() - 1
			if !c.moves {
				for k, y := range rec.Position {
					if y != 0 {
						t.Fatalf("position %g at sample %d; Kp·|step| = %g ≤ Fs must not move the mass", y, k, kp*math.Abs(c.step))
					}
				}
				return
			}
			e := (c.step - rec.Position[n]) * math.Copysign(1, c.step)
			if !(math.Abs(e) > 1e-6 && math.Abs(e) <= band*(1+1e-12)) {
				t.Errorf("final error %g, want stalled off the target within the stall band ±%g", e, band)
			}
			if c.short != (e > 0) {
				t.Errorf("final error %g: stalled short is %v, want %v", e, e > 0, c.short)
			}
			for k := n - 1000; k < n; k++ { // stuck for the last second
				if rec.Position[k] != rec.Position[n] {
					t.Fatalf("still moving at %g s: %g then %g", rec.T[k], rec.Position[k], rec.Position[n])
				}
			}
		})
	}
}

// Under integral action, a slow ramp against a breakaway force above the
// Coulomb force gives stick-slip: the mass alternates between rest (the
// integrator winds up while it is stuck) and slips (B. Armstrong-Hélouvry,
// P. Dupont, C. Canudas de Wit, "A survey of models, analysis tools and
// compensation methods for the control of machines with friction",
// Automatica 30(7), 1994, stick-slip and hunting; from memory).
func TestStickSlipUnderIntegralAction(t *testing.T) {
	rig := Rig{
		Plant:      Mass{Inertia: 1, Damping: 1, Friction: Friction{Coulomb: 1, Static: 2}},
		Controller: PID{Kp: 50, Ki: 100, Kd: 5},
		Loop:       Loop{SampleRate: 1000},
	}
	rec, err := Simulate(rig, Ramp{Time: 0.1, Slope: 0.02}, 10)
	if err != nil {
		t.Fatal(err)
	}
	// Count the rest intervals of at least 20 ms after the first slip.
	sticks, run, moved := 0, 0, false
	for k := 1; k < rec.Len(); k++ {
		if rec.Position[k] == rec.Position[k-1] {
			run++
			continue
		}
		if moved && run >= 20 {
			sticks++
		}
		moved, run = true, 0
	}
	if sticks < 3 {
		t.Errorf("%d rest intervals between slips under a slow ramp, want stick-slip (≥ 3)", sticks)
	}
	if y := rec.Position[rec.Len()-1]; !(y > 0.15) {
		t.Errorf("final position %g; the ramp to 0.198 must drag the mass along", y)
	}
}

// Without friction the friction code must be inert: the same loop with a
// zero Friction matches the frictionless closed form (Ogata 5th ed. §5-3,
// references.md §2) and a disturbance force shifts the final value of a P
// loop by d/(kt·Kp) (final-value theorem, any control text).
func TestDisturbanceOffset(t *testing.T) {
	const kp, d = 25.0, 0.5
	rig := pLoop(0.6, 5)
	rig.Plant = Mass{Inertia: 1, Damping: 6, Disturbance: func(t float64) float64 {
		if t >= 3 {
			return d
		}
		return 0
	}}
	rec, err := Simulate(rig, Step{Time: 0.1, To: 1}, 8)
	if err != nil {
		t.Fatal(err)
	}
	i3 := int(2.9 * 50000)
	if got, want := rec.Position[i3], secondOrderStep(0.6, 5, 2.8); math.Abs(got-want) > 1e-4 {
		t.Errorf("before the disturbance y = %.6g, want the closed form %.6g", got, want)
	}
	if got := rec.Position[rec.Len()-1] - 1; math.Abs(got-d/kp) > 1e-6 {
		t.Errorf("offset under the disturbance %.6g, want d/(kt·Kp) = %.6g", got, d/kp)
	}
}
