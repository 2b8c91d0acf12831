package stats

import (
	"math"
	"testing"
)

// D. C. Montgomery, Introduction to Statistical Quality Control, 6th ed.
// (from memory): §8.3 process centring, USL = 62, LSL = 38, μ = 53, σ = 2
// gives Cp = 2.0, Cpu = 1.5, Cpl = 2.5, Cpk = 1.5; the hard-bake flow-width
// example of chapter 6 (LSL = 1.00, USL = 2.00 microns, σ̂ = R̄/d₂ = 0.1398)
// gives Cp = 1.192; the glass-bottle bursting-strength example of §8.3
// (LSL = 200 psi, x̄ = 264, s = 32) gives the one-sided Cpl = 0.67.
func TestIndicesMontgomery(t *testing.T) {
	centring := IndicesFrom(53, 2, SigmaPooledSubgroups, TwoSided(38, 62))
	hardBake := IndicesFrom(1.5, 0.1398, SigmaPooledSubgroups, TwoSided(1, 2))
	bottles := IndicesFrom(264, 32, SigmaPooledSubgroups, LowerOnly(200))
	checks := []struct {
		name      string
		got       Index
		want, tol float64
	}{
		{"§8.3 Cp", centring.Spread, 2.0, 1e-12},
		{"§8.3 Cpu", centring.Upper, 1.5, 1e-12},
		{"§8.3 Cpl", centring.Lower, 2.5, 1e-12},
		{"§8.3 Cpk", centring.Min, 1.5, 1e-12},
		{"hard-bake Cp", hardBake.Spread, 1.192, 5e-4},
		{"bottles Cpl", bottles.Lower, 0.67, 5e-3},
		{"bottles Cpk (one-sided)", bottles.Min, 0.67, 5e-3},
	}
	for _, c := range checks {
		if !c.got.Known() || !near(c.got.Value, c.want, c.tol) {
			t.Errorf("%s = %+v; Montgomery gives %v", c.name, c.got, c.want)
		}
	}
	if bottles.Spread.Known() || bottles.Upper.Known() {
		t.Errorf("one-sided limit gave two-sided indices: %+v", bottles)
	}
	if s, _, _, k := centring.Names(); s != "Cp" || k != "Cpk" {
		t.Errorf("names %s %s", s, k)
	}
}

// c₄ against the table of Montgomery's Appendix VI (from memory).
func TestC4(t *testing.T) {
	table := map[int]float64{2: 0.7979, 3: 0.8862, 4: 0.9213, 5: 0.9400, 6: 0.9515, 10: 0.9727, 25: 0.9896}
	for n, want := range table {
		if got := c4(n); !near(got, want, 5e-5) {
			t.Errorf("c4(%d) = %.5f; the table gives %.4f", n, got, want)
		}
	}
}

// Hand computations for each σ estimate.
//
// Overall: {2, 4, 4, 4, 5, 5, 7, 9}, mean 5, s = √(32/7) = 2.138090,
// limits 0 and 12: Pp = 12/6s = 0.935414, Ppl = 5/3s = 0.779512,
// Ppu = 7/3s = 1.091317, Ppk = 0.779512.
//
// Subgroups {9, 10, 11}, {10, 12, 14}, {8, 10}: sᵢ² = 1, 4, 2; ν = 5;
// s_p = √((2·1 + 2·4 + 1·2)/5) = √2.4 = 1.549193; σ̂ = s_p/c₄(6) =
// 1.549193/0.951533 = 1.628100; grand mean 84/8 = 10.5; limits 5 and 17:
// Cp = 12/6σ̂ = 1.228426, Cpl = 5.5/3σ̂ = 1.126059, Cpu = 6.5/3σ̂ = 1.330797.
//
// Individuals {10, 12, 11, 14, 13}: moving ranges 2, 1, 3, 1, MR̄ = 1.75,
// σ̂ = 1.75/1.128 = 1.551418, mean 12; upper limit 16 only:
// Cpu = Cpk = 4/3σ̂ = 0.859429.
func TestIndicesHand(t *testing.T) {
	perf := Performance([]float64{2, 4, 4, 4, 5, 5, 7, 9}, TwoSided(0, 12))
	sub := CapabilitySubgroups([][]float64{{9, 10, 11}, {10, 12, 14}, {8, 10}}, TwoSided(5, 17))
	ind := CapabilityIndividuals([]float64{10, 12, 11, 14, 13}, UpperOnly(16))
	checks := []struct {
		name string
		got  Index
		want float64
	}{
		{"Pp", perf.Spread, 0.935414}, {"Ppl", perf.Lower, 0.779512},
		{"Ppu", perf.Upper, 1.091317}, {"Ppk", perf.Min, 0.779512},
		{"Cp subgroups", sub.Spread, 1.228426}, {"Cpl subgroups", sub.Lower, 1.126059},
		{"Cpu subgroups", sub.Upper, 1.330797}, {"Cpk subgroups", sub.Min, 1.126059},
		{"Cpu individuals", ind.Upper, 0.859429}, {"Cpk individuals", ind.Min, 0.859429},
	}
	for _, c := range checks {
		if !c.got.Known() || !near(c.got.Value, c.want, 5e-6) {
			t.Errorf("%s = %+v, want %.6f", c.name, c.got, c.want)
		}
	}
	if perf.Source != SigmaOverall || perf.N != 8 || perf.SubgroupMax != 0 {
		t.Errorf("performance labels %+v", perf)
	}
	if sub.Source != SigmaPooledSubgroups || sub.N != 8 || sub.Subgroups != 3 ||
		sub.SubgroupMin != 2 || sub.SubgroupMax != 3 || !near(sub.Sigma, 1.628100, 5e-6) {
		t.Errorf("subgroup labels %+v", sub)
	}
	if ind.Source != SigmaMovingRange || ind.Subgroups != 4 || ind.SubgroupMax != 1 ||
		ind.Spread.Known() || ind.Lower.Known() || ind.Spread.Reason == "" {
		t.Errorf("individuals labels %+v", ind)
	}
	if s, l, u, k := perf.Names(); s != "Pp" || l != "Ppl" || u != "Ppu" || k != "Ppk" {
		t.Errorf("performance names %s %s %s %s", s, l, u, k)
	}
}

func TestIndicesUnknown(t *testing.T) {
	lim := TwoSided(0, 10)
	cases := []struct {
		name string
		got  Indices
	}{
		{"one value", Performance([]float64{5}, lim)},
		{"no values", Performance(nil, lim)},
		{"no spread", Performance([]float64{5, 5, 5}, lim)},
		{"no limits", Performance([]float64{4, 5, 6}, SpecLimits{})},
		{"crossed limits", Performance([]float64{4, 5, 6}, TwoSided(10, 0))},
		{"NaN limit", Performance([]float64{4, 5, 6}, UpperOnly(math.NaN()))},
		{"one individual", CapabilityIndividuals([]float64{5}, lim)},
		{"flat individuals", CapabilityIndividuals([]float64{5, 5, 5}, lim)},
		{"NaN individual", CapabilityIndividuals([]float64{5, math.Inf(1)}, lim)},
		{"no subgroups", CapabilitySubgroups(nil, lim)},
		{"subgroup of one", CapabilitySubgroups([][]float64{{4, 5}, {6}}, lim)},
		{"flat subgroups", CapabilitySubgroups([][]float64{{4, 4}, {6, 6}}, lim)},
	}
	for _, c := range cases {
		g := c.got
		if g.Known() || g.Reason == "" || g.Min.Value != 0 || g.Spread.Value != 0 || g.Sigma != 0 ||
			g.Min.Known() || g.Spread.Known() || g.Lower.Known() || g.Upper.Known() {
			t.Errorf("%s: want not computable with a reason and no numbers, got %+v", c.name, g)
		}
	}
}
