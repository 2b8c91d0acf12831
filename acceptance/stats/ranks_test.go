package stats

import (
	"math"
	"testing"
)

// M. Hollander and D. A. Wolfe, Nonparametric Statistical Methods (1973),
// p. 69 (from memory, as quoted in R's wilcox.test documentation):
// permeability constants of the human chorioamnion at term (x) and at 12 to
// 26 weeks' gestation (y); W = 35 and the exact one-sided p-value for
// "x larger" is 0.1272. Here before = y, after = x, so U = 35 and the
// two-sided exact p is 2 × 0.1272 = 0.2544. SciPy 1.10.1
// stats.mannwhitneyu(x, y) agrees: 0.1272061272 (greater, exact),
// 0.2544122544 (two-sided, exact), 0.2446236051 (two-sided, normal
// approximation with continuity correction).
func TestMannWhitneyHollanderWolfe(t *testing.T) {
	x := []float64{0.80, 0.83, 1.89, 1.04, 1.45, 1.38, 1.91, 1.64, 0.73, 1.46}
	y := []float64{1.15, 0.88, 0.90, 0.74, 1.21}
	r := MannWhitney(y, x)
	if !r.Known() || r.U != 35 || r.RankSum != 35+55 || r.Ties || !r.Exact {
		t.Fatalf("got %+v; want U = 35, rank sum 90, exact, no ties", r)
	}
	if !near(r.P, 0.2544122544, 1e-9) {
		t.Errorf("two-sided exact p = %.10f, want 0.2544122544", r.P)
	}
	if _, upper := exactUTails(10, 5, 35); !near(upper, 0.1272061272, 1e-9) {
		t.Errorf("P(U ≥ 35) = %.10f; Hollander & Wolfe give 0.1272", upper)
	}
	if p := 2 * normalTail(r.Z); !near(p, 0.2446236051, 1e-9) {
		t.Errorf("normal approximation p = %.10f, SciPy gives 0.2446236051", p)
	}
	if !near(r.Superiority, 35.0/50, 1e-15) {
		t.Errorf("superiority %.4f, want 0.7", r.Superiority)
	}
}

func normalTail(z float64) float64 { return 0.5 * math.Erfc(math.Abs(z)/math.Sqrt2) }

// The normal approximation with ties, computed by hand. before =
// {3, 5, 5, 6, 7, 7, 7, 9, 10, 12}, after = {5, 7, 8, 8, 9, 11, 12, 12, 13,
// 14, 15}: the after sample's average ranks sum to 153, so U = 153 − 66 = 87;
// tie groups of sizes 3, 4, 2, 2, 3 give Σ(t³ − t) = 120; the variance is
// (110/12)·(22 − 120/420) = 199.0476, z = (87 − 55 − 0.5)/√199.0476 =
// 2.23272 and p = 0.0255682. SciPy 1.10.1 stats.mannwhitneyu(after, before,
// method="asymptotic") gives 0.025568161854614774.
func TestMannWhitneyTies(t *testing.T) {
	before := []float64{3, 5, 5, 6, 7, 7, 7, 9, 10, 12}
	after := []float64{5, 7, 8, 8, 9, 11, 12, 12, 13, 14, 15}
	r := MannWhitney(before, after)
	if !r.Known() || r.RankSum != 153 || r.U != 87 || !r.Ties || r.Exact {
		t.Fatalf("got %+v; want rank sum 153, U 87, ties, normal approximation", r)
	}
	if !near(r.Z, 31.5/math.Sqrt(110.0/12*(22-120.0/420)), 1e-12) || !near(r.P, 0.025568161854614774, 1e-12) {
		t.Errorf("z = %.6f, p = %.12f; want 2.23272, 0.025568161855", r.Z, r.P)
	}
	// Swapping the samples mirrors U and keeps p.
	s := MannWhitney(after, before)
	if s.U != 110-87 || !near(s.Z, -r.Z, 1e-12) || !near(s.P, r.P, 1e-15) {
		t.Errorf("swapped: U %.1f z %.6f p %.6f", s.U, s.Z, s.P)
	}
}

// Above 20 values per sample the normal approximation is used even without
// ties. Reference: SciPy 1.10.1 stats.mannwhitneyu(after, before,
// method="asymptotic", use_continuity=True): U = 537, p = 0.006336348656887043.
func TestMannWhitneyLarge(t *testing.T) {
	before := []float64{10.002, 10.597, 9.452, 8.219, 9.091, 8.017, 10.12, 12.68, 9.016, 8.759,
		10.98, 10.714, 10.211, 8.139, 9.941, 11.391, 7.312, 9.085, 6.198, 7.421, 6.317, 9.53,
		7.465, 10.543, 10.314}
	after := []float64{10.626, 5.966, 9.923, 10.903, 11.227, 7.94, 10.044, 9.043, 9.382, 13.122,
		9.385, 10.935, 12.769, 9.833, 10.777, 11.221, 11.128, 8.55, 11.152, 13.718, 7.906,
		12.719, 11.239, 9.717, 15.001, 12.525, 8.601, 11.149, 12.153, 10.622}
	r := MannWhitney(before, after)
	if !r.Known() || r.Exact || r.Ties || r.U != 537 || !near(r.P, 0.006336348656887043, 1e-12) {
		t.Errorf("got U %.1f exact %v p %.15f; want U 537, normal, p 0.006336348656887", r.U, r.Exact, r.P)
	}
}

// The exact null distribution of U for m = n = 3 is given by the
// coefficients of the Gaussian binomial [6 choose 3]_q:
// 1, 1, 2, 3, 3, 3, 3, 2, 1, 1 (computed; Mann & Whitney 1947, Table I
// tabulates the same cumulative probabilities). For m = 2, n = 4 the
// coefficients of [6 choose 2]_q are 1, 1, 2, 2, 3, 2, 2, 1, 1.
func TestExactUCounts(t *testing.T) {
	cases := []struct {
		m, n int
		want []float64
	}{
		{3, 3, []float64{1, 1, 2, 3, 3, 3, 3, 2, 1, 1}},
		{2, 4, []float64{1, 1, 2, 2, 3, 2, 2, 1, 1}},
		{4, 2, []float64{1, 1, 2, 2, 3, 2, 2, 1, 1}},
		{1, 1, []float64{1, 1}},
	}
	for _, c := range cases {
		got := exactUCounts(c.m, c.n)
		if len(got) != len(c.want) {
			t.Fatalf("(%d, %d): %v, want %v", c.m, c.n, got, c.want)
		}
		for k := range got {
			if got[k] != c.want[k] {
				t.Errorf("(%d, %d): %v, want %v", c.m, c.n, got, c.want)
				break
			}
		}
	}
	var total float64
	for _, c := range exactUCounts(20, 20) {
		total += c
	}
	if total != 137846528820 { // C(40, 20)
		t.Errorf("20 × 20: %v orderings, want C(40, 20) = 137846528820", total)
	}
}

func TestMannWhitneyUnknown(t *testing.T) {
	cases := []struct {
		name          string
		before, after []float64
	}{
		{"empty before", nil, []float64{1, 2}},
		{"empty after", []float64{1, 2}, nil},
		{"NaN", []float64{1, math.NaN()}, []float64{1, 2}},
		{"all equal", []float64{4, 4}, []float64{4, 4, 4}},
	}
	for _, c := range cases {
		r := MannWhitney(c.before, c.after)
		if r.Known() || r.P != 0 || r.Z != 0 {
			t.Errorf("%s: want unknown without numbers, got %+v", c.name, r)
		}
	}
}
