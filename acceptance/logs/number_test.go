package logs

import (
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"
)

// The reference for every conversion check in this file is the Go standard
// library's strconv.ParseFloat, which returns the IEEE 754 double nearest
// to the decimal value (round half to even), i.e. the correctly rounded
// result (package strconv documentation: "ParseFloat returns the nearest
// floating-point number rounded using IEEE754 unbiased rounding"), as IEEE
// Std 754-2008 §5.12.2 requires of decimal-to-binary conversion. The
// fast-path limits (mantissa ≤ 2^53, |power of ten| ≤ 22) are those of
// W. D. Clinger, "How to read floating point numbers accurately", PLDI 1990.

// wantParse returns what strconv.ParseFloat gives for s, and whether it
// accepts s as a finite number.
func wantParse(t *testing.T, s string) (float64, bool) {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
		return 0, false
	}
	return v, true
}

// sameFloat compares bit patterns, so that −0 and +0 differ.
func sameFloat(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }

func TestParseNumberEdgeCases(t *testing.T) {
	// Edge inputs: fast-path limits (2^53, 10^22), long mantissas, the
	// halfway case 2^53+1, subnormals, the largest and smallest doubles,
	// and values that round up into the next binade.
	cases := []string{
		"0", "-0", "+0", "0.0", "-0.0", "00000", "0e10", "-0e-10", "0.000e999",
		"1", "-1", "+1", "1.", ".5", "-.5", "5.e3", "0.1", "0.2", "0.3",
		"123456789", "1.25", "12.5", "0.001", "1e22", "1e23", "9007199254740992",
		"9007199254740993", "9007199254740994", "9007199254740995",
		"900719925474099.3", "9007199254740993e-3", "1e-22", "1e-23",
		"123456789012345678", "1234567890123456789", "12345678901234567890",
		"123456789012345678901234567890", "0.1234567890123456789012345",
		"1.7976931348623157e308", "1.7976931348623158e308", "4.9e-324",
		"2.2250738585072014e-308", "2.2250738585072011e-308", "1e-320",
		"1e-400", "-1e-400", "2.4703282292062327e-324", "2.4703282292062328e-324",
		"0.000000000000000000000000000001", "100000000000000000000000",
		"1000000000000000000000000000000000000", "3.0e+00", "3E-05", "7e0000012",
		"0.30000000000000004", "0.1e1", "0000001.5000000", "1.00000000000000011102230246251565404236316680908203125",
		"1.00000000000000011102230246251565404236316680908203124",
		"1.00000000000000011102230246251565404236316680908203126",
		"89255.0e-22", "8.9255e-18", "123456789e15", "9007199254740991e15",
		"9007199254740992e15", "9007199254740993e15", "4503599627370497e14",
	}
	var scratch []byte
	for _, s := range cases {
		want, ok := wantParse(t, s)
		if !ok {
			t.Fatalf("edge case %q is not a finite number for strconv", s)
		}
		got, st := parseNumber([]byte(s), '.', 0, &scratch)
		if st != numOK || !sameFloat(got, want) {
			t.Errorf("parseNumber(%q) = %v (%d), strconv.ParseFloat gives %v", s, got, st, want)
		}
		// The same number with a decimal comma.
		c := strings.Replace(s, ".", ",", 1)
		got, st = parseNumber([]byte(c), ',', 0, &scratch)
		if st != numOK || !sameFloat(got, want) {
			t.Errorf("parseNumber(%q, decimal comma) = %v (%d), want %v", c, got, st, want)
		}
	}
}

func TestParseNumberRejects(t *testing.T) {
	// Texts that are not finite decimal numbers in this package's grammar.
	// strconv accepts some of them (hex floats, inf, nan, underscores);
	// the log grammar does not.
	cases := []struct {
		in   string
		want numStatus
	}{
		{"", numEmpty},
		{"abc", numSyntax},
		{".", numSyntax},
		{"+", numSyntax},
		{"-", numSyntax},
		{"e5", numSyntax},
		{"1e", numSyntax},
		{"1e+", numSyntax},
		{"1.2.3", numSyntax},
		{"--1", numSyntax},
		{"1-", numSyntax},
		{"0x1p3", numSyntax},
		{"1_000", numSyntax},
		{"1,5", numSyntax}, // a comma with the decimal point mark
		{"1 5", numSyntax},
		{"12abc", numSyntax},
		{"NaN", numNaN},
		{"nan", numNaN},
		{"-NaN", numNaN},
		{"Inf", numInf},
		{"-inf", numInf},
		{"+Infinity", numInf},
		{"1e309", numRange},
		{"-1.8e308", numRange},
		{"1e999999999999", numRange},
	}
	var scratch []byte
	for _, c := range cases {
		if _, st := parseNumber([]byte(c.in), '.', 0, &scratch); st != c.want {
			t.Errorf("parseNumber(%q) status %d, want %d", c.in, st, c.want)
		}
	}
	if _, st := parseNumber([]byte("1.5"), ',', 0, &scratch); st != numSyntax {
		t.Errorf("a decimal point with the decimal comma mark: status %d, want syntax error", st)
	}
}

// randomDecimal writes a random number in the accepted grammar.
func randomDecimal(r *rand.Rand) string {
	var b strings.Builder
	switch r.IntN(3) {
	case 0:
		b.WriteByte('-')
	case 1:
		if r.IntN(4) == 0 {
			b.WriteByte('+')
		}
	}
	intDigits := r.IntN(22)
	fracDigits := r.IntN(22)
	if intDigits == 0 && fracDigits == 0 {
		intDigits = 1
	}
	for range intDigits {
		b.WriteByte(byte('0' + r.IntN(10)))
	}
	if fracDigits > 0 || r.IntN(8) == 0 {
		b.WriteByte('.')
	}
	for range fracDigits {
		b.WriteByte(byte('0' + r.IntN(10)))
	}
	if r.IntN(3) == 0 {
		b.WriteByte("eE"[r.IntN(2)])
		switch r.IntN(3) {
		case 0:
			b.WriteByte('-')
		case 1:
			b.WriteByte('+')
		}
		b.WriteString(strconv.Itoa(r.IntN(340)))
	}
	return b.String()
}

func TestParseNumberRandom(t *testing.T) {
	r := rand.New(rand.NewPCG(2025, 181))
	var scratch []byte
	check := func(s string) {
		want, ok := wantParse(t, s)
		got, st := parseNumber([]byte(s), '.', 0, &scratch)
		switch {
		case ok && (st != numOK || !sameFloat(got, want)):
			t.Fatalf("parseNumber(%q) = %v (%d), strconv.ParseFloat gives %v", s, got, st, want)
		case !ok && st != numRange:
			t.Fatalf("parseNumber(%q) status %d; strconv overflows, want out of range", s, st)
		}
	}
	for range 200000 {
		check(randomDecimal(r))
	}
	// Shortest and fixed-precision renderings of random doubles: every
	// finite bit pattern, and values typical of rig logs.
	for range 100000 {
		v := math.Float64frombits(r.Uint64())
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		check(strconv.FormatFloat(v, 'g', -1, 64))
		check(strconv.FormatFloat(v, 'e', r.IntN(25), 64))
		u := (r.Float64() - 0.5) * math.Pow(10, float64(r.IntN(12)-4))
		check(strconv.FormatFloat(u, 'f', r.IntN(12), 64))
		check(strconv.FormatFloat(u, 'f', -1, 64))
	}
}

func TestParseNumberShift(t *testing.T) {
	// A shift by k must equal strconv.ParseFloat of the same digits with the
	// exponent raised by k: time written in ms or µs becomes the correctly
	// rounded number of seconds.
	r := rand.New(rand.NewPCG(7, 1e6))
	var scratch []byte
	fixed := []string{"12.5", "0.1", "1", "999999.999", "1e3", "-2.5E-2", "123456789012345678901"}
	for i := range 20000 {
		var s string
		if i < len(fixed) {
			s = fixed[i]
		} else {
			s = randomDecimal(r)
		}
		for _, shift := range []int{-3, -6, -9, 3} {
			mant, exp := s, 0
			if j := strings.IndexAny(s, "eE"); j >= 0 {
				mant = s[:j]
				exp, _ = strconv.Atoi(s[j+1:])
			}
			ref := mant + "e" + strconv.Itoa(exp+shift)
			want, ok := wantParse(t, ref)
			got, st := parseNumber([]byte(s), '.', shift, &scratch)
			if ok && (st != numOK || !sameFloat(got, want)) {
				t.Fatalf("parseNumber(%q, shift %d) = %v (%d), strconv.ParseFloat(%q) gives %v", s, shift, got, st, ref, want)
			}
			c := strings.Replace(s, ".", ",", 1)
			got, st = parseNumber([]byte(c), ',', shift, &scratch)
			if ok && (st != numOK || !sameFloat(got, want)) {
				t.Fatalf("parseNumber(%q, decimal comma, shift %d) = %v (%d), want %v", c, shift, got, st, want)
			}
		}
	}
}

func TestParseNumberAllocations(t *testing.T) {
	// Both the fast path and the strconv fallback run without allocating.
	inputs := [][]byte{
		[]byte("12.345"), []byte("0.1234567890123456789012"), []byte("1e-300"),
		[]byte("12,5"), []byte("1,234567890123456789012"),
	}
	scratch := make([]byte, 0, 64)
	allocs := testing.AllocsPerRun(100, func() {
		for i, in := range inputs {
			dec := byte('.')
			if i >= 3 {
				dec = ','
			}
			if _, st := parseNumber(in, dec, -3, &scratch); st != numOK {
				t.Fatalf("parseNumber(%q) failed: %d", in, st)
			}
			if _, st := parseNumber(in, dec, 0, &scratch); st != numOK {
				t.Fatalf("parseNumber(%q) failed: %d", in, st)
			}
		}
	})
	if allocs != 0 {
		t.Errorf("parseNumber allocates %v times per run, want 0", allocs)
	}
}
