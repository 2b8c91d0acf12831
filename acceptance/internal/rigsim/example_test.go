package rigsim_test

import (
	"fmt"
	"log"
	"strings"

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

// A lot of five units with a small spread, two of them with a drive that
// clamps at 30 % of its limit, each written as the log a rig would leave.
func ExampleMakeLot() {
	nominal := rigsim.Rig{
		Plant:      rigsim.Mass{Inertia: 2, Damping: 40, ForceConstant: 1.5},
		Controller: rigsim.PID{Kp: 13333, Kd: 120},
		Loop:       rigsim.Loop{SampleRate: 1000, Delay: 0.001, EffortLimit: 40},
		Encoder:    rigsim.Encoder{Count: 1e-6, NoiseSD: 2e-7},
	}
	lot, err := rigsim.MakeLot(rigsim.LotSpec{
		Nominal: nominal, Units: 5, Seed: 42,
		Spread: rigsim.Spread{Gain: 0.02, Inertia: 0.02},
		Inject: rigsim.EffortSaturation, Share: 0.4, SerialPrefix: "VD-",
	})
	if err != nil {
		log.Fatal(err)
	}
	for _, u := range lot {
		rec, err := rigsim.Simulate(u.Rig, rigsim.Step{Time: 0.05, To: 0.005}, 0.4)
		if err != nil {
			log.Fatal(err)
		}
		var sb strings.Builder
		layout := rigsim.CSVLayout{
			Delimiter: ';', DecimalComma: true, Decimals: 7,
			Columns:  [4]string{"t [s]", "cmd [m]", "pos [m]", "F [N]"},
			Metadata: []rigsim.Meta{{Key: "serial", Value: u.Serial}},
		}
		if err := rigsim.WriteCSV(&sb, rec, layout); err != nil {
			log.Fatal(err)
		}
		lines := strings.Split(sb.String(), "\n")
		if u.Serial == "VD-0001" {
			fmt.Printf("%s\n%s\n", lines[0], lines[1])
		}
		fmt.Printf("%s %-17s row at 60 ms: %s\n", u.Serial, u.Causes, lines[2+60])
	}
	// Output:
	// # serial: VD-0001
	// t [s];cmd [m];pos [m];F [N]
	// VD-0001 none              row at 60 ms: 0,0600000;0,0050000;0,0011770;28,3586460
	// VD-0002 effort_saturation row at 60 ms: 0,0600000;0,0050000;0,0003470;12,0000000
	// VD-0003 effort_saturation row at 60 ms: 0,0600000;0,0050000;0,0003460;12,0000000
	// VD-0004 none              row at 60 ms: 0,0600000;0,0050000;0,0011360;29,6386350
	// VD-0005 none              row at 60 ms: 0,0600000;0,0050000;0,0011520;29,1053060
}
