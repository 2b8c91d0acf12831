package stats

import (
	"math/rand/v2"
	"testing"
)

// benchSeries returns n normal values (fixed seed) that drift by half a
// standard deviation over the series.
func benchSeries(n int) []float64 {
	rng := rand.New(rand.NewPCG(1, 2))
	x := make([]float64, n)
	for i := range x {
		x[i] = 100 + 0.5*float64(i)/float64(n) + rng.NormFloat64()
	}
	return x
}

// An individuals chart over 100,000 points (one metric of a long trend),
// limits from the first 100.
func BenchmarkIndividuals100k(b *testing.B) {
	x := benchSeries(100_000)
	b.ReportAllocs()
	for b.Loop() {
		if c := Individuals(x, 100); !c.Known() {
			b.Fatal(c.Reason)
		}
	}
}

// A rank comparison of two samples of 5,000 values each.
func BenchmarkMannWhitney5k(b *testing.B) {
	x := benchSeries(10_000)
	b.ReportAllocs()
	for b.Loop() {
		if r := MannWhitney(x[:5000], x[5000:]); !r.Known() {
			b.Fatal(r.Reason)
		}
	}
}

// The exact distribution at the largest size it is used for.
func BenchmarkMannWhitneyExact20(b *testing.B) {
	x := benchSeries(40)
	b.ReportAllocs()
	for b.Loop() {
		if r := MannWhitney(x[:20], x[20:]); !r.Exact {
			b.Fatal("not exact")
		}
	}
}
