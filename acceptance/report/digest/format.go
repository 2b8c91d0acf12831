package digest

import (
	"strconv"
	"strings"
)

// Num formats a number for a report in one style: four significant digits
// as a plain decimal (0.0002708, 12346, 2500000), and a plain "0" for zero.
// Only magnitudes below 1e-9, which print as long runs of zeros, keep an
// exponent.
func Num(v float64) string {
	if v == 0 {
		return "0"
	}
	a := v
	if a < 0 {
		a = -a
	}
	if a < 1e-9 {
		return strconv.FormatFloat(v, 'e', 3, 64)
	}
	s := strconv.FormatFloat(v, 'g', 4, 64)
	if !strings.ContainsAny(s, "eE") {
		return s
	}
	if a >= 1 {
		return strconv.FormatFloat(v, 'f', 0, 64)
	}
	// Four significant digits after the leading zeros, then no trailing
	// zero: the digits 'g' chose, written out.
	r, _ := strconv.ParseFloat(s, 64)
	s = strconv.FormatFloat(r, 'f', -1, 64)
	return s
}

// Percent formats a fraction as a percentage with one decimal, e.g.
// 0.725 → "72.5 %".
func Percent(f float64) string {
	return strconv.FormatFloat(f*100, 'f', 1, 64) + " %"
}

// withUnit appends a unit to a number with a no-break space, so that a
// line never breaks between them: "0.45 s", "10 %", or the number alone
// without a unit.
func withUnit(v float64, unit string) string {
	if unit == "" {
		return Num(v)
	}
	return Num(v) + "\u00a0" + unit
}

// plural returns "1 step" or "3 steps".
func plural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return strconv.Itoa(n) + " " + word + "s"
}
