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
