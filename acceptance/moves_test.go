package acceptance_test

import (
	"math"
	"testing"

	"github.com/stepgate/stepgate/acceptance/internal/rigsim"
	"github.com/stepgate/stepgate/metrics"
)

// TestProfiledMovesOnRig measures trapezoidal and S-curve moves simulated
// by the independent rig simulator (a 2 kg carriage with 40 N·s/m of
// viscous damping under a PD loop with 1 ms of delay, at 1 kHz, on a 1 µm
// encoder) and checks that each is found as one move, bounded by the
// profile's own start and end, and measured plausibly.
//
// The following error has a closed-form anchor: at a constant velocity v
// the mass needs the force b·v, which the loop supplies from the error
// alone (the derivative of a constant error is zero), so the error during
// the cruise is b·v/Kp (force balance J·ẍ + b·ẋ = Kp·e with ẍ = 0). The
// acceleration phases add at most J·a/Kp on top, so the largest following
// error lies between b·v/Kp and (b·v + J·a)/Kp plus the overshoot of the
// loop's transient (ζ ≈ 0.85 here; a 30 % margin).
func TestProfiledMovesOnRig(t *testing.T) {
	const (
		inertia, damping = 2.0, 40.0
		kp, kd           = 20000.0, 300.0
		rate             = 1000.0
	)
	rig := rigsim.Rig{
		Plant:      rigsim.Mass{Inertia: inertia, Damping: damping},
		Controller: rigsim.PID{Kp: kp, Kd: kd},
		Loop:       rigsim.Loop{SampleRate: rate, Delay: 0.001},
		Encoder:    rigsim.Encoder{Count: 1e-6},
	}
	trap, err := rigsim.NewTrapezoid(0.1, 0, 0.010, 0.05, 1, 1)
	if err != nil {
		t.Fatal(err)
	}
	scurve, err := rigsim.NewSCurve(0.1, 0.010, -0.010, 0.05, 1, 40)
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name  string
		move  rigsim.Move
		accel float64
	}{
		{"trapezoid 10 mm at 50 mm/s", trap, 1},
		{"S-curve −10 mm at 50 mm/s", scurve, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rec, err := rigsim.Simulate(rig, tc.move, tc.move.End()+0.6)
			if err != nil {
				t.Fatal(err)
			}
			tr := metrics.Trace{Time: rec.T, Command: rec.Command, Response: rec.Position}
			if err := tr.Validate(); err != nil {
				t.Fatal(err)
			}
			o := metrics.DefaultOptions()
			o.Band = 0.005 // ±50 µm, inside the following error, so the settling after the move shows
			steps := metrics.FindMoves(tr, 0.001, o.SteadyTime)
			if len(steps) != 1 {
				t.Fatalf("found %d moves, want one: %+v", len(steps), steps)
			}
			s := steps[0]
			period := 1 / rate
			if t0 := tr.Time[s.Start]; t0 <= tc.move.Start || t0 > tc.move.Start+period+1e-9 {
				t.Errorf("move starts at %v s, want the first sample after %v s", t0, tc.move.Start)
			}
			if t1 := tr.Time[s.MoveEnd]; math.Abs(t1-tc.move.End()) > 1.5*period {
				t.Errorf("move ends at %v s, want within two samples of %v s", t1, tc.move.End())
			}
			m := metrics.MeasureStep(tr, s, o)
			if !m.MoveTime.OK || math.Abs(m.MoveTime.V-tc.move.Duration()) > 2.5*period {
				t.Errorf("move time %+v, want %v s within two samples", m.MoveTime, tc.move.Duration())
			}
			if math.Abs(m.StepSize.V-tc.move.Distance()) > 1e-15 {
				t.Errorf("move size %+v, want %v", m.StepSize, tc.move.Distance())
			}
			v := 0.05
			lo, hi := damping*v/kp, (damping*v+inertia*tc.accel)/kp*1.3
			if fe := m.MaxFollowingError; !fe.OK || fe.V < lo || fe.V > hi {
				t.Errorf("max following error %+v m, want between b·v/Kp = %v and %v", fe, lo, hi)
			}
			if sa := m.SettlingAfterMove; !sa.OK || sa.V < 0 || sa.V > 0.3 {
				t.Errorf("settling after the move end %+v, want a known time under 0.3 s", sa)
			}
			if st := m.SettlingTime; !st.OK || math.Abs(st.V-(m.MoveTime.V+m.SettlingAfterMove.V)) > 1e-12 && m.SettlingAfterMove.V > 0 {
				t.Errorf("settling time %+v is not move time %v + settling after move %v", st, m.MoveTime.V, m.SettlingAfterMove.V)
			}
			if e := m.SteadyStateError; !e.OK || e.V > 2e-6 {
				t.Errorf("steady-state error %+v m, want within two encoder counts", e)
			}
			t.Logf("move time %.4f s (profile %.4f s), max following error %.1f µm (cruise b·v/Kp %.1f µm), settling after move %.4f s, overshoot %.3f %%",
				m.MoveTime.V, tc.move.Duration(), m.MaxFollowingError.V*1e6, lo*1e6, m.SettlingAfterMove.V, m.Overshoot.V)
		})
	}
}
