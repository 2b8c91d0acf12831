package causes

import "strings"

// Cause is a set of likely causes.
type Cause uint8

// The causes an indication can name.
const (
	// LoopDelay is loop delay or a long sample time.
	LoopDelay Cause = 1 << iota
	// StaticFriction is static friction or a deadband.
	StaticFriction
	// EffortSaturation is a drive whose effort is clamped.
	EffortSaturation
	// GainSpread is a spread of the loop gain or the inertia between units.
	GainSpread
)

// None is the empty set: none of the causes stands out.
const None Cause = 0

// All lists the causes in report order.
var All = []Cause{LoopDelay, StaticFriction, EffortSaturation, GainSpread}

// Key is the cause's machine name, as results.json writes it.
func (c Cause) Key() string {
	switch c {
	case LoopDelay:
		return "loop_delay"
	case StaticFriction:
		return "static_friction"
	case EffortSaturation:
		return "effort_saturation"
	case GainSpread:
		return "gain_spread"
	}
	return ""
}

// Title names the cause as the reports print it.
func (c Cause) Title() string {
	switch c {
	case LoopDelay:
		return "Loop delay or sample time"
	case StaticFriction:
		return "Static friction or deadband"
	case EffortSaturation:
		return "Effort saturation"
	case GainSpread:
		return "Gain or inertia spread"
	}
	return ""
}

// Keys lists the machine names of the causes in c, in report order.
func (c Cause) Keys() []string {
	var out []string
	for _, k := range All {
		if c&k != 0 {
			out = append(out, k.Key())
		}
	}
	return out
}

// String joins the keys with "+", or says "none".
func (c Cause) String() string {
	if c == None {
		return "none"
	}
	return strings.Join(c.Keys(), "+")
}

// ByKey returns the cause whose Key is k.
func ByKey(k string) (Cause, bool) {
	for _, c := range All {
		if c.Key() == k {
			return c, true
		}
	}
	return None, false
}
