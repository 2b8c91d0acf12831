package jsonfmt

import (
	"math"
	"strconv"
)

// AppendFloat appends the finite v as encoding/json writes a float64: the
// shortest representation that reads back exactly, in 'f' format except
// for magnitudes below 1e-6 or from 1e21 on, which use an exponent without
// a leading zero (1e-7, not 1e-07).
func AppendFloat(b []byte, v float64) []byte {
	abs := math.Abs(v)
	format := byte('f')
	if abs != 0 && (abs < 1e-6 || abs >= 1e21) {
		format = 'e'
	}
	b = strconv.AppendFloat(b, v, format, -1, 64)
	if format == 'e' {
		n := len(b)
		if n >= 4 && b[n-4] == 'e' && b[n-3] == '-' && b[n-2] == '0' {
			b[n-2] = b[n-1]
			b = b[:n-1]
		}
	}
	return b
}

// Digits is the number of significant decimal digits results.json keeps
// of every number (see Round).
const Digits = 12

// Round returns v rounded to sig significant decimal digits (1 to 17), as
// the float64 nearest to that decimal, so that AppendFloat then writes at
// most sig digits: 0.1+0.187 (0.28700000000000003) becomes 0.287. NaN,
// the infinities and zero (of either sign) are returned as they are.
//
// Float64 arithmetic leaves noise in the 16th and 17th digit of a derived
// quantity; no quantity a step-test rig records is known to better than
// about one part in 10^9 (sample clocks, encoders and 24-bit converters),
// so 12 digits keep every digit a measurement supports and drop only the
// noise. The result depends on v alone, so the bytes are the same on every
// platform.
func Round(v float64, sig int) float64 {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return v
	}
	var buf [32]byte
	b := strconv.AppendFloat(buf[:0], v, 'e', sig-1, 64)
	r, err := strconv.ParseFloat(string(b), 64)
	if err != nil {
		return v // cannot happen: AppendFloat wrote a valid number
	}
	return r
}
