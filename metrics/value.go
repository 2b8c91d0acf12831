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
