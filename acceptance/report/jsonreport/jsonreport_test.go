package jsonreport

import (
	"bytes"
	"testing"

	"github.com/santhosh-tekuri/jsonschema/v6"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
	"github.com/stepgate/stepgate/templates"
)

// The streamed writer must give exactly the bytes of encoding/json's
// MarshalIndent of the reference types (the Go standard library is the
// reference), for batches with no units, one unit and several, with and
// without a model, and with every member of the model set.
func TestWriteMatchesReference(t *testing.T) {
	limit := 8.0
	step := acceptance.StepResult{
		Index: 1, From: 0, To: 25, Verdict: acceptance.Fail,
		Reasons: []acceptance.Reason{{Kind: acceptance.AboveMax, Metric: "overshoot_pct", Step: 1, Value: 9.1, Limit: 8, Text: "overshoot_pct 9.1 > 8 at step 1"}},
		Metrics: acceptance.MetricsOf(map[metrics.Name]metrics.Value{"overshoot_pct": metrics.Known(9.1), "settling_time_s": metrics.Unknown("record ends")}),
		Checks:  []acceptance.Check{{Metric: "overshoot_pct", Max: &limit, Verdict: acceptance.Fail}},
	}
	unit := func(id string) acceptance.UnitResult {
		return acceptance.UnitResult{Unit: id, File: id + ".csv", Metadata: map[string]string{"station": "EOL-2", "serial": id},
			Verdict: acceptance.Fail, Reasons: []acceptance.Reason{{Text: "x"}}, Steps: []acceptance.StepResult{step}}
	}
	cases := []struct {
		name string
		b    acceptance.Batch
	}{
		{"no units", acceptance.Batch{Units: []acceptance.UnitResult{}, Limits: map[metrics.Name]spec.Limit{}}},
		{"nil units", acceptance.Batch{}},
		{"one unit", acceptance.Batch{Units: []acceptance.UnitResult{unit("A1")}, ReportDate: "2026-12-01"}},
		{"run options", acceptance.Batch{Units: []acceptance.UnitResult{unit("A1")}, ReportDate: "2026-12-01",
			SpecDoc: &spec.Spec{ResponseUnit: "mm"},
			Run: &acceptance.RunInfo{SpecPath: "specs/<vd25>.yaml", SpecResolved: "/line/specs/<vd25>.yaml", Inputs: []string{"logs", "a b.csv"},
				ReportDate: "2026-12-01", ReportDateFrom: acceptance.DateFromOption, AllUnits: true, MaxUnitPages: 0}}},
		{"files excluded", acceptance.Batch{Units: []acceptance.UnitResult{unit("A1")}, Excluded: []acceptance.ExcludedFile{
			{File: "lot/notes <1>.md", Pattern: "*.md"}, {File: "lot/a.zip!cal.csv", Pattern: "not matched by include: u*.csv"}}}},
		{"run without inputs", acceptance.Batch{Run: &acceptance.RunInfo{ReportDateFrom: acceptance.DateFromTests, MaxUnitPages: 200}}},
		{"three units and a model", acceptance.Batch{
			Tool: acceptance.ToolInfo{Name: "stepgate", Version: "t"}, Units: []acceptance.UnitResult{unit("A1"), unit("A2"), unit("=1+1")},
			Model: &acceptance.ModelSummary{Plant: "1 / s", Warnings: []string{"w"}}, Limits: map[metrics.Name]spec.Limit{"overshoot_pct": {Max: &limit}},
		}},
		{"a full model", acceptance.Batch{Units: []acceptance.UnitResult{}, Model: fullModel(), Limits: map[metrics.Name]spec.Limit{
			"overshoot_pct": {Max: &limit}, "rise_time_s": {Min: &limit, Max: &limit}, "<&>": {},
		}, ReportDate: "2026-12-01", Notice: "n <&>", TestDates: acceptance.DateRange{First: "2026-11-30", Last: "2026-12-01"}}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var got bytes.Buffer
			if err := writeBatch(&got, &c.b, digest.ReportID(&c.b)); err != nil {
				t.Fatal(err)
			}
			if want := referenceJSON(t, &c.b); !bytes.Equal(got.Bytes(), want) {
				t.Errorf("streamed JSON differs from the reference:\n got %s\nwant %s", got.Bytes(), want)
			}
		})
	}
}

// fullModel sets every member of a model summary, and the empty forms.
func fullModel() *acceptance.ModelSummary {
	kp := 2.5
	pred := func(kind string) acceptance.Prediction {
		return acceptance.Prediction{Kind: kind, Metrics: acceptance.MetricsOf(map[metrics.Name]metrics.Value{"overshoot_pct": metrics.Known(1e-7)})}
	}
	return &acceptance.ModelSummary{
		Config: model.Config{
			ReferenceTest: &model.ReferenceTest{Gain: 1, StaticGain: 0.98, Damping: 0.45, NaturalFrequency: 12.5},
			Plant:         &model.TransferFunc{Numerator: []float64{5}, Denominator: []float64{}},
			PlantDeadTime: 0.002,
			Controller:    model.Controller{Kp: 2, Ki: 0.5, Kd: 0.01, DerivativeFilterHz: 200},
			Loop:          &model.Loop{SamplePeriod: 0.001, Delay: 0.0005},
			Actuator:      &model.Actuator{EffortLimit: 10, Deadband: 0.02},
		},
		Plant: "5 / (s² + 2 s)", Realised: true,
		Nominal: []acceptance.NominalPrediction{{From: 0, To: 25, Ideal: pred("ideal"), Realised: pred("realised")}},
		Designs: []acceptance.GainDesign{
			{Target: "overshoot_pct", Value: 8, KpIdeal: &kp},
			{Target: "damping", Value: 1, Why: "no real solution <&>"},
		},
		Warnings: []string{"w1", ""},
	}
}

// Numbers are written with at most jsonfmt.Digits significant digits: the
// binary noise of float64 arithmetic (0.1 + 0.187 = 0.28700000000000003)
// never reaches the file; the decimal values are worked by hand.
func TestWriteRoundsNumbers(t *testing.T) {
	lim := 0.1 + 0.2
	b := &acceptance.Batch{Units: []acceptance.UnitResult{{Unit: "A1", Steps: []acceptance.StepResult{{
		Index: 1, StartS: 0.1 + 0.187, To: 25.000000000000004,
		Metrics: acceptance.MetricsOf(map[metrics.Name]metrics.Value{"rise_time_s": metrics.Known(1.0 / 3)}),
		Checks:  []acceptance.Check{{Metric: "rise_time_s", Max: &lim}},
	}}}}}
	var got bytes.Buffer
	if err := writeBatch(&got, b, "id"); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`"start_s": 0.287,`, `"to": 25,`, `"rise_time_s": 0.333333333333,`, `"max": 0.3,`} {
		if !bytes.Contains(got.Bytes(), []byte(want)) {
			t.Errorf("results.json lacks %s", want)
		}
	}
	for _, noise := range []string{"0.28700000000000003", "25.000000000000004", "0.30000000000000004"} {
		if bytes.Contains(got.Bytes(), []byte(noise)) {
			t.Errorf("results.json holds %s", noise)
		}
	}
}

// The document the encoder writes for batches that set every field (the
// fixture units, a full model, run options) follows the schema `stepgate
// schema` prints (templates/schema.json), checked by the JSON Schema
// validator github.com/santhosh-tekuri/jsonschema (draft 2020-12): a member
// added to the encoder but not to the schema fails here.
func TestWriteFollowsSchema(t *testing.T) {
	doc, err := jsonschema.UnmarshalJSON(bytes.NewReader(templates.Schema))
	if err != nil {
		t.Fatal(err)
	}
	c := jsonschema.NewCompiler()
	if err := c.AddResource("mem:///schema.json", doc); err != nil {
		t.Fatal(err)
	}
	sch, err := c.Compile("mem:///schema.json")
	if err != nil {
		t.Fatal(err)
	}
	lim := 8.0
	// The fixture's zero units and steps carry no verdict; a run always
	// gives one.
	units := fixtureUnits()
	for i := range units {
		if units[i].Verdict == "" {
			units[i].Verdict = acceptance.Invalid
		}
		for j := range units[i].Steps {
			if units[i].Steps[j].Verdict == "" {
				units[i].Steps[j].Verdict = acceptance.Invalid
			}
		}
	}
	batches := map[string]*acceptance.Batch{
		"fixture": {Units: units, Limits: map[metrics.Name]spec.Limit{"overshoot_pct": {Max: &lim}}, ReportDate: "2026-12-01",
			Run: &acceptance.RunInfo{SpecPath: "s.yaml", SpecResolved: "/x/s.yaml", Inputs: []string{"logs"}, ReportDateFrom: acceptance.DateFromFiles}},
		"full model": {Units: []acceptance.UnitResult{}, Model: fullModel(), Limits: map[metrics.Name]spec.Limit{}},
		"empty":      {},
	}
	for name, b := range batches {
		var out bytes.Buffer
		if err := writeBatch(&out, b, "id"); err != nil {
			t.Fatal(err)
		}
		inst, err := jsonschema.UnmarshalJSON(&out)
		if err != nil {
			t.Fatal(err)
		}
		if err := sch.Validate(inst); err != nil {
			t.Errorf("%s: results.json does not follow templates/schema.json (add the member there):\n%v", name, err)
		}
	}
}
