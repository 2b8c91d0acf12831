package jsonfmt

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"testing"
)

// AppendFloat must write exactly what encoding/json writes for a float64
// (the Go standard library is the reference): the extremes, powers of ten
// around the exponent boundaries at 1e-6 and 1e21, and random values and
// bit patterns.
func TestAppendFloatMatchesEncodingJSON(t *testing.T) {
	check := func(v float64) {
		t.Helper()
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return
		}
		want, err := json.Marshal(v)
		if err != nil {
			t.Fatal(err)
		}
		if got := AppendFloat(nil, v); string(got) != string(want) {
			t.Fatalf("AppendFloat(%v) = %s, encoding/json gives %s", v, got, want)
		}
	}
	for _, v := range []float64{0, math.Copysign(0, -1), 1, -1, 0.1, 1e-6, 9.999999e-7, 1e-7, 1e21, 9.99e20, 1e22,
		123456789.125, -2.5e-12, math.MaxFloat64, -math.MaxFloat64, math.SmallestNonzeroFloat64} {
		check(v)
	}
	for e := -330; e <= 310; e++ {
		p := math.Pow(10, float64(e))
		for _, v := range []float64{p, math.Nextafter(p, 0), math.Nextafter(p, math.Inf(1)), -p, 1.5 * p} {
			check(v)
		}
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for range 100000 {
		check(math.Float64frombits(rng.Uint64()))
		check((rng.Float64() - 0.5) * math.Pow(10, float64(rng.IntN(60)-30)))
	}
}

// Round keeps the given significant digits and drops binary noise; the
// expected values are the decimal arithmetic of the inputs, worked by hand.
func TestRound(t *testing.T) {
	cases := []struct {
		v    float64
		sig  int
		want string
	}{
		{0.1 + 0.187, 12, "0.287"},                 // 0.28700000000000003
		{0.1 + 0.2, 12, "0.3"},                     // 0.30000000000000004
		{1.0 / 3, 12, "0.333333333333"},            //
		{2.0 / 3, 12, "0.666666666667"},            // round half up in the 12th digit
		{123456789.125, 12, "123456789.125"},       // exactly 12 digits
		{1234567890123.5, 12, "1234567890120"},     // integer part beyond 12 digits
		{-9.8999999999999995e-05, 12, "-0.000099"}, // negative, below 1e-4
		{1e-7 * 3, 12, "3e-7"},                     //
		{5e-324, 12, "5e-324"},                     // the smallest subnormal stays
		{math.MaxFloat64, 12, "1.79769313486e+308"},
		{25, 12, "25"},
		{0.287, 3, "0.287"},
		{0.28751, 3, "0.288"}, // (0.2875 is 0.28749999… in binary: 0.287)
	}
	for _, c := range cases {
		got := string(AppendFloat(nil, Round(c.v, c.sig)))
		if got != c.want {
			t.Errorf("Round(%v, %d) written as %s, want %s", c.v, c.sig, got, c.want)
		}
	}
	for _, v := range []float64{0, math.Copysign(0, -1), math.Inf(1), math.Inf(-1)} {
		if r := Round(v, 12); r != v || math.Signbit(r) != math.Signbit(v) {
			t.Errorf("Round(%v) = %v, want it unchanged", v, r)
		}
	}
	if !math.IsNaN(Round(math.NaN(), 12)) {
		t.Error("Round(NaN) is a number")
	}
	// Rounding twice changes nothing: what results.json holds reads back to
	// the same bytes.
	rng := rand.New(rand.NewPCG(3, 4))
	for range 10000 {
		v := (rng.Float64() - 0.5) * math.Pow(10, float64(rng.IntN(40)-20))
		r := Round(v, Digits)
		if Round(r, Digits) != r {
			t.Fatalf("Round is not idempotent at %v", v)
		}
		if len(AppendFloat(nil, math.Abs(r))) > Digits+8 { // digits, point, exponent
			t.Fatalf("%v rounded is written %s", v, AppendFloat(nil, r))
		}
	}
}
