package rigsim

import (
	"math"
	"testing"
)

func nominalRig() Rig {
	return Rig{
		Plant:      Mass{Inertia: 2, Damping: 40, ForceConstant: 1.5, Friction: Friction{Coulomb: 0.2, Static: 0.3}},
		Controller: PID{Kp: 13333, Kd: 120},
		Loop:       Loop{SampleRate: 1000, Delay: 0.001, EffortLimit: 40},
		Encoder:    Encoder{Count: 1e-6, NoiseSD: 2e-7},
	}
}

func TestCauseSetsCoverNoneSinglesAndPairs(t *testing.T) {
	sets := CauseSets()
	want := []string{"none", "loop_delay", "static_friction", "effort_saturation", "gain_spread",
		"loop_delay+static_friction", "loop_delay+effort_saturation", "loop_delay+gain_spread",
		"static_friction+effort_saturation", "static_friction+gain_spread", "effort_saturation+gain_spread"}
	if len(sets) != len(want) {
		t.Fatalf("%d sets, want %d", len(sets), len(want))
	}
	for i, s := range sets {
		if s.String() != want[i] {
			t.Errorf("set %d is %q, want %q", i, s, want[i])
		}
	}
}

// Each injected cause changes exactly its own parameters, by the stated
// amount, and the same unit drawn without causes differs only there.
func TestMakeLotInjectsEachCause(t *testing.T) {
	const n = 40
	base := LotSpec{Nominal: nominalRig(), Units: n, Seed: 11,
		Spread: Spread{Gain: 0.02, Inertia: 0.03, Friction: 0.1, Delay: 0.0002}}
	clean, err := MakeLot(base)
	if err != nil {
		t.Fatal(err)
	}
	for _, cs := range CauseSets() {
		spec := base
		spec.Inject = cs
		lot, err := MakeLot(spec)
		if err != nil {
			t.Fatalf("%v: %v", cs, err)
		}
		var gainDev float64
		for i, u := range lot {
			c, m, m0 := clean[i].Rig, u.Rig.Plant.(Mass), clean[i].Rig.Plant.(Mass)
			if u.Causes != cs || u.Serial != clean[i].Serial || m.Inertia != m0.Inertia || u.Rig.Encoder.Seed != c.Encoder.Seed {
				t.Fatalf("%v unit %d: causes %v, serial %s, inertia %g (clean %g)", cs, i, u.Causes, u.Serial, m.Inertia, m0.Inertia)
			}
			checkDelta(t, cs, LoopDelay, "delay", u.Rig.Loop.Delay-c.Loop.Delay, 0.008)
			if want := map[bool]float64{true: 0.3 * 40, false: 40}[cs.Has(EffortSaturation)]; u.Rig.Loop.EffortLimit != want {
				t.Fatalf("%v: effort limit %g, want %g", cs, u.Rig.Loop.EffortLimit, want)
			}
			if cs.Has(StaticFriction) {
				checkDelta(t, cs, StaticFriction, "static", m.Friction.Static-m0.Friction.Static, 0.05*1.5*40)
				checkDelta(t, cs, StaticFriction, "coulomb", m.Friction.Coulomb-m0.Friction.Coulomb, 0.6*0.05*1.5*40)
			} else if m.Friction != m0.Friction {
				t.Fatalf("%v: friction changed %+v → %+v", cs, m0.Friction, m.Friction)
			}
			gainDev = math.Max(gainDev, math.Abs(m.ForceConstant/1.5-1))
		}
		if want := map[bool]float64{true: 0.15, false: 0.02}[cs.Has(GainSpread)]; gainDev > want || gainDev < want/2 {
			t.Errorf("%v: largest gain deviation %.4f, want within ±%g and reaching at least half of it over %d units", cs, gainDev, want, n)
		}
	}
}

func checkDelta(t *testing.T, cs, c Causes, what string, got, want float64) {
	t.Helper()
	if !cs.Has(c) {
		want = 0
	}
	if math.Abs(got-want) > 1e-12*math.Max(1, math.Abs(want)) {
		t.Fatalf("%v: %s %g, want %g", cs, what, got, want)
	}
}

// The spread stays within its bounds, equal specs give equal lots, and a
// share injects the causes into that fraction of the units only.
func TestMakeLotSpreadAndShare(t *testing.T) {
	spec := LotSpec{Nominal: nominalRig(), Units: 200, Seed: 3, Spread: Spread{Gain: 0.05, Inertia: 0.1, Delay: 0.0005},
		Inject: LoopDelay | StaticFriction, Share: 0.25, SerialPrefix: "VD-"}
	a, err := MakeLot(spec)
	if err != nil {
		t.Fatal(err)
	}
	b, _ := MakeLot(spec)
	injected := 0
	for i, u := range a {
		m := u.Rig.Plant.(Mass)
		if u.Causes != NoCause {
			injected++
		}
		if m.Inertia < 2*0.9 || m.Inertia > 2*1.1 || m.ForceConstant < 1.5*0.95 || m.ForceConstant > 1.5*1.05 {
			t.Errorf("%s: inertia %g, force constant %g outside the spread", u.Serial, m.Inertia, m.ForceConstant)
		}
		if d := u.Rig.Loop.Delay; u.Causes == NoCause && (d < 0.0005 || d > 0.0015) {
			t.Errorf("%s: delay %g outside 1 ms ± 0.5 ms", u.Serial, d)
		}
		if bm := b[i].Rig.Plant.(Mass); u.Serial != b[i].Serial || bm.Inertia != m.Inertia || bm.Friction != m.Friction {
			t.Fatalf("unit %d differs between two lots from the same spec", i)
		}
	}
	if injected != 50 || a[0].Serial != "VD-0001" {
		t.Errorf("%d units injected, want 50; first serial %s", injected, a[0].Serial)
	}
}

// A drive clamped at a fraction of its limit shows a flat top at that
// level in its effort record, and a delayed unit leaves the initial level
// later than its clean twin.
func TestLotUnitsShowTheirCause(t *testing.T) {
	spec := LotSpec{Nominal: nominalRig(), Units: 1, Seed: 5, Inject: EffortSaturation | LoopDelay}
	lot, err := MakeLot(spec)
	if err != nil {
		t.Fatal(err)
	}
	spec.Inject = NoCause
	clean, _ := MakeLot(spec)
	step := Step{Time: 0.05, To: 0.005}
	rec, err := Simulate(lot[0].Rig, step, 0.5)
	if err != nil {
		t.Fatal(err)
	}
	ref, _ := Simulate(clean[0].Rig, step, 0.5)
	atClamp := 0
	for _, u := range rec.Effort {
		if math.Abs(u) > 12 {
			t.Fatalf("effort %g beyond the injected clamp 12", u)
		}
		if math.Abs(u) == 12 {
			atClamp++
		}
	}
	if atClamp < 5 {
		t.Errorf("%d samples at the injected clamp, want a flat top", atClamp)
	}
	leave := func(r Record) int {
		for k, y := range r.Position {
			if math.Abs(y) > 5e-6 {
				return k
			}
		}
		return -1
	}
	if d := leave(rec) - leave(ref); d < 8 || d > 9 {
		t.Errorf("delayed unit leaves %d samples after its clean twin, want the injected 8 (9 with the encoder's count)", d)
	}
}

func TestMakeLotRefusesBadSpecs(t *testing.T) {
	noLimit := nominalRig()
	noLimit.Loop.EffortLimit = 0
	tf := nominalRig()
	tf.Plant = TransferFunc{Num: []float64{1}, Den: []float64{1, 1}}
	for _, c := range []struct {
		name string
		spec LotSpec
	}{
		{"transfer-function plant", LotSpec{Nominal: tf, Units: 3}},
		{"no units", LotSpec{Nominal: nominalRig()}},
		{"share above one", LotSpec{Nominal: nominalRig(), Units: 3, Share: 1.5}},
		{"spread of 100 %", LotSpec{Nominal: nominalRig(), Units: 3, Spread: Spread{Gain: 1}}},
		{"saturation without a limit", LotSpec{Nominal: noLimit, Units: 3, Inject: EffortSaturation}},
		{"unknown cause", LotSpec{Nominal: nominalRig(), Units: 3, Inject: 1 << 6}},
	} {
		if _, err := MakeLot(c.spec); err == nil {
			t.Errorf("%s: accepted", c.name)
		}
	}
}
