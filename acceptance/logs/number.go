package logs

import (
	"strconv"
	"unsafe"
)

// numStatus says how a number conversion ended.
type numStatus uint8

const (
	numOK     numStatus = iota
	numEmpty            // no characters
	numSyntax           // not a decimal number
	numNaN              // the text NaN
	numInf              // the text Inf or Infinity
	numRange            // a decimal number too large for float64
)

// maxMantissaDigits is the number of decimal digits that always fit in a
// uint64 (10^19 − 1 < 2^64).
const maxMantissaDigits = 19

// exactPow10 holds the powers of ten that float64 represents exactly.
var exactPow10 = [...]float64{
	1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11,
	1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
}

// uintPow10 holds 10^k for k = 0..15, for the extended fast path.
var uintPow10 = [...]uint64{
	1, 10, 100, 1000, 10000, 100000, 1000000, 10000000, 100000000,
	1000000000, 10000000000, 100000000000, 1000000000000,
	10000000000000, 100000000000000, 1000000000000000,
}

// parseNumber converts the decimal number in b, written with the decimal
// mark dec ('.' or ','), and multiplies it by 10^shift, returning the
// correctly rounded float64: the value strconv.ParseFloat returns for the
// same number written with a '.' mark and its exponent raised by shift.
//
// The accepted form is an optional sign, digits with an optional fraction
// (at least one digit in all), and an optional exponent 'e' or 'E' with an
// optional sign and at least one digit. b must already be trimmed.
//
// The common case is exact without strconv (W. D. Clinger, "How to read
// floating point numbers accurately", PLDI 1990): a mantissa of at most
// 2^53 and a power of ten of at most 10^22 are both exact in float64, so one
// correctly rounded multiply or divide gives the correctly rounded result.
// Other numbers are passed to strconv.ParseFloat, without allocating:
// scratch is a reused buffer for the numbers that need rewriting.
func parseNumber(b []byte, dec byte, shift int, scratch *[]byte) (float64, numStatus) {
	n := len(b)
	if n == 0 {
		return 0, numEmpty
	}
	i := 0
	neg := false
	if b[0] == '+' || b[0] == '-' {
		neg = b[0] == '-'
		i++
	}
	// Common case: at most 19 mantissa digits, accumulated without checks.
	var mant uint64
	start := i
	for ; i < n; i++ {
		d := b[i] - '0'
		if d > 9 {
			break
		}
		mant = mant*10 + uint64(d)
	}
	nd := i - start // mantissa digits, leading zeros included
	exp := 0        // decimal exponent of mant
	if i < n && b[i] == dec {
		i++
		fs := i
		for ; i < n; i++ {
			d := b[i] - '0'
			if d > 9 {
				break
			}
			mant = mant*10 + uint64(d)
		}
		nd += i - fs
		exp = fs - i
	}
	if nd == 0 {
		return 0, notNumber(b)
	}
	trunc := false // a nonzero digit did not fit in mant
	if nd > maxMantissaDigits {
		mant, exp, trunc = longMantissa(b[start:i], dec)
	}
	mantEnd := i
	e := 0 // the written exponent
	if i < n && (b[i] == 'e' || b[i] == 'E') {
		var ok bool
		if e, i, ok = exponent(b, i+1); !ok {
			return 0, numSyntax
		}
	}
	if i != n {
		return 0, notNumber(b)
	}
	if mant == 0 && !trunc {
		if neg {
			return negZero(), numOK
		}
		return 0, numOK
	}
	if !trunc && mant <= 1<<53 {
		if f, ok := exactFloat(mant, exp+e+shift); ok {
			if neg {
				f = -f
			}
			return f, numOK
		}
	}
	return parseSlow(b, dec, shift, mantEnd, e, scratch)
}

// exponent reads the exponent digits of a number from b[i:], after the 'e'
// and with an optional sign, and returns its value (capped in magnitude
// near 1e9), the index after it and whether it held a digit.
func exponent(b []byte, i int) (e, end int, ok bool) {
	n := len(b)
	neg := false
	if i < n && (b[i] == '+' || b[i] == '-') {
		neg = b[i] == '-'
		i++
	}
	start := i
	for ; i < n; i++ {
		d := b[i] - '0'
		if d > 9 {
			break
		}
		if e < 1e9 {
			e = e*10 + int(d)
		}
	}
	if neg {
		e = -e
	}
	return e, i, i > start
}

// exactFloat returns mant·10^exp10 when one correctly rounded multiply or
// divide gives it exactly: mant ≤ 2^53 and the power of ten exact in
// float64 (Clinger's fast path); ok is false otherwise.
func exactFloat(mant uint64, exp10 int) (f float64, ok bool) {
	f = float64(mant)
	switch {
	case exp10 >= 0 && exp10 <= 22:
		return f * exactPow10[exp10], true
	case exp10 < 0 && exp10 >= -22:
		return f / exactPow10[-exp10], true
	case exp10 > 22 && exp10 <= 22+15:
		// mant·10^(exp10−22) may still be an exact integer ≤ 2^53.
		k := uintPow10[exp10-22]
		if hi := mant * k; hi/k == mant && hi <= 1<<53 {
			return float64(hi) * 1e22, true
		}
	}
	return 0, false
}

// longMantissa reads a mantissa of more than 19 digits: leading zeros are
// skipped, the first 19 significant digits kept, and trunc reports a
// nonzero digit beyond them.
func longMantissa(b []byte, dec byte) (mant uint64, exp int, trunc bool) {
	nd := 0
	frac := false
	for _, c := range b {
		if c == dec {
			frac = true
			continue
		}
		d := c - '0'
		if nd < maxMantissaDigits {
			if mant != 0 || d != 0 {
				mant = mant*10 + uint64(d)
				nd++
			}
			if frac {
				exp--
			}
		} else {
			if !frac {
				exp++
			}
			if d != 0 {
				trunc = true
			}
		}
	}
	return mant, exp, trunc
}

// parseSlow hands a validated number to strconv.ParseFloat, rewriting it in
// scratch when the decimal mark or the exponent must change.
func parseSlow(b []byte, dec byte, shift, mantEnd, e int, scratch *[]byte) (float64, numStatus) {
	var s string
	if dec == '.' && shift == 0 {
		s = unsafe.String(&b[0], len(b))
	} else {
		buf := (*scratch)[:0]
		for _, c := range b[:mantEnd] {
			if c == dec {
				c = '.'
			}
			buf = append(buf, c)
		}
		if shift == 0 {
			buf = append(buf, b[mantEnd:]...)
		} else {
			buf = append(buf, 'e')
			buf = strconv.AppendInt(buf, int64(e+shift), 10)
		}
		*scratch = buf
		s = unsafe.String(&buf[0], len(buf))
	}
	f, err := strconv.ParseFloat(s, 64)
	if err != nil {
		// The text is a valid decimal number, so the only failure left is
		// a magnitude beyond float64.
		return 0, numRange
	}
	return f, numOK
}

// notNumber tells NaN and Inf texts from other non-numbers.
func notNumber(b []byte) numStatus {
	if len(b) > 0 && (b[0] == '+' || b[0] == '-') {
		b = b[1:]
	}
	switch {
	case equalFold(b, "nan"):
		return numNaN
	case equalFold(b, "inf"), equalFold(b, "infinity"):
		return numInf
	}
	return numSyntax
}

// equalFold reports whether b equals the lower-case ASCII word w, ignoring
// letter case.
func equalFold(b []byte, w string) bool {
	if len(b) != len(w) {
		return false
	}
	for i := range b {
		c := b[i]
		if 'A' <= c && c <= 'Z' {
			c += 'a' - 'A'
		}
		if c != w[i] {
			return false
		}
	}
	return true
}

var zero float64

// negZero returns −0, which a constant expression cannot produce.
func negZero() float64 { return -zero }
