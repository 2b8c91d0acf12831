package stats

import (
	"math"
	"testing"
)

func near(got, want, tol float64) bool { return math.Abs(got-want) <= tol }

// The NIST/SEMATECH e-Handbook of Statistical Methods §1.3.5.3 (two-sample
// t-test, AUTO83B miles-per-gallon data, U.S. cars against Japanese cars;
// summary statistics and results from memory, re-derived from the summary
// statistics in testdata/references.md §9): sample 1 (U.S.) n = 249,
// x̄ = 20.14458, s = 6.41470; sample 2 (Japan) n = 79, x̄ = 30.48101,
// s = 6.10771. Unequal variances: T = −12.946, ν = 136.87; equal variances:
// pooled s = 6.34260, T = −12.62059, ν = 326. The handbook's T is
// (x̄₁ − x̄₂)/SE with sample 1 = U.S.; here the difference is after − before,
// so with before = U.S. and after = Japan the sign is reversed.
func TestMeansNIST(t *testing.T) {
	us := SummaryOf(249, 20.14458, 6.41470)
	japan := SummaryOf(79, 30.48101, 6.10771)
	cases := []struct {
		name    string
		got     MeanDifference
		t, df   float64
		dfTol   float64
		pooledS float64
	}{
		{"welch", Welch(us, japan, 0.95), 12.946, 136.87, 0.005, 0},
		{"pooled", Pooled(us, japan, 0.95), 12.62059, 326, 0, 6.34260},
	}
	for _, c := range cases {
		g := c.got
		if !g.Known() {
			t.Fatalf("%s: unknown: %s", c.name, g.Reason)
		}
		if !near(g.T, c.t, 0.0005) || !near(g.DF, c.df, c.dfTol) {
			t.Errorf("%s: T = %.5f, ν = %.4f; NIST §1.3.5.3 gives %.5f, %.2f", c.name, g.T, g.DF, c.t, c.df)
		}
		if !near(g.Difference, 30.48101-20.14458, 1e-9) {
			t.Errorf("%s: difference %.5f, want after − before = 10.33643", c.name, g.Difference)
		}
		if c.pooledS > 0 {
			sp := g.StdErr / math.Sqrt(1.0/249+1.0/79)
			if !near(sp, c.pooledS, 5e-5) {
				t.Errorf("pooled s = %.5f, NIST §1.3.5.3 gives %.5f", sp, c.pooledS)
			}
		}
		// SciPy 1.10.1 stats.ttest_ind_from_stats on the same summaries:
		// two-sided p = 1.5709e-25 (Welch), 5.2732e-30 (pooled).
		wantP := map[string]float64{"welch": 1.5709046e-25, "pooled": 5.2732183e-30}[c.name]
		if math.Abs(g.P/wantP-1) > 1e-4 {
			t.Errorf("%s: p = %.6g, SciPy gives %.6g", c.name, g.P, wantP)
		}
	}
}

// A computed case. before = {10.2, 9.8, 10.5, 10.1, 9.9, 10.4} (mean 10.15),
// after = {9.6, 9.9, 9.4, 9.7, 9.5, 9.8, 9.3, 9.6} (mean 9.6), so the
// difference after − before is −0.55. By hand: s_b² = 0.071, s_a² = 0.0371429,
// Welch SE = √(0.071/6 + 0.0371429/8) = 0.132286, ν = 8.79487; pooled
// s_p² = (5·0.071 + 7·0.0371429)/12 = 0.0512500, SE = 0.126174, ν = 12.
// Reference: SciPy 1.10.1 stats.ttest_ind(after, before) with the interval
// from stats.t.ppf(0.975, ν): the values below.
func TestMeansComputed(t *testing.T) {
	before := Describe([]float64{10.2, 9.8, 10.5, 10.1, 9.9, 10.4})
	after := Describe([]float64{9.6, 9.9, 9.4, 9.7, 9.5, 9.8, 9.3, 9.6})
	cases := []struct {
		got                 MeanDifference
		t, df, p, low, high float64
	}{
		{Welch(before, after, 0.95), -4.157609203, 8.794871795, 0.00258267471, -0.8503226074, -0.2496773926},
		{Pooled(before, after, 0.95), -4.359024032, 12, 0.0009299587863, -0.8249117801, -0.2750882199},
	}
	for _, c := range cases {
		g := c.got
		if !near(g.Difference, -0.55, 1e-12) || !near(g.T, c.t, 1e-8) || !near(g.DF, c.df, 1e-8) ||
			math.Abs(g.P/c.p-1) > 1e-6 || !near(g.Low, c.low, 1e-8) || !near(g.High, c.high, 1e-8) {
			t.Errorf("%s: got d=%.10g t=%.10g ν=%.10g p=%.10g [%.10g, %.10g]; want t=%.10g ν=%.10g p=%.10g [%.10g, %.10g]",
				g.Method, g.Difference, g.T, g.DF, g.P, g.Low, g.High, c.t, c.df, c.p, c.low, c.high)
		}
	}
}

func TestMeansUnknown(t *testing.T) {
	ok := Describe([]float64{1, 2, 3})
	flat := Describe([]float64{2, 2, 2})
	cases := []struct {
		name          string
		before, after Summary
		level         float64
	}{
		{"one value", Describe([]float64{1}), ok, 0.95},
		{"empty after", ok, Describe(nil), 0.95},
		{"non-finite", ok, Describe([]float64{1, math.NaN()}), 0.95},
		{"level 1", ok, ok, 1},
		{"level NaN", ok, ok, math.NaN()},
		{"no spread", flat, flat, 0.95},
	}
	for _, c := range cases {
		for _, d := range []MeanDifference{Welch(c.before, c.after, c.level), Pooled(c.before, c.after, c.level)} {
			if d.Known() || d.Reason == "" {
				t.Errorf("%s/%s: want unknown with a reason, got %+v", c.name, d.Method, d)
			}
			if d.T != 0 || d.P != 0 || d.Low != 0 || d.High != 0 {
				t.Errorf("%s/%s: numbers leak from an unknown result: %+v", c.name, d.Method, d)
			}
		}
	}
}

// Describe against hand computation: {2, 4, 4, 4, 5, 5, 7, 9} has mean 5 and
// sum of squared deviations 32, so s = √(32/7) = 2.13809.
func TestDescribe(t *testing.T) {
	s := Describe([]float64{2, 4, 4, 4, 5, 5, 7, 9})
	if !s.Known() || s.N != 8 || s.Mean != 5 || !near(s.SD, math.Sqrt(32.0/7), 1e-14) {
		t.Errorf("Describe = %+v, want n 8, mean 5, sd %.6f", s, math.Sqrt(32.0/7))
	}
	if one := Describe([]float64{3}); one.Known() || one.Mean != 3 {
		t.Errorf("one value: %+v, want unknown SD with mean 3", one)
	}
}

// Quantile against Hyndman & Fan (1996) definition 7 worked by hand on
// {1, 2, 3, 4, 10}: h = 4p; p = 0.25 → 2, p = 0.9 → 4 + 0.6·6 = 7.6, p = 0.5 → 3.
func TestQuantile(t *testing.T) {
	x := []float64{1, 2, 3, 4, 10}
	cases := []struct {
		p, want float64
		ok      bool
	}{
		{0, 1, true}, {0.25, 2, true}, {0.5, 3, true}, {0.9, 7.6, true}, {1, 10, true},
		{-0.1, 0, false}, {1.1, 0, false}, {math.NaN(), 0, false},
	}
	for _, c := range cases {
		got, ok := Quantile(x, c.p)
		if ok != c.ok || !near(got, c.want, 1e-12) {
			t.Errorf("Quantile(%v) = %v, %v; want %v, %v", c.p, got, ok, c.want, c.ok)
		}
	}
	if _, ok := Quantile([]float64{3, 1}, 0.5); ok {
		t.Error("unsorted input accepted")
	}
	if _, ok := Quantile(nil, 0.5); ok {
		t.Error("empty input accepted")
	}
}
