package digest

import (
	"github.com/stepgate/stepgate/acceptance/spec"
	"math"
	"regexp"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/metrics"
)

// compareBatch: three units with an up-step 0 → 10 whose overshoot is the
// closed form 100·exp(−πζ/√(1−ζ²)) (K. Ogata, Modern Control Engineering,
// 5th ed., §5-3), and a model predicting ζ = 0.6, 9.48 % (Ogata Example
// 5-1, from memory).
func compareBatch() *acceptance.Batch {
	limits := map[metrics.Name]spec.Limit{"overshoot_pct": {Max: ptr(15)}}
	os := func(z float64) float64 { return 100 * math.Exp(-math.Pi*z/math.Sqrt(1-z*z)) }
	var units []acceptance.UnitResult
	for i, z := range []float64{0.6, 0.25, 0.7} {
		up := step(1, limits, map[metrics.Name]float64{"overshoot_pct": os(z)})
		down := step(2, limits, map[metrics.Name]float64{"overshoot_pct": os(z)})
		down.From, down.To = 10, 0
		units = append(units, unit(string(rune('A'+i)), up, down))
	}
	b := batch(limits, units...)
	pred := acceptance.Prediction{Kind: "ideal", Metrics: acceptance.MetricsOf(map[metrics.Name]metrics.Value{"overshoot_pct": metrics.Known(os(0.6))})}
	b.Model = &acceptance.ModelSummary{Config: plantModel(25, 6, 1), Nominal: []acceptance.NominalPrediction{{From: 0, To: 10, Ideal: pred, Realised: pred}}}
	return b
}

func TestCompare(t *testing.T) {
	b := compareBatch()
	os := func(z float64) float64 { return 100 * math.Exp(-math.Pi*z/math.Sqrt(1-z*z)) }
	cmp := compare(b)
	if len(cmp) != 1 {
		t.Fatalf("%d comparisons, want one per limited metric and nominal step", len(cmp))
	}
	c := cmp[0]
	mean := (os(0.6) + os(0.25) + os(0.7)) / 3
	if c.Kind != "ideal" || c.Steps != 3 || c.Measured != 3 || math.Abs(c.Predicted.V-9.478) > 1e-3 {
		t.Errorf("comparison %+v", c)
	}
	if math.Abs(c.Mean.V-mean) > 1e-12 || c.Min.V != os(0.7) || c.Max.V != os(0.25) {
		t.Errorf("mean/min/max %v %v %v", c.Mean, c.Min, c.Max)
	}
	if g := c.Gap(); !g.OK || math.Abs(g.V-(mean-os(0.6))) > 1e-12 {
		t.Errorf("gap %+v", g)
	}
	// A nominal step that no unit made has unknown statistics, not zeros.
	b.Model.Nominal[0].To = 5
	c = compare(b)[0]
	if c.Mean.OK || c.Min.OK || c.Steps != 0 || c.Mean.Why != "no recorded step has this command change" || c.Gap().OK {
		t.Errorf("unmatched nominal step: %+v", c)
	}
	b.Model = nil
	if compare(b) != nil {
		t.Errorf("compare without a model should be nil")
	}
}

func TestReportID(t *testing.T) {
	id := ReportID(compareBatch())
	if !regexp.MustCompile(`^ACT-25-C-[0-9a-f]{8}$`).MatchString(id) {
		t.Fatalf("ReportID = %q, want ACT-25-C- and 8 hex digits", id)
	}
	if again := ReportID(compareBatch()); again != id {
		t.Errorf("same inputs gave %q and %q", id, again)
	}
	tests := []struct {
		name string
		edit func(b *acceptance.Batch)
	}{
		{"unit file changed", func(b *acceptance.Batch) { b.Units[0].SHA256 = "other" }},
		{"unit renamed", func(b *acceptance.Batch) { b.Units[0].Unit = "SN-9001" }},
		{"units reordered", func(b *acceptance.Batch) { b.Units[0], b.Units[1] = b.Units[1], b.Units[0] }},
		{"unit dropped", func(b *acceptance.Batch) { b.Units = b.Units[1:] }},
		{"spec changed", func(b *acceptance.Batch) { b.Spec.SHA256 = "other spec" }},
		{"date changed", func(b *acceptance.Batch) { b.ReportDate = "2024-05-18" }},
		{"tool changed", func(b *acceptance.Batch) { b.Tool.Version = "0.2.0" }},
	}
	for _, tc := range tests {
		b := compareBatch()
		tc.edit(b)
		if got := ReportID(b); got == id {
			t.Errorf("%s: report id unchanged (%s)", tc.name, got)
		}
	}
	b := compareBatch()
	for i := range b.Units {
		b.Units[i].File = "/elsewhere/" + b.Units[i].File
	}
	if got := ReportID(b); got != id {
		t.Errorf("moving the logs changed the id: %s, was %s", got, id)
	}
	b.Spec.SpecID, b.Spec.Revision = "AC\x07T\u202e", ""
	if got := ReportID(b); !regexp.MustCompile(`^ACT-[0-9a-f]{8}$`).MatchString(got) {
		t.Errorf("control characters in the spec id: %q", got)
	}
}

func TestNew(t *testing.T) {
	if _, err := New(nil); err == nil {
		t.Errorf("nil batch: no error")
	}
	b := compareBatch()
	b.ReportDate = "17.05.2024"
	if _, err := New(b); err == nil || err.Error() != `digest: report date "17.05.2024": want YYYY-MM-DD` {
		t.Errorf("bad date: %v", err)
	}
	b = compareBatch()
	b.Units[1].Steps[0].Metrics.Set(metrics.Overshoot, metrics.Known(44))
	b.Units[1].Verdict = acceptance.Fail
	b.Summary = acceptance.Count(b.Units)
	d, err := New(b)
	if err != nil {
		t.Fatal(err)
	}
	if !d.Yield.OK || math.Abs(d.Yield.V-2.0/3) > 1e-12 || d.NotPassed != 1 || d.ID != ReportID(b) || d.Band != 0.02 {
		t.Errorf("yield %v not passed %d id %s band %v", d.Yield, d.NotPassed, d.ID, d.Band)
	}
	b.Units, b.Summary = nil, acceptance.Summary{}
	if d, _ := New(b); d.Yield.OK || d.Yield.Why == "" {
		t.Errorf("empty batch yield %+v, want unknown", d.Yield)
	}
}

func TestFormatting(t *testing.T) {
	for _, tc := range []struct {
		in   float64
		want string
	}{
		{0, "0"}, {10, "10"}, {9.478, "9.478"}, {0.55362, "0.5536"}, {1.33333, "1.333"},
		{-0.9478, "-0.9478"}, {12345.6, "12346"}, {0.0001234, "0.0001234"}, {2.708e-04, "0.0002708"}, {-0.00001, "-0.00001"}, {2.5e6, "2500000"}, {3e-12, "3.000e-12"},
	} {
		if got := Num(tc.in); got != tc.want {
			t.Errorf("Num(%v) = %q, want %q", tc.in, got, tc.want)
		}
	}
	if got := Percent(0.725); got != "72.5 %" {
		t.Errorf("Percent = %q", got)
	}
	for _, tc := range []struct {
		name metrics.Name
		want string
	}{
		{"overshoot_pct", "%"}, {"rise_time_s", "s"}, {"final_value", "mm"}, {"steady_state_error", "mm"},
		{"steady_state_error_pct", "%"}, {"zz_custom", ""},
	} {
		if u := MetricUnit(tc.name, "mm"); u != tc.want {
			t.Errorf("MetricUnit(%s) = %q, want %q", tc.name, u, tc.want)
		}
	}
	b := &acceptance.Batch{}
	for _, tc := range []struct {
		r    acceptance.DateRange
		want string
		ok   bool
	}{
		{acceptance.DateRange{}, "not recorded: no log carries a started_at date", false},
		{acceptance.DateRange{First: "2026-11-30", Last: "2026-11-30"}, "2026-11-30", true},
		{acceptance.DateRange{First: "2026-11-28", Last: "2026-11-30"}, "2026-11-28 to 2026-11-30", true},
	} {
		b.TestDates = tc.r
		if got, ok := TestDates(b); got != tc.want || ok != tc.ok {
			t.Errorf("TestDates(%+v) = %q %v", tc.r, got, ok)
		}
	}
}
