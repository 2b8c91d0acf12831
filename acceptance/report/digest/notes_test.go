package digest

import (
	"github.com/stepgate/stepgate/acceptance/spec"
	"strings"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/metrics"
)

// notesBatch is four units whose evidence supports none of the cause
// rules: overshoot and steady-state error as predicted, flat final values,
// little saturation, and identified natural frequencies within 1 %. The
// model's dead time is the plant's 4 ms plus the loop delay of 2 ms and
// half the 1 ms sample period: 6.5 ms.
func notesBatch() *acceptance.Batch {
	limits := map[metrics.Name]spec.Limit{"overshoot_pct": {Max: ptr(20)}, "steady_state_error": {Max: ptr(1)}}
	var units []acceptance.UnitResult
	for i, wn := range []float64{12, 12.1, 11.9, 12} {
		s := step(1, limits, map[metrics.Name]float64{"overshoot_pct": 5, "steady_state_error": 0.01})
		s.Predicted = &acceptance.Prediction{Kind: "realised", Metrics: acceptance.MetricsOf(map[metrics.Name]metrics.Value{
			"overshoot_pct": metrics.Known(5), "steady_state_error": metrics.Known(0.01)})}
		s.Evidence = &acceptance.StepEvidence{
			EffortSaturatedPct: metrics.Known(10), EffortLimit: metrics.Known(100), FinalDrift: metrics.Known(0.0005)}
		u := unit(string(rune('A'+i)), s)
		u.Fit = &acceptance.Fit{Step: 1, StaticGain: metrics.Known(1), Damping: metrics.Known(0.6),
			NaturalFrequency: metrics.Known(wn), DeadTime: metrics.Known(0.0065), RMSResidual: metrics.Known(0.01)}
		units = append(units, u)
	}
	b := batch(limits, units...)
	cfg := plantModel(48.4, 19.8, 4.5)
	cfg.PlantDeadTime = 0.004
	cfg.Loop = &model.Loop{SamplePeriod: 0.001, Delay: 0.002}
	cfg.Actuator = &model.Actuator{EffortLimit: 100}
	b.Model = &acceptance.ModelSummary{Config: cfg, Realised: true}
	b.SpecDoc.EffortUnit = "%"
	return b
}

// eachStep calls f with every unit of b and its first step.
func eachStep(b *acceptance.Batch, f func(u *acceptance.UnitResult, s *acceptance.StepResult)) {
	for i := range b.Units {
		f(&b.Units[i], &b.Units[i].Steps[0])
	}
}

// The edits of notesBatch that the cases of TestNotes combine.

func overshootAll(v float64) func(*acceptance.Batch) {
	return func(b *acceptance.Batch) {
		eachStep(b, func(_ *acceptance.UnitResult, s *acceptance.StepResult) {
			s.Metrics.Set(metrics.Overshoot, metrics.Known(v))
		})
	}
}

func deadTimeAll(v float64) func(*acceptance.Batch) {
	return func(b *acceptance.Batch) {
		eachStep(b, func(u *acceptance.UnitResult, _ *acceptance.StepResult) { u.Fit.DeadTime = metrics.Known(v) })
	}
}

// offsetB sets unit B's steady-state error and final drift. The settling
// band is 2 % of the 10 mm step = 0.2 mm: offset threshold 0.02 mm, flat
// threshold 0.01 mm.
func offsetB(sse, drift float64) func(*acceptance.Batch) {
	return func(b *acceptance.Batch) {
		s := &b.Units[1].Steps[0]
		s.Metrics.Set(metrics.SteadyStateError, metrics.Known(sse))
		s.Evidence.FinalDrift = metrics.Known(drift)
	}
}

func saturatedC(v metrics.Value) func(*acceptance.Batch) {
	return func(b *acceptance.Batch) { b.Units[2].Steps[0].Evidence.EffortSaturatedPct = v }
}

// frequencies sets the units' identified natural frequencies; the units
// beyond the values given lose their fit.
func frequencies(ws ...float64) func(*acceptance.Batch) {
	return func(b *acceptance.Batch) {
		for i := range b.Units {
			if i < len(ws) {
				b.Units[i].Fit.NaturalFrequency = metrics.Known(ws[i])
			} else {
				b.Units[i].Fit = nil
			}
		}
	}
}

// TestNotes checks that each cause rule fires on evidence that supports it
// and not otherwise. The thresholds are stepgate's (common practice, no
// source): overshoot more than 1 point above the prediction with a dead
// time more than max(25 %, one sample period) above the model's; a
// steady-state error more than 10 % of the settling band above the
// prediction with a drift of at most 5 % of it; effort at its limit for
// more than 20 % of the rise; a coefficient of variation of ωn above 5 %.
func TestNotes(t *testing.T) {
	tests := []struct {
		name  string
		edits []func(*acceptance.Batch)
		rules string   // rules that fire, in order
		text  []string // evidence the note must quote
	}{
		{"nothing supports a cause", nil, "", nil},
		{"overshoot and dead time above the model", []func(*acceptance.Batch){overshootAll(8), deadTimeAll(0.010)}, "loop delay",
			[]string{"Overshoot averages 8 % over 4 steps against 5 % predicted (+3 percentage points)",
				"dead time averages 0.01 s over 4 units against 0.0065 s in the model"}},
		// 7.5 ms is 1 ms above the model: less than 25 % of 6.5 ms.
		{"overshoot above, dead time as modelled", []func(*acceptance.Batch){overshootAll(8), deadTimeAll(0.0075)}, "", nil},
		{"dead time above, overshoot as predicted", []func(*acceptance.Batch){overshootAll(5.5), deadTimeAll(0.010)}, "", nil},
		{"offset with a flat final value", []func(*acceptance.Batch){offsetB(0.2, 0.001)}, "friction",
			[]string{"In 1 step of 1 unit (B)", "by up to 0.19 mm", "drifts by at most 0.001 mm"}},
		{"offset while still moving", []func(*acceptance.Batch){offsetB(0.2, 0.05)}, "", nil},
		{"small offset, flat", []func(*acceptance.Batch){offsetB(0.025, 0.001)}, "", nil},
		{"effort at its limit for much of the rise", []func(*acceptance.Batch){saturatedC(metrics.Known(35))}, "saturation",
			[]string{"In 1 of the 4 steps with an effort record (1 unit: C)", "limit (100 %)", "up to 35 %",
				"The realised prediction includes the spec's effort limit of 100"}},
		{"effort at its limit briefly", []func(*acceptance.Batch){saturatedC(metrics.Known(20))}, "", nil},
		{"no effort record", []func(*acceptance.Batch){saturatedC(metrics.Unknown("the log has no effort column"))}, "", nil},
		// 10, 12, 14: mean 12, σ = 2, CV 16.67 %.
		{"natural frequency spread", []func(*acceptance.Batch){frequencies(10, 12, 14)}, "spread",
			[]string{"ranges from 10 to 14 rad/s over 3 units (mean 12 rad/s, coefficient of variation 16.67 %"}},
		{"spread on two fits only", []func(*acceptance.Batch){frequencies(10, 14)}, "", nil},
		{"every cause at once", []func(*acceptance.Batch){overshootAll(8), deadTimeAll(0.010), offsetB(0.2, 0.001),
			saturatedC(metrics.Known(35)), frequencies(10, 12, 14)}, "loop delay,friction,saturation,spread", nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			b := notesBatch()
			for _, e := range tc.edits {
				e(b)
			}
			d, err := New(b)
			if err != nil {
				t.Fatal(err)
			}
			var rules []string
			all := ""
			for _, n := range d.Notes {
				rules = append(rules, n.Rule)
				// No-break spaces glue numbers to their units.
				all += strings.ReplaceAll(n.Evidence+" "+n.Meaning, "\u00a0", " ") + "\n"
				if n.Title == "" || n.Evidence == "" || n.Meaning == "" {
					t.Errorf("note %+v lacks a part", n)
				}
				if !strings.Contains(n.Meaning, "indicate") {
					t.Errorf("note %q is not worded as an indication: %s", n.Rule, n.Meaning)
				}
			}
			if !strings.Contains(d.Advice, "Reduce it, try it on the machine with the guards") {
				t.Errorf("advice %q", d.Advice)
			}
			if got := strings.Join(rules, ","); got != tc.rules {
				t.Errorf("rules %q, want %q\n%s", got, tc.rules, all)
			}
			for _, w := range tc.text {
				if !strings.Contains(all, w) {
					t.Errorf("notes lack %q:\n%s", w, all)
				}
			}
		})
	}
}

// TestNotesWithoutModel: without a model there is no prediction to be
// above and no fit, so only the saturation rule can fire.
func TestNotesWithoutModel(t *testing.T) {
	b := notesBatch()
	b.Model = nil
	for i := range b.Units {
		b.Units[i].Fit = nil
		b.Units[i].Steps[0].Predicted = nil
		b.Units[i].Steps[0].Evidence.EffortSaturatedPct = metrics.Known(50)
	}
	d, err := New(b)
	if err != nil {
		t.Fatal(err)
	}
	if len(d.Notes) != 1 || d.Notes[0].Rule != "saturation" || strings.Contains(d.Notes[0].Meaning, "realised prediction") {
		t.Errorf("notes %+v, want saturation alone, without a word on a prediction", d.Notes)
	}
	if d.Loop != nil || d.Comparisons != nil {
		t.Errorf("loop %+v and comparisons %v without a model", d.Loop, d.Comparisons)
	}
}

// TestPhrasesPresent checks that every phrase the notes and the reports use
// is in templates/wording.txt.
func TestPhrasesPresent(t *testing.T) {
	for _, k := range []string{"causes-intro", "causes-none", "causes-advice", "cause-delay", "cause-friction",
		"cause-saturation", "cause-spread", "capability", "results-relate"} {
		if p := Phrase(k); p == "" {
			t.Errorf("phrase %q is empty", k)
		}
	}
}
