package rigsim

import "testing"

// BenchmarkUnit6s1kHz is the cost of one unit's log: 6 s at 1 kHz with
// the default 50 fine steps per sample, a PID with delay, Karnopp
// friction, a clamp and a noisy encoder, under moves out and back.
func BenchmarkUnit6s1kHz(b *testing.B) {
	rig := Rig{
		Plant:      Mass{Inertia: 2, Damping: 40, Friction: Friction{Coulomb: 0.5, Static: 0.8}},
		Controller: PID{Kp: 20000, Ki: 2e5, Kd: 200, DerivativeFilter: 0.0005},
		Loop:       Loop{SampleRate: 1000, Delay: 0.0015, EffortLimit: 50},
		Encoder:    Encoder{Count: 1e-6, NoiseSD: 0.3e-6, Seed: 1},
	}
	m, err := NewTrapezoid(0.1, 0, 0.01, 0.1, 2, 2)
	if err != nil {
		b.Fatal(err)
	}
	cmd := OutAndBack(m, 1, 2)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Simulate(rig, cmd, 6); err != nil {
			b.Fatal(err)
		}
	}
}
