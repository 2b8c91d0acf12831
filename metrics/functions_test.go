package metrics

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// Checks of the per-metric functions over small records whose answers follow
// by hand from the definitions: linear interpolation between the samples
// around a reference-level crossing (IEEE Std 181-2011 §5.3.3), overshoot as
// a percentage of the transition (IEEE Std 181-2011 §5.4), settling as the
// last exit from the band (Ogata 5th ed. §5-3).

func TestStateLevel(t *testing.T) {
	ramp := make([]float64, 10)
	for i := range ramp {
		ramp[i] = float64(i)
	}
	glitch := make([]float64, 100)
	for i := range glitch {
		glitch[i] = 5 + 0.01*float64(i%2*2-1) // 4.99, 5.01, ...
	}
	glitch = append(glitch[:37], append([]float64{1000}, glitch[37:]...)...)
	tests := []struct {
		name                 string
		y                    []float64
		value, drift, spread float64
	}{
		{"constant", []float64{3, 3, 3, 3}, 3, 0, 0},
		{"one sample", []float64{-2}, -2, 0, 0},
		// More than half the samples at one encoder count: MAD 0, the
		// level is that count.
		{"quantised majority", []float64{2, 2, 3, 2, 2, 2}, 2, 0, 0},
		// 0..9: halves 0..4 and 5..9 have means 2 and 7; median 4.5, MAD
		// 2.5, spread 1.4826 × 2.5.
		{"ramp", ramp, 4.5, 5, 1.4826 * 2.5},
		// 50 samples at 4.99, 50 at 5.01 and one glitch: median 5.01, MAD
		// 0.02, and the glitch (|1000 − 5.01| ≫ 3 × 1.4826 × 0.02) is
		// rejected, leaving the mean 5. Drift not checked (NaN).
		{"glitch rejected", glitch, 5, math.NaN(), 1.4826 * 0.02},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			l, ok := StateLevel(tc.y)
			if !ok || l.N != len(tc.y) {
				t.Fatalf("StateLevel = %+v, %v", l, ok)
			}
			if math.Abs(l.Value-tc.value) > 1e-12 || (!math.IsNaN(tc.drift) && math.Abs(l.Drift-tc.drift) > 1e-12) || math.Abs(l.Spread-tc.spread) > 1e-12 {
				t.Errorf("StateLevel = %+v, want value %g drift %g spread %g", l, tc.value, tc.drift, tc.spread)
			}
		})
	}
	if _, ok := StateLevel(nil); ok {
		t.Error("StateLevel(nil) ok, want not ok")
	}
}

// TestStateLevelGaussian checks that the spread estimates the noise's
// standard deviation: 1.4826 × MAD is consistent for Gaussian data
// (Rousseeuw and Croux, J. Amer. Statist. Assoc. 88(424), 1993); its
// standard error at n = 4000 is about 1.3 % of σ, so 5 % is a 4-sigma bound.
// The level's standard error is σ/√n ≈ 0.016σ; 0.08σ is 5 of those.
func TestStateLevelGaussian(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	y := make([]float64, 4000)
	for i := range y {
		y[i] = 7 + 0.3*rng.NormFloat64()
	}
	l, _ := StateLevel(y)
	if math.Abs(l.Value-7) > 0.08*0.3 || math.Abs(l.Spread-0.3) > 0.05*0.3 || l.Drift > 0.16*0.3 {
		t.Errorf("StateLevel = %+v, want value 7, spread 0.3", l)
	}
	if !l.Steady(0.31) || l.Steady(0.29) {
		t.Errorf("Steady: spread %g should pass 0.31 and fail 0.29", l.Spread)
	}
}

func TestCrossingTime(t *testing.T) {
	tests := []struct {
		name   string
		t, y   []float64
		level  float64
		rising bool
		want   float64 // NaN: never crosses
	}{
		{"rising, interpolated", []float64{0, 1, 2, 3}, []float64{0, 0, 1, 1}, 0.25, true, 1.25},
		{"falling, interpolated", []float64{0, 1, 2, 3}, []float64{1, 1, 0, 0}, 0.25, false, 1.75},
		{"time from the first sample", []float64{10, 10.5, 11, 12}, []float64{0, 0, 2, 2}, 1.5, true, 0.875},
		{"uneven spacing", []float64{0, 0.1, 0.4, 0.5}, []float64{0, 1, 4, 4}, 2.5, true, 0.25},
		{"exactly on a sample", []float64{0, 1, 2}, []float64{0, 1, 2}, 1, true, 1},
		{"already there at the step instant", []float64{0, 1, 2}, []float64{5, 5, 5}, 1, true, 0},
		{"first crossing, not a later one", []float64{0, 1, 2, 3, 4}, []float64{0, 2, 0, 2, 2}, 1, true, 0.5},
		{"never reaches", []float64{0, 1, 2}, []float64{0, 0.5, 0.9}, 1, true, math.NaN()},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got := CrossingTime(tc.t, tc.y, tc.level, tc.rising)
			if math.IsNaN(tc.want) {
				if got.OK || !strings.Contains(got.Why, "never reaches 1") {
					t.Errorf("CrossingTime = %+v, want unknown", got)
				}
				return
			}
			near(t, "CrossingTime", got, tc.want, 1e-12)
		})
	}
}

func TestMeasureRiseAndDeadTime(t *testing.T) {
	// A straight ramp from 0 to 10 over 1 s, then held: 10–90 % takes
	// 0.8 s, the 2 % level is reached at 0.02 s.
	tt := []float64{0, 0.25, 0.5, 0.75, 1, 2}
	y := []float64{0, 2.5, 5, 7.5, 10, 10}
	near(t, "rise up", MeasureRiseTime(tt, y, 0, 10, 0.1, 0.9), 0.8, 1e-12)
	near(t, "dead time up", MeasureDeadTime(tt, y, 0, 10, 0.02), 0.02, 1e-12)
	down := []float64{10, 7.5, 5, 2.5, 0, 0}
	near(t, "rise down", MeasureRiseTime(tt, down, 10, 0, 0.1, 0.9), 0.8, 1e-12)
	near(t, "dead time down", MeasureDeadTime(tt, down, 10, 0, 0.02), 0.02, 1e-12)
	// Both levels inside one sample interval.
	near(t, "rise in one interval", MeasureRiseTime([]float64{0, 1, 2}, []float64{0, 0, 10}, 0, 10, 0.1, 0.9), 0.8, 1e-12)
	if v := MeasureRiseTime(tt, y, 0, 20, 0.1, 0.9); v.OK || !strings.Contains(v.Why, "never reaches the 90 % level (18)") {
		t.Errorf("rise to an unreached level = %+v", v)
	}
	if v := MeasureRiseTime(tt, y, 3, 3, 0.1, 0.9); v.OK || v.Why == "" {
		t.Errorf("rise with no transition = %+v", v)
	}
	if v := MeasureDeadTime(tt, y, 3, 3, 0.02); v.OK || v.Why == "" {
		t.Errorf("dead time with no transition = %+v", v)
	}
}

func TestMeasurePeakAndOvershoot(t *testing.T) {
	tt := []float64{5, 6, 7, 8, 9}
	y := []float64{0, 12, 11, 12, 10}
	p, at := MeasurePeak(tt, y, true)
	near(t, "peak", p, 12, 0)
	near(t, "peak time (first of equal maxima)", at, 1, 0)
	p, at = MeasurePeak(tt, []float64{10, -2, 1, 0, 0}, false)
	near(t, "trough", p, -2, 0)
	near(t, "trough time", at, 1, 0)
	if p, at := MeasurePeak(nil, nil, true); p.OK || at.OK {
		t.Error("peak of no samples known")
	}
	tests := []struct {
		peak, initial, final, want float64
	}{
		{12, 0, 10, 20},   // (12 − 10)/10
		{-2, 10, 0, 20},   // down-step: (0 − (−2))/10
		{9, 0, 10, 0},     // peak short of final
		{10, 0, 10, 0},    // peak at final
		{11, 5, 10, 20},   // from a non-zero level: 1/5
		{-12, 0, -10, 20}, // negative up-is-down
	}
	for _, tc := range tests {
		near(t, "overshoot", MeasureOvershoot(tc.peak, tc.initial, tc.final), tc.want, 1e-12)
	}
	if v := MeasureOvershoot(5, 3, 3); v.OK || v.Why == "" {
		t.Errorf("overshoot with no transition = %+v", v)
	}
}

func TestMeasureSettlingTime(t *testing.T) {
	tt := []float64{0, 1, 2, 3, 4, 5}
	tests := []struct {
		name string
		y    []float64
		want float64 // NaN: unknown
		last float64
	}{
		// Last outside: 1.5 at t = 1; next 0.9 is inside (on the edge
		// counts as inside). Exit through 1.1: 1 + (1.1 − 1.5)/(0.9 − 1.5).
		{"exit interpolated", []float64{0, 1.5, 0.9, 1.05, 1, 1}, 1 + 2.0/3, 1},
		{"exit through the lower edge", []float64{0, 0.5, 0.8, 0.95, 1, 1}, 2 + (0.9-0.8)/(0.95-0.8), 2},
		{"never outside", []float64{1, 1.05, 0.95, 1, 1, 1}, 0, 0},
		{"still outside at the end", []float64{0, 1, 1, 1, 1, 1.2}, math.NaN(), 5},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got := MeasureSettlingTime(tt, tc.y, 1, 0.1)
			if math.IsNaN(tc.want) {
				if got.OK || !strings.Contains(got.Why, "still outside the ±0.1 band around 1 at the end of the record, 5 s after the step") {
					t.Errorf("settling = %+v, want unknown", got)
				}
			} else {
				near(t, "settling", got, tc.want, 1e-12)
			}
			near(t, "last outside", MeasureLastOutside(tt, tc.y, 1, 0.1), tc.last, 0)
		})
	}
	if v := MeasureLastOutside(nil, nil, 1, 0.1); v.OK || v.Why == "" {
		t.Errorf("last outside of no samples = %+v", v)
	}
}

func TestMeasureSteadyStateError(t *testing.T) {
	abs, pct := MeasureSteadyStateError(25, 24, 25)
	near(t, "abs", abs, 1, 1e-12)
	near(t, "pct", pct, 4, 1e-12)
	abs, pct = MeasureSteadyStateError(0, 0.5, -25)
	near(t, "abs down", abs, 0.5, 1e-12)
	near(t, "pct down", pct, 2, 1e-12)
	if _, pct := MeasureSteadyStateError(1, 1, 0); pct.OK {
		t.Error("percentage of a zero step known")
	}
}
