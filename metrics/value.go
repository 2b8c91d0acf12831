package metrics

import (
	"encoding/json"
	"math"
)

// Value is a measured number or, when it could not be measured, the reason
// why. The zero Value is unknown with no reason and should not be used.
type Value struct {
	V   float64 // the measured number; meaningful only when OK
	OK  bool    // true when the metric was measured
	Why string  // reason the metric is unknown; empty when OK
}

// Known returns a measured value. A non-finite number becomes unknown.
func Known(v float64) Value {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return Unknown("computed value is not finite")
	}
	return Value{V: v, OK: true}
}

// Unknown returns a value that could not be measured, with the reason.
func Unknown(why string) Value { return Value{Why: why} }

// MarshalJSON writes the number, or null when the value is unknown.
func (v Value) MarshalJSON() ([]byte, error) {
	if !v.OK {
		return []byte("null"), nil
	}
	return json.Marshal(v.V)
}

// Name identifies a metric. The string is the key used in specs and reports.
type Name string

// The metrics measured on every step.
const (
	StepSize            Name = "step_size"
	InitialValue        Name = "initial_value"
	FinalValue          Name = "final_value"
	DeadTime            Name = "dead_time_s"
	RiseTime            Name = "rise_time_s"
	PeakValue           Name = "peak_value"
	PeakTime            Name = "peak_time_s"
	Overshoot           Name = "overshoot_pct"
	SettlingTime        Name = "settling_time_s"
	SteadyStateError    Name = "steady_state_error"
	SteadyStateErrorPct Name = "steady_state_error_pct"
)

// Names lists every metric in report order.
var Names = []Name{
	StepSize, InitialValue, FinalValue, DeadTime, RiseTime, PeakValue,
	PeakTime, Overshoot, SettlingTime, SteadyStateError, SteadyStateErrorPct,
}

// NumNames is the number of metrics, len(Names).
const NumNames = 11

// Index returns the position of n in Names, or -1 for an unknown name.
func Index(n Name) int {
	switch n {
	case StepSize:
		return 0
	case InitialValue:
		return 1
	case FinalValue:
		return 2
	case DeadTime:
		return 3
	case RiseTime:
		return 4
	case PeakValue:
		return 5
	case PeakTime:
		return 6
	case Overshoot:
		return 7
	case SettlingTime:
		return 8
	case SteadyStateError:
		return 9
	case SteadyStateErrorPct:
		return 10
	}
	return -1
}
