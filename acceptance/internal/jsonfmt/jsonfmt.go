// Package jsonfmt holds the number formatting that stepgate's hand-written
// JSON encoders share, so that they write exactly what encoding/json
// writes.
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
