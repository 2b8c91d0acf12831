package stats

import (
	"math"
	"testing"
)

// R. G. Newcombe, "Two-sided confidence intervals for the single proportion:
// comparison of seven methods", Statistics in Medicine 17 (1998) 857–872,
// Table I, method 3 (Wilson score, no continuity correction), 95 %; from
// memory. The same limits recur in the companion paper's difference examples.
func TestWilsonNewcombeExamples(t *testing.T) {
	cases := []struct {
		x, n      int
		low, high float64
	}{
		{81, 263, 0.2553, 0.3662},
		{15, 148, 0.0624, 0.1605},
		{0, 20, 0, 0.1611},
		{1, 29, 0.0061, 0.1718},
	}
	for _, c := range cases {
		p := Wilson(c.x, c.n, 0.95)
		if !p.Known() || !near(p.Low, c.low, 5e-5) || !near(p.High, c.high, 5e-5) {
			t.Errorf("Wilson(%d/%d) = [%.4f, %.4f]; Newcombe (1998) gives [%.4f, %.4f]",
				c.x, c.n, p.Low, p.High, c.low, c.high)
		}
	}
}

// Wilson (1927) defines the interval as the set of p with
// |p̂ − p| ≤ z·√(p(1 − p)/n). Solving that inequality by bisection, without
// the closed form, must give the same limits.
func TestWilsonDefinition(t *testing.T) {
	for _, c := range []struct {
		x, n  int
		level float64
	}{{0, 5, 0.95}, {1, 5, 0.95}, {7, 12, 0.9}, {49, 50, 0.99}, {50, 50, 0.95}, {333, 1000, 0.95}} {
		p := Wilson(c.x, c.n, c.level)
		z := normalQuantile(c.level)
		phat := float64(c.x) / float64(c.n)
		inside := func(q float64) bool {
			return math.Abs(phat-q) <= z*math.Sqrt(q*(1-q)/float64(c.n))
		}
		low, high := bisectEdge(inside, 0, phat), bisectEdge(inside, 1, phat)
		if !near(p.Low, low, 1e-12) || !near(p.High, high, 1e-12) {
			t.Errorf("Wilson(%d/%d, %v) = [%.12f, %.12f]; the defining inequality gives [%.12f, %.12f]",
				c.x, c.n, c.level, p.Low, p.High, low, high)
		}
	}
}

// bisectEdge finds the boundary of the set where inside holds, between an
// outer point (outside unless it is the boundary itself) and an inner point.
func bisectEdge(inside func(float64) bool, outer, inner float64) float64 {
	if inside(outer) {
		return outer
	}
	for i := 0; i < 200; i++ {
		mid := (outer + inner) / 2
		if inside(mid) {
			inner = mid
		} else {
			outer = mid
		}
	}
	return inner
}

// R. G. Newcombe, "Interval estimation for the difference between
// independent proportions: comparison of eleven methods", Statistics in
// Medicine 17 (1998) 873–890, Table II, method 10 (hybrid score), 95 %;
// from memory. Newcombe's θ = p₁ − p₂ is after − before here.
func TestNewcombeDifferenceExamples(t *testing.T) {
	cases := []struct {
		name           string
		xa, na, xb, nb int
		low, high      float64
	}{
		{"(a) 56/70 − 48/80", 56, 70, 48, 80, 0.0524, 0.3339},
		{"(b) 9/10 − 3/10", 9, 10, 3, 10, 0.1705, 0.8090},
		{"(d) 5/56 − 0/29", 5, 56, 0, 29, -0.0381, 0.1926},
		{"(e) 0/10 − 0/20", 0, 10, 0, 20, -0.1611, 0.2775},
		{"(f) 0/10 − 0/10", 0, 10, 0, 10, -0.2775, 0.2775},
		{"(g) 10/10 − 0/20", 10, 10, 0, 20, 0.6791, 1},
		{"(h) 10/10 − 0/10", 10, 10, 0, 10, 0.6075, 1},
	}
	for _, c := range cases {
		d := NewcombeDifference(c.xb, c.nb, c.xa, c.na, 0.95)
		want := float64(c.xa)/float64(c.na) - float64(c.xb)/float64(c.nb)
		if !d.Known() || !near(d.Difference, want, 1e-15) ||
			!near(d.Low, c.low, 5e-5) || !near(d.High, c.high, 5e-5) {
			t.Errorf("%s: %.4f [%.4f, %.4f]; Newcombe method 10 gives [%.4f, %.4f]",
				c.name, d.Difference, d.Low, d.High, c.low, c.high)
		}
	}
}

func TestProportionUnknown(t *testing.T) {
	cases := []struct {
		name  string
		x, n  int
		level float64
	}{
		{"no trials", 0, 0, 0.95},
		{"count above n", 6, 5, 0.95},
		{"negative count", -1, 5, 0.95},
		{"level 0", 1, 5, 0},
		{"level NaN", 1, 5, math.NaN()},
	}
	for _, c := range cases {
		p := Wilson(c.x, c.n, c.level)
		if p.Known() || p.Low != 0 || p.High != 0 {
			t.Errorf("%s: want unknown without numbers, got %+v", c.name, p)
		}
		d := NewcombeDifference(3, 10, c.x, c.n, c.level)
		if d.Known() || d.Low != 0 || d.High != 0 || d.Reason == "" {
			t.Errorf("%s: difference: want unknown without numbers, got %+v", c.name, d)
		}
	}
}
