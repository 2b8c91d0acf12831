package digest

import (
	"github.com/stepgate/stepgate/acceptance/spec"
	"math"
	"strings"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/metrics"
)

// TestCapable checks the capability indices against hand-worked values of
// the formulas of ISO 22514-2 and the AIAG SPC reference manual
// (references §6): Cp = (USL − LSL)/(6σ), Cpk = min(USL − μ, μ − LSL)/(3σ),
// Cpu = (USL − μ)/(3σ), Cpl = (μ − LSL)/(3σ).
func TestCapable(t *testing.T) {
	tests := []struct {
		name      string
		mu, sigma float64
		n         int
		lsl, usl  *float64
		index     string
		want, cp  float64 // NaN: unknown
		why       string
		indic     bool
	}{
		// μ = 10, σ = 1, limits 7 … 16: Cp = 9/6 = 1.5, Cpk = min(6, 3)/3 = 1.
		{"two-sided, off centre", 10, 1, 30, ptr(7), ptr(16), "Cpk", 1, 1.5, "", false},
		// centred 4 … 16: Cp = Cpk = 12/6 = 2.
		{"two-sided, centred", 10, 1, 50, ptr(4), ptr(16), "Cpk", 2, 2, "", false},
		// mean outside the limits gives a negative Cpk: min(−1, 4)/3.
		{"mean above the maximum", 10, 1, 40, ptr(6), ptr(9), "Cpk", -1.0 / 3, 0.5, "", false},
		// max 16 only: Cpu = (16 − 10)/(3·2) = 1.
		{"maximum only", 10, 2, 29, nil, ptr(16), "Cpu", 1, math.NaN(), "", true},
		// min 7 only: Cpl = (10 − 7)/(3·0.5) = 2.
		{"minimum only", 10, 0.5, 10, ptr(7), nil, "Cpl", 2, math.NaN(), "", true},
		{"σ = 0", 10, 0, 40, ptr(7), ptr(16), "Cpk", math.NaN(), math.NaN(), "σ = 0", false},
		{"one value", 10, 0, 1, nil, ptr(16), "Cpu", math.NaN(), math.NaN(), "needs at least 2", true},
		{"no limit", 10, 1, 40, nil, nil, "", math.NaN(), math.NaN(), "no limit", false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c := capable(tc.mu, tc.sigma, tc.n, tc.lsl, tc.usl)
			if c.Index != tc.index || c.Indicative != tc.indic {
				t.Errorf("index %q indicative %v, want %q %v", c.Index, c.Indicative, tc.index, tc.indic)
			}
			check := func(what string, v metrics.Value, want float64) {
				if math.IsNaN(want) {
					if v.OK || v.Why == "" {
						t.Errorf("%s = %+v, want unknown with a reason", what, v)
					}
					return
				}
				if !v.OK || math.Abs(v.V-want) > 1e-12 {
					t.Errorf("%s = %+v, want %v", what, v, want)
				}
			}
			check(tc.index, c.Value, tc.want)
			check("Cp", c.Cp, tc.cp)
			if tc.why != "" && !strings.Contains(c.Value.Why, tc.why) {
				t.Errorf("reason %q, want it to contain %q", c.Value.Why, tc.why)
			}
		})
	}
}

// TestStatistics runs the statistics over steps with known values. The
// data 2, 4, 4, 4, 5, 5, 7, 9 have mean 5 and Σ(x − μ)² = 32, so the
// sample standard deviation (n − 1) is √(32/7) = 2.1381 (definition of the
// sample standard deviation; hand-worked).
func TestStatistics(t *testing.T) {
	limits := map[metrics.Name]spec.Limit{
		metrics.Overshoot:    {Max: ptr(10)},
		metrics.RiseTime:     {Min: ptr(0.5), Max: ptr(2)},
		metrics.SettlingTime: {Max: ptr(3)},
	}
	var units []acceptance.UnitResult
	for i, v := range []float64{2, 4, 4, 4, 5, 5, 7, 9} {
		s := step(1, limits, map[metrics.Name]float64{"overshoot_pct": v, "rise_time_s": 1, "settling_time_s": 1 + float64(i)/10})
		s.Predicted = &acceptance.Prediction{Kind: "ideal", Metrics: acceptance.MetricsOf(map[metrics.Name]metrics.Value{"overshoot_pct": metrics.Known(4)})}
		units = append(units, unit(string(rune('A'+i)), s))
	}
	// A step whose settling time was not measured counts in Steps, not N.
	units = append(units, unit("Z", step(1, limits, map[metrics.Name]float64{"overshoot_pct": 5, "rise_time_s": 1}, "settling_time_s")))
	d, err := New(batch(limits, units...))
	if err != nil {
		t.Fatal(err)
	}
	if len(d.Stats) != 3 || d.Stats[0].Metric != "rise_time_s" || d.Stats[1].Metric != "overshoot_pct" || d.Stats[2].Metric != "settling_time_s" {
		t.Fatalf("stats for %v, want the limited metrics in report order", d.Stats)
	}
	os := d.Stats[1]
	// Nine steps: the eight above and Z's 5, mean still 5, Σ(x − μ)² = 32.
	if os.N != 9 || os.Steps != 9 || os.Mean.V != 5 || math.Abs(os.SD.V-math.Sqrt(32.0/8)) > 1e-12 {
		t.Errorf("overshoot n %d/%d mean %v sd %v, want 9/9, 5, %v", os.N, os.Steps, os.Mean, os.SD, math.Sqrt(32.0/8))
	}
	if os.Lowest.V != 2 || os.Highest.V != 9 || os.Label != "overshoot" || os.Unit != "%" {
		t.Errorf("overshoot range %v … %v label %q unit %q", os.Lowest, os.Highest, os.Label, os.Unit)
	}
	// Predicted over the 8 steps that have a prediction: 4; gap = mean of
	// (x − 4) over them = 40/8 − 4 = 1.
	if os.PredN != 8 || os.Predicted.V != 4 || math.Abs(os.Gap.V-1) > 1e-12 {
		t.Errorf("predicted %v over %d, gap %v; want 4 over 8, gap 1", os.Predicted, os.PredN, os.Gap)
	}
	// Cpu = (10 − 5)/(3·2) = 0.8333, on 9 steps: indicative.
	if c := os.Capability; c.Index != "Cpu" || math.Abs(c.Value.V-5.0/6) > 1e-12 || !c.Indicative {
		t.Errorf("capability %+v, want Cpu 0.8333 indicative", c)
	}
	// Rise time: every step 1 s, so σ = 0 and no index.
	if c := d.Stats[0].Capability; c.Value.OK || !strings.Contains(c.Value.Why, "σ = 0") || c.Cp.OK {
		t.Errorf("rise-time capability %+v, want unknown: σ = 0", c)
	}
	st := d.Stats[2]
	if st.N != 8 || st.Steps != 9 || st.Predicted.OK || st.Predicted.Why == "" {
		t.Errorf("settling n %d of %d, predicted %+v", st.N, st.Steps, st.Predicted)
	}
	// The histogram holds every measured value once: n = 9 gives
	// ⌈2√9⌉ = 6, raised to MinBins = 8 bins of width 7/8 over [2, 9] (the
	// limit 10 lies outside the data, so no edge moves).
	wantCounts := []int{1, 0, 3, 3, 0, 1, 0, 1}
	if len(os.Bins) != 8 || os.Bins[0].Lo != 2 || os.Bins[7].Hi != 9 || os.RightClosed {
		t.Fatalf("bins %v, want 8 bins over [2, 9]", os.Bins)
	}
	for i, bn := range os.Bins {
		if bn.Count != wantCounts[i] || bn.Outside {
			t.Errorf("bin %d [%v, %v) holds %d (outside %v), want %d inside", i, bn.Lo, bn.Hi, bn.Count, bn.Outside, wantCounts[i])
		}
	}
	if got := os.Limit(Num); got != "≤ 10" {
		t.Errorf("limit %q", got)
	}
	if got := d.Stats[0].Limit(Num); got != "0.5 … 2" {
		t.Errorf("limit %q", got)
	}
	// Any metric, limited or not, can be looked up; every step carries every
	// metric, so a metric never measured is found with n = 0.
	if m, _ := d.Metric("peak_time_s"); m.N != 0 {
		t.Errorf("peak time was never measured, got %+v", m)
	}
}

// TestStatisticsUnknown: one measured step has no standard deviation, and
// a metric measured nowhere has unknown statistics, not zeros.
func TestStatisticsUnknown(t *testing.T) {
	limits := map[metrics.Name]spec.Limit{"overshoot_pct": {Max: ptr(10)}, "settling_time_s": {Max: ptr(1)}}
	d, err := New(batch(limits, unit("A", step(1, limits, map[metrics.Name]float64{"overshoot_pct": 3}, "settling_time_s"))))
	if err != nil {
		t.Fatal(err)
	}
	os, st := d.Stats[0], d.Stats[1]
	if os.N != 1 || !os.Mean.OK || os.SD.OK || !strings.Contains(os.SD.Why, "at least 2") || os.Capability.Value.OK {
		t.Errorf("one step: %+v", os)
	}
	if st.N != 0 || st.Mean.OK || st.Lowest.OK || st.Mean.Why != "no step was measured" || len(st.Bins) != 0 || st.Capability.Value.OK {
		t.Errorf("nothing measured: %+v", st)
	}
}

// TestBins checks the histogram layout on the values 0, 1, …, 10 with a
// limit inside them. Eleven values give ⌈2√11⌉ = 7, raised to 8 bins of
// width 1.25; one edge moves onto the limit, so no bin holds values on both
// sides of it, and a value on a maximum (which passes) lies below it.
func TestBins(t *testing.T) {
	tests := []struct {
		name     string
		lim      spec.Limit
		values   []float64
		lo       float64 // first edge
		counts   []int
		outside  []bool
		rightCls bool
	}{
		{"maximum 4.5", spec.Limit{Max: ptr(4.5)}, nil, -0.5,
			[]int{1, 2, 1, 1, 1, 2, 1, 1, 1}, []bool{false, false, false, false, true, true, true, true, true}, true},
		// A value exactly on the maximum 5 passes: it lies in (3.75, 5].
		{"maximum on a value", spec.Limit{Max: ptr(5)}, nil, 0,
			[]int{2, 1, 1, 2, 1, 1, 1, 2}, []bool{false, false, false, false, true, true, true, true}, true},
		// A minimum of 2 holds 2 in [2, 3.25), the passing side; 7 lies on
		// the edge of [7, 8.25).
		{"minimum 2", spec.Limit{Min: ptr(2)}, nil, -0.5,
			[]int{1, 1, 2, 1, 1, 1, 2, 1, 1}, []bool{true, true, false, false, false, false, false, false, false}, false},
		// The bin (2, 3.25] straddles the minimum 2.2 and counts as inside.
		{"both limits: the edge goes on the maximum", spec.Limit{Min: ptr(2.2), Max: ptr(4.5)}, nil, -0.5,
			[]int{1, 2, 1, 1, 1, 2, 1, 1, 1}, []bool{true, true, false, false, true, true, true, true, true}, true},
		{"one value", spec.Limit{Max: ptr(1)}, []float64{5, 5, 5}, 4.95,
			[]int{3}, []bool{true}, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			limits := map[metrics.Name]spec.Limit{"overshoot_pct": tc.lim}
			values := tc.values
			if values == nil {
				for v := 0; v <= 10; v++ {
					values = append(values, float64(v))
				}
			}
			var units []acceptance.UnitResult
			for i, v := range values {
				units = append(units, unit(string(rune('A'+i)), step(1, limits, map[metrics.Name]float64{"overshoot_pct": v})))
			}
			d, err := New(batch(limits, units...))
			if err != nil {
				t.Fatal(err)
			}
			s := d.Stats[0]
			if math.Abs(s.Bins[0].Lo-tc.lo) > 1e-12 || s.RightClosed != tc.rightCls || len(s.Bins) != len(tc.counts) {
				t.Fatalf("bins %+v (right-closed %v), want %d from %v", s.Bins, s.RightClosed, len(tc.counts), tc.lo)
			}
			for i, bn := range s.Bins {
				if bn.Count != tc.counts[i] || bn.Outside != tc.outside[i] {
					t.Errorf("bin %d %v…%v holds %d, outside %v; want %d, %v", i, bn.Lo, bn.Hi, bn.Count, bn.Outside, tc.counts[i], tc.outside[i])
				}
			}
		})
	}
}
