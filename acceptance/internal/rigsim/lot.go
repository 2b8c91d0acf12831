package rigsim

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
)

// Causes is a set of faults injected into a unit, for tests that check
// which causes a reader of the unit's record names.
type Causes uint8

// The injectable causes.
const (
	// LoopDelay adds loop delay (Injection.Delay) to the unit's own.
	LoopDelay Causes = 1 << iota
	// StaticFriction adds breakaway and Coulomb friction (a position
	// deadband of a proportional loop).
	StaticFriction
	// EffortSaturation makes the drive clamp at a fraction of the nominal
	// effort limit.
	EffortSaturation
	// GainSpread widens the unit-to-unit spread of the force constant.
	GainSpread
)

// NoCause is the empty set.
const NoCause Causes = 0

var causeNames = [...]string{"loop_delay", "static_friction", "effort_saturation", "gain_spread"}

// String names the causes joined by "+", or "none".
func (c Causes) String() string {
	if c == NoCause {
		return "none"
	}
	var parts []string
	for i, n := range causeNames {
		if c&(1<<i) != 0 {
			parts = append(parts, n)
		}
	}
	if c>>len(causeNames) != 0 {
		parts = append(parts, fmt.Sprintf("unknown(%#x)", uint8(c>>len(causeNames))))
	}
	return strings.Join(parts, "+")
}

// Has reports whether every cause in d is in c.
func (c Causes) Has(d Causes) bool { return c&d == d }

// CauseSets lists the sets a confusion table covers: none, each single
// cause, and each pair, in a fixed order.
func CauseSets() []Causes {
	sets := []Causes{NoCause}
	for i := range causeNames {
		sets = append(sets, 1<<i)
	}
	for i := range causeNames {
		for j := i + 1; j < len(causeNames); j++ {
			sets = append(sets, 1<<i|1<<j)
		}
	}
	return sets
}

// Spread is the unit-to-unit variation every unit of a lot has: each
// factor is drawn uniformly within ± the amount.
type Spread struct {
	Gain     float64 // fraction of the force constant, e.g. 0.02 for ±2 %
	Inertia  float64 // fraction of the inertia
	Friction float64 // fraction of the friction forces
	Delay    float64 // seconds around the nominal loop delay (not below zero)
}

// Injection sizes the injected causes; a zero field takes the default
// given beside it.
type Injection struct {
	// Delay is added to the loop delay; default 8 sample periods.
	Delay float64
	// StaticFriction is the breakaway force added; default 5 % of the
	// nominal drive's largest force kt·EffortLimit.
	StaticFriction float64
	// CoulombRatio is the added Coulomb force as a fraction of the added
	// breakaway force; default 0.6.
	CoulombRatio float64
	// Saturation is the drive's clamp as a fraction of the nominal
	// effort limit; default 0.3.
	Saturation float64
	// GainSpread is the force constant's spread, ± fraction, replacing
	// Spread.Gain; default 0.15.
	GainSpread float64
}

// LotSpec describes a lot of units made from nominal parameters.
type LotSpec struct {
	Nominal Rig // its Plant must be a Mass
	Units   int
	Seed    uint64
	Spread  Spread
	Inject  Causes    // the causes injected
	Size    Injection // how large they are
	// Share is the fraction of units that get the injected causes, chosen
	// by a seeded shuffle; zero means all units.
	Share float64
	// SerialPrefix starts each serial (default "U"): U0001, U0002, …
	SerialPrefix string
}

// Unit is one simulated unit of a lot.
type Unit struct {
	Serial string
	Causes Causes // the causes injected into this unit
	Rig    Rig
}

// MakeLot makes the lot's units. Equal specs give equal lots: each unit's
// draws come from a PCG stream seeded with the lot's seed and the unit's
// index, and its encoder gets a seed of its own from the same stream.
func MakeLot(spec LotSpec) ([]Unit, error) {
	nom, ok := spec.Nominal.Plant.(Mass)
	if !ok {
		return nil, errors.New("lot: the nominal plant must be a Mass")
	}
	if err := spec.check(nom); err != nil {
		return nil, err
	}
	size := spec.Size.withDefaults(spec.Nominal, nom)
	injected := spec.chosen()
	units := make([]Unit, spec.Units)
	for i := range units {
		rng := rand.New(rand.NewPCG(spec.Seed, uint64(i)+1))
		var c Causes
		if injected[i] {
			c = spec.Inject
		}
		prefix := spec.SerialPrefix
		if prefix == "" {
			prefix = "U"
		}
		units[i] = Unit{
			Serial: fmt.Sprintf("%s%04d", prefix, i+1),
			Causes: c,
			Rig:    spec.unitRig(nom, size, c, rng),
		}
	}
	return units, nil
}

func (spec LotSpec) check(nom Mass) error {
	if err := nom.Validate(); err != nil {
		return fmt.Errorf("lot: %w", err)
	}
	if err := spec.Nominal.validate(); err != nil {
		return fmt.Errorf("lot: %w", err)
	}
	s := spec.Spread
	switch {
	case spec.Units < 1:
		return fmt.Errorf("lot: %d units; need at least one", spec.Units)
	case !(spec.Share >= 0 && spec.Share <= 1):
		return fmt.Errorf("lot: share %g must lie in [0, 1]", spec.Share)
	case !(s.Gain >= 0 && s.Gain < 1) || !(s.Inertia >= 0 && s.Inertia < 1) ||
		!(s.Friction >= 0 && s.Friction <= 1) || !(s.Delay >= 0):
		return fmt.Errorf("lot: spread %+v: fractions must lie in [0, 1) and the delay be ≥ 0", s)
	case spec.Inject>>len(causeNames) != 0:
		return fmt.Errorf("lot: unknown causes %v", spec.Inject)
	}
	needLimit := spec.Inject&EffortSaturation != 0 ||
		spec.Inject&StaticFriction != 0 && spec.Size.StaticFriction == 0
	if needLimit && spec.Nominal.Loop.EffortLimit == 0 {
		return fmt.Errorf("lot: injecting %v needs a nominal effort limit (or an explicit friction size)", spec.Inject)
	}
	return nil
}

func (in Injection) withDefaults(r Rig, nom Mass) Injection {
	kt := nom.ForceConstant
	if kt == 0 {
		kt = 1
	}
	def := func(v *float64, d float64) {
		if *v == 0 {
			*v = d
		}
	}
	def(&in.Delay, 8/r.Loop.SampleRate)
	def(&in.StaticFriction, 0.05*math.Abs(kt)*r.Loop.EffortLimit)
	def(&in.CoulombRatio, 0.6)
	def(&in.Saturation, 0.3)
	def(&in.GainSpread, 0.15)
	return in
}

// chosen marks the units that get the injected causes.
func (spec LotSpec) chosen() []bool {
	marks := make([]bool, spec.Units)
	k := spec.Units
	if spec.Share > 0 {
		k = int(math.Round(spec.Share * float64(spec.Units)))
	}
	perm := rand.New(rand.NewPCG(spec.Seed, 0)).Perm(spec.Units)
	for _, i := range perm[:k] {
		marks[i] = true
	}
	return marks
}

// unitRig draws one unit's parameters and applies its causes.
func (spec LotSpec) unitRig(nom Mass, size Injection, c Causes, rng *rand.Rand) Rig {
	within := func(x float64) float64 { return x * (2*rng.Float64() - 1) }
	r := spec.Nominal
	m := nom
	gain := spec.Spread.Gain
	if c.Has(GainSpread) {
		gain = size.GainSpread
	}
	kt := m.ForceConstant
	if kt == 0 {
		kt = 1
	}
	m.ForceConstant = kt * (1 + within(gain))
	m.Inertia *= 1 + within(spec.Spread.Inertia)
	fr := 1 + within(spec.Spread.Friction)
	m.Friction.Coulomb *= fr
	m.Friction.Static *= fr
	r.Loop.Delay = math.Max(0, r.Loop.Delay+within(spec.Spread.Delay))
	r.Encoder.Seed = rng.Uint64()
	if c.Has(LoopDelay) {
		r.Loop.Delay += size.Delay
	}
	if c.Has(StaticFriction) {
		m.Friction.Static = math.Max(m.Friction.Static, m.Friction.Coulomb) + size.StaticFriction
		m.Friction.Coulomb += size.CoulombRatio * size.StaticFriction
	}
	if c.Has(EffortSaturation) {
		r.Loop.EffortLimit *= size.Saturation
	}
	r.Plant = m
	return r
}
