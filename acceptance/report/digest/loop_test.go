package digest

import (
	"github.com/stepgate/stepgate/acceptance/spec"
	"math"
	"strings"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/metrics"
)

// TestLoopModel checks the model's closed loop against coefficient
// matching (references §4): a plant K/(s(s + a)) under proportional gain
// Kp has the closed-loop denominator s² + a s + K·Kp, so ωn = √(K·Kp) and
// ζ = a/(2ωn), static gain 1. For K = 48.4, a = 19.8, Kp = 4.5:
// ωn = √217.8 = 14.758 rad/s, ζ = 0.6708.
func TestLoopModel(t *testing.T) {
	tests := []struct {
		name            string
		cfg             model.Config
		realised        bool
		zeta, wn, g, th float64 // NaN: unknown
		note            string
	}{
		{"P control of K/(s(s + a))", plantModel(48.4, 19.8, 4.5), false,
			19.8 / (2 * math.Sqrt(48.4*4.5)), math.Sqrt(48.4 * 4.5), 1, 0, "second order"},
		// From a reference test at K₀ with G = 1 the plant is
		// ωn²/(K₀·s(s + 2ζωn)) (references §4); at Kp = K₀ the loop is the
		// reference test itself: ζ = 0.45, ωn = 22.
		{"reference test at its own gain", model.Config{
			ReferenceTest: &model.ReferenceTest{Gain: 10, StaticGain: 1, Damping: 0.45, NaturalFrequency: 22},
			Controller:    model.Controller{Kp: 10}}, false, 0.45, 22, 1, 0, "second order"},
		// The realised dead time adds the loop delay and half a sample
		// period (Franklin, Powell, Workman, from memory): 4 + 2 + 0.5 ms.
		{"realised loop delay", func() model.Config {
			c := plantModel(48.4, 19.8, 4.5)
			c.PlantDeadTime, c.Loop = 0.004, &model.Loop{SamplePeriod: 0.001, Delay: 0.002}
			return c
		}(), true, 19.8 / (2 * math.Sqrt(48.4*4.5)), math.Sqrt(48.4 * 4.5), 1, 0.0065, "second order"},
		// PI control makes the loop third order: the values are those of
		// the dominant (slowest) complex pole pair.
		{"PI control", func() model.Config {
			c := plantModel(48.4, 19.8, 4.5)
			c.Controller.Ki = 2
			return c
		}(), false, math.NaN(), math.NaN(), 1, 0, "dominant pole pair"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			b := batch(map[metrics.Name]spec.Limit{})
			b.Model = &acceptance.ModelSummary{Config: tc.cfg, Realised: tc.realised}
			l := summariseLoop(b)
			check := func(what string, v metrics.Value, want float64) {
				if math.IsNaN(want) {
					return
				}
				if !v.OK || math.Abs(v.V-want) > 1e-9*math.Max(1, want) {
					t.Errorf("%s = %+v, want %v", what, v, want)
				}
			}
			check("ζ", l.Damping.Model, tc.zeta)
			check("ωn", l.NaturalFrequency.Model, tc.wn)
			check("G", l.StaticGain.Model, tc.g)
			check("θ", l.DeadTime.Model, tc.th)
			if !strings.Contains(l.ModelNote, tc.note) {
				t.Errorf("note %q, want %q", l.ModelNote, tc.note)
			}
			if tc.note == "dominant pole pair" {
				sys, err := model.Build(tc.cfg)
				if err != nil {
					t.Fatal(err)
				}
				poles, _ := sys.Poles()
				// The pair's ωn and ζ must reproduce one of the poles:
				// p = −ζωn ± jωn√(1 − ζ²).
				z, w := l.Damping.Model.V, l.NaturalFrequency.Model.V
				found := false
				for _, p := range poles {
					if math.Abs(real(p)+z*w) < 1e-9*w && math.Abs(math.Abs(imag(p))-w*math.Sqrt(1-z*z)) < 1e-9*w {
						found = true
					}
				}
				if !found || l.ModelOrder != 3 {
					t.Errorf("ζ %v ωn %v (order %d) match no pole of %v", z, w, l.ModelOrder, poles)
				}
			}
		})
	}
}

// TestLoopModelFit identifies the model's predicted step the way the units
// are identified. The predicted record is the closed-form response of
// ζ = 0.6, ωn = 5 rad/s behind a 20 ms dead time (Ogata, 5th ed., §5-3), so
// the fit must return those values.
func TestLoopModelFit(t *testing.T) {
	b := batch(map[metrics.Name]spec.Limit{})
	b.SpecDoc.Steps.MinChange = 1
	b.Model = &acceptance.ModelSummary{Config: plantModel(25, 6, 1), Nominal: []acceptance.NominalPrediction{{
		From: 0, To: 10, IdealTrace: closedForm(1, 0.6, 5, 0.02, 10, 0.5, 0.002, 4),
	}}}
	l := summariseLoop(b)
	for _, c := range []struct {
		what string
		v    metrics.Value
		want float64
		tol  float64
	}{
		{"ζ", l.Damping.ModelFit, 0.6, 1e-3}, {"ωn", l.NaturalFrequency.ModelFit, 5, 1e-3},
		{"G", l.StaticGain.ModelFit, 1, 1e-4}, {"θ", l.DeadTime.ModelFit, 0.02, 1e-3},
	} {
		if !c.v.OK || math.Abs(c.v.V-c.want) > c.tol {
			t.Errorf("fitted %s = %+v, want %v ± %v", c.what, c.v, c.want, c.tol)
		}
	}
	if l.FitKind != "ideal" || l.FitWhy != "" {
		t.Errorf("fit kind %q why %q", l.FitKind, l.FitWhy)
	}
	// Without the predicted record the fit is unknown with the reason.
	b.Model.Nominal[0].IdealTrace = nil
	if l := summariseLoop(b); l.Damping.ModelFit.OK || !strings.Contains(l.FitWhy, "not kept") {
		t.Errorf("no record: %+v, %q", l.Damping.ModelFit, l.FitWhy)
	}
}

// TestLoopBatch: the statistics of the units' fits over known values.
func TestLoopBatch(t *testing.T) {
	b := batch(map[metrics.Name]spec.Limit{})
	b.Model = &acceptance.ModelSummary{Config: plantModel(48.4, 19.8, 4.5)}
	for i, wn := range []float64{10, 12, 14} {
		u := unit(string(rune('A' + i)))
		u.Fit = &acceptance.Fit{Damping: metrics.Known(0.5 + 0.1*float64(i)), NaturalFrequency: metrics.Known(wn),
			StaticGain: metrics.Known(1), DeadTime: metrics.Known(0.005)}
		b.Units = append(b.Units, u)
	}
	why := "step 1: no second-order fit: the response is still moving"
	failed := unit("D")
	failed.Fit = &acceptance.Fit{Why: why, Damping: metrics.Unknown(why), NaturalFrequency: metrics.Unknown(why),
		StaticGain: metrics.Unknown(why), DeadTime: metrics.Unknown(why)}
	b.Units = append(b.Units, failed, unit("E"))
	l := summariseLoop(b)
	if l.Units != 4 || l.Fitted != 3 {
		t.Errorf("units %d fitted %d, want 4 and 3", l.Units, l.Fitted)
	}
	// 10, 12, 14: mean 12, σ = 2 (n − 1), CV = 1/6.
	w := l.NaturalFrequency
	if w.N != 3 || w.Mean.V != 12 || math.Abs(w.SD.V-2) > 1e-12 || math.Abs(w.CV.V-1.0/6) > 1e-12 || w.Min.V != 10 || w.Max.V != 14 {
		t.Errorf("ωn %+v", w)
	}
	if z := l.Damping; math.Abs(z.Mean.V-0.6) > 1e-12 || math.Abs(z.SD.V-0.1) > 1e-12 {
		t.Errorf("ζ %+v", z)
	}
	if g := l.StaticGain; g.SD.V != 0 || g.CV.V != 0 {
		t.Errorf("G %+v, want σ = 0", g)
	}
	if len(l.Quantities()) != 4 || l.Quantities()[3].Unit != "s" {
		t.Errorf("quantities %+v", l.Quantities())
	}
}
