package rigsim_test

import (
	"fmt"
	"log"

	"github.com/stepgate/stepgate/acceptance/internal/rigsim"
)

// A unit on a 1 kHz rig: a 2 kg carriage with 40 N·s/m of damping and dry
// friction, a PD loop with 1 ms of loop delay and a drive clamped at
// ±50 N, a 1 µm encoder, commanded through a 10 mm S-curve move.
func ExampleSimulate() {
	rig := rigsim.Rig{
		Plant: rigsim.Mass{
			Inertia: 2, Damping: 40,
			Friction: rigsim.Friction{Coulomb: 0.5, Static: 0.8},
		},
		Controller: rigsim.PID{Kp: 20000, Kd: 200, DerivativeFilter: 0.0005},
		Loop:       rigsim.Loop{SampleRate: 1000, Delay: 0.001, EffortLimit: 50},
		Encoder:    rigsim.Encoder{Count: 1e-6, NoiseSD: 0.3e-6, Seed: 1},
	}
	move, err := rigsim.NewSCurve(0.05, 0, 0.010, 0.1, 2, 100)
	if err != nil {
		log.Fatal(err)
	}
	rec, err := rigsim.Simulate(rig, move, 0.5)
	if err != nil {
		log.Fatal(err)
	}
	n := rec.Len() - 1
	fmt.Printf("%d samples, move ends at %.3f s\n", rec.Len(), move.End())
	fmt.Printf("final command %.4f m, position %.6f m, effort %.2f N\n", rec.Command[n], rec.Position[n], rec.Effort[n])
	fmt.Printf("stalled %.0f µm from the target; stall band ±%.0f µm\n", (rec.Command[n]-rec.Position[n])*1e6, 0.8/20000*1e6)
	// Output:
	// 501 samples, move ends at 0.220 s
	// final command 0.0100 m, position 0.010017 m, effort -0.34 N
	// stalled -17 µm from the target; stall band ±40 µm
}
