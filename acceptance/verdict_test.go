package acceptance_test

import (
	"bytes"
	"reflect"
	"strings"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/acceptance/report/jsonreport"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// verdictF returns a pointer to v, for limits.
func verdictF(v float64) *float64 { return &v }

// verdictStep returns the metrics of step 2 with every metric measured; the
// cases override single metrics.
func verdictStep(over map[metrics.Name]metrics.Value, lastOutside metrics.Value) metrics.StepMetrics {
	m := metrics.StepMetrics{
		Step:                metrics.Step{Index: 2, Start: 500, End: 1000, From: 0, To: 10},
		Start:               0.5,
		StepSize:            metrics.Known(10),
		InitialValue:        metrics.Known(0),
		FinalValue:          metrics.Known(10.01),
		DeadTime:            metrics.Known(0.004),
		RiseTime:            metrics.Known(0.08),
		PeakValue:           metrics.Known(10.6),
		PeakTime:            metrics.Known(0.15),
		Overshoot:           metrics.Known(5),
		SettlingTime:        metrics.Known(0.3),
		SteadyStateError:    metrics.Known(0.01),
		SteadyStateErrorPct: metrics.Known(0.1),
		MoveTime:            metrics.Known(0),
		SettlingAfterMove:   metrics.Known(0.3),
		MaxFollowingError:   metrics.Known(10),
		LastOutside:         lastOutside,
		Duration:            0.499,
	}
	set := map[metrics.Name]*metrics.Value{
		metrics.StepSize: &m.StepSize, metrics.InitialValue: &m.InitialValue, metrics.FinalValue: &m.FinalValue,
		metrics.DeadTime: &m.DeadTime, metrics.RiseTime: &m.RiseTime, metrics.PeakValue: &m.PeakValue,
		metrics.PeakTime: &m.PeakTime, metrics.Overshoot: &m.Overshoot, metrics.SettlingTime: &m.SettlingTime,
		metrics.SteadyStateError: &m.SteadyStateError, metrics.SteadyStateErrorPct: &m.SteadyStateErrorPct,
	}
	for n, v := range over {
		*set[n] = v
	}
	return m
}

// TestJudgeStep is the truth table of the decision rule. Simple acceptance
// (ISO 14253-1:2017; ILAC-G8:09/2019; references.md §6): the measured value
// is compared with the limit itself, no guard band, and a value on the limit
// lies in the specification zone, so it passes. The product rule: a step
// passes only when every limited metric was measured and lies within its
// limits; an unmeasured limited metric makes it invalid, unless the record
// proves a failure (a sample outside the settling band later than the
// settling-time max).
func TestJudgeStep(t *testing.T) {
	for _, c := range judgeStepCases() {
		t.Run(c.name, func(t *testing.T) { checkJudgeStep(t, c) })
	}
}

// checkJudgeStep checks one case of TestJudgeStep.
func checkJudgeStep(t *testing.T, c judgeStepCase) {
	t.Helper()
	s := &spec.Spec{Limits: c.limits, Metrics: spec.MetricRules{SettlingBandPct: 2}}
	m := verdictStep(c.over, c.last)
	r := acceptance.JudgeStep(s, m)
	if r.Verdict != c.verdict {
		t.Errorf("verdict = %s, want %s", r.Verdict, c.verdict)
	}
	if got := acceptance.ReasonTexts(r.Reasons); !reflect.DeepEqual(got, c.reasons) {
		t.Errorf("reasons = %q, want %q", got, c.reasons)
	}
	if r.Index != 2 || r.StartS != 0.5 || r.From != 0 || r.To != 10 {
		t.Errorf("identity = %d %v %v→%v", r.Index, r.StartS, r.From, r.To)
	}
	// Every metric is reported; every null one has its reason.
	for _, n := range metrics.Names {
		v, _ := m.Get(n)
		got, ok := r.Metrics.Lookup(n)
		if !ok || got.OK != v.OK || (v.OK && got.V != v.V) {
			t.Errorf("Metrics[%s] = %+v, want %+v", n, got, v)
		}
		why, listed := r.Metrics.Unmeasured()[n]
		if listed == v.OK || (!v.OK && why == "") {
			t.Errorf("Unmeasured[%s] = %q, %v for value %+v", n, why, listed, v)
		}
	}
	// One check per limit, in metrics.Names order, with copies of the
	// bounds and the value only when measured.
	if len(r.Checks) != len(c.limits) {
		t.Fatalf("%d checks for %d limits", len(r.Checks), len(c.limits))
	}
	for i, ch := range r.Checks {
		if ch.Metric != s.LimitNames()[i] {
			t.Errorf("check %d is %s, want %s", i, ch.Metric, s.LimitNames()[i])
		}
		lim := c.limits[ch.Metric]
		if !reflect.DeepEqual(ch.Min, lim.Min) || !reflect.DeepEqual(ch.Max, lim.Max) {
			t.Errorf("check %s bounds = %v %v, want the spec's %v %v", ch.Metric, ch.Min, ch.Max, lim.Min, lim.Max)
		}
		v, _ := m.Get(ch.Metric)
		if (ch.Value != nil) != v.OK || (v.OK && *ch.Value != v.V) {
			t.Errorf("check %s value = %v, want %+v", ch.Metric, ch.Value, v)
		}
		if (ch.Verdict == acceptance.Pass) != (ch.Reason == "") {
			t.Errorf("check %s: verdict %s with reason %q", ch.Metric, ch.Verdict, ch.Reason)
		}
	}
}

// judgeStepCase is one case of TestJudgeStep.
type judgeStepCase struct {
	name    string
	limits  map[metrics.Name]spec.Limit
	over    map[metrics.Name]metrics.Value
	last    metrics.Value
	verdict acceptance.Verdict
	reasons []string
}

// judgeStepCases are the cases of TestJudgeStep.
func judgeStepCases() []judgeStepCase {
	unk := metrics.Unknown
	noLast := unk("step has no samples")
	return []judgeStepCase{
		{"max only, inside", map[metrics.Name]spec.Limit{"overshoot_pct": {Max: verdictF(8)}},
			nil, metrics.Known(0.2), acceptance.Pass, []string{}},
		{"max only, on the limit", map[metrics.Name]spec.Limit{"overshoot_pct": {Max: verdictF(8)}},
			map[metrics.Name]metrics.Value{metrics.Overshoot: metrics.Known(8)}, metrics.Known(0.2), acceptance.Pass, []string{}},
		{"max only, above", map[metrics.Name]spec.Limit{"overshoot_pct": {Max: verdictF(8)}},
			map[metrics.Name]metrics.Value{metrics.Overshoot: metrics.Known(9.1)}, metrics.Known(0.2), acceptance.Fail,
			[]string{"overshoot_pct 9.1 > 8 at step 2"}},
		{"min only, inside", map[metrics.Name]spec.Limit{"dead_time_s": {Min: verdictF(0.001)}},
			nil, metrics.Known(0.2), acceptance.Pass, []string{}},
		{"min only, on the limit", map[metrics.Name]spec.Limit{"dead_time_s": {Min: verdictF(0.001)}},
			map[metrics.Name]metrics.Value{metrics.DeadTime: metrics.Known(0.001)}, metrics.Known(0.2), acceptance.Pass, []string{}},
		{"min only, below", map[metrics.Name]spec.Limit{"dead_time_s": {Min: verdictF(0.001)}},
			map[metrics.Name]metrics.Value{metrics.DeadTime: metrics.Known(0.0005)}, metrics.Known(0.2), acceptance.Fail,
			[]string{"dead_time_s 0.0005 < 0.001 at step 2"}},
		{"both, inside", map[metrics.Name]spec.Limit{"final_value": {Min: verdictF(9.9), Max: verdictF(10.1)}},
			nil, metrics.Known(0.2), acceptance.Pass, []string{}},
		{"both, on min", map[metrics.Name]spec.Limit{"final_value": {Min: verdictF(9.9), Max: verdictF(10.1)}},
			map[metrics.Name]metrics.Value{metrics.FinalValue: metrics.Known(9.9)}, metrics.Known(0.2), acceptance.Pass, []string{}},
		{"both, on max", map[metrics.Name]spec.Limit{"final_value": {Min: verdictF(9.9), Max: verdictF(10.1)}},
			map[metrics.Name]metrics.Value{metrics.FinalValue: metrics.Known(10.1)}, metrics.Known(0.2), acceptance.Pass, []string{}},
		{"both, below", map[metrics.Name]spec.Limit{"final_value": {Min: verdictF(9.9), Max: verdictF(10.1)}},
			map[metrics.Name]metrics.Value{metrics.FinalValue: metrics.Known(9.87654)}, metrics.Known(0.2), acceptance.Fail,
			[]string{"final_value 9.877 < 9.9 at step 2"}},
		{"both, above", map[metrics.Name]spec.Limit{"final_value": {Min: verdictF(9.9), Max: verdictF(10.1)}},
			map[metrics.Name]metrics.Value{metrics.FinalValue: metrics.Known(10.25)}, metrics.Known(0.2), acceptance.Fail,
			[]string{"final_value 10.25 > 10.1 at step 2"}},
		{"four significant digits", map[metrics.Name]spec.Limit{"rise_time_s": {Max: verdictF(0.12)}},
			map[metrics.Name]metrics.Value{metrics.RiseTime: metrics.Known(0.123456)}, metrics.Known(0.2), acceptance.Fail,
			[]string{"rise_time_s 0.1235 > 0.12 at step 2"}},
		{"digits added to tell value from limit", map[metrics.Name]spec.Limit{"overshoot_pct": {Max: verdictF(8)}},
			map[metrics.Name]metrics.Value{metrics.Overshoot: metrics.Known(8.00001)}, metrics.Known(0.2), acceptance.Fail,
			[]string{"overshoot_pct 8.00001 > 8 at step 2"}},
		{"limited null is invalid", map[metrics.Name]spec.Limit{"rise_time_s": {Max: verdictF(0.12)}},
			map[metrics.Name]metrics.Value{metrics.RiseTime: unk("initial value unknown: only 2 samples before the step")}, metrics.Known(0.2),
			acceptance.Invalid, []string{"rise_time_s not measured at step 2: initial value unknown: only 2 samples before the step"}},
		{"null without a reason", map[metrics.Name]spec.Limit{"rise_time_s": {Max: verdictF(0.12)}},
			map[metrics.Name]metrics.Value{metrics.RiseTime: {}}, metrics.Known(0.2),
			acceptance.Invalid, []string{"rise_time_s not measured at step 2: no reason recorded"}},
		{"unlimited null does not matter", map[metrics.Name]spec.Limit{"overshoot_pct": {Max: verdictF(8)}},
			map[metrics.Name]metrics.Value{metrics.PeakTime: unk("x"), metrics.SettlingTime: unk("y")}, metrics.Known(0.2), acceptance.Pass, []string{}},
		{"settling proven too slow", map[metrics.Name]spec.Limit{"settling_time_s": {Max: verdictF(0.35)}},
			map[metrics.Name]metrics.Value{metrics.SettlingTime: unk("still outside the band at the end of the record")}, metrics.Known(0.52),
			acceptance.Fail, []string{"settling_time_s > 0.35 at step 2: still outside the ±2 % band 0.52 s after the step"}},
		{"settling unknown, last outside within max", map[metrics.Name]spec.Limit{"settling_time_s": {Max: verdictF(0.35)}},
			map[metrics.Name]metrics.Value{metrics.SettlingTime: unk("final value unknown: record ends too early")}, metrics.Known(0.3),
			acceptance.Invalid, []string{"settling_time_s not measured at step 2: final value unknown: record ends too early"}},
		{"settling unknown, last outside equals max", map[metrics.Name]spec.Limit{"settling_time_s": {Max: verdictF(0.35)}},
			map[metrics.Name]metrics.Value{metrics.SettlingTime: unk("z")}, metrics.Known(0.35),
			acceptance.Invalid, []string{"settling_time_s not measured at step 2: z"}},
		{"settling unknown, last outside unknown", map[metrics.Name]spec.Limit{"settling_time_s": {Max: verdictF(0.35)}},
			map[metrics.Name]metrics.Value{metrics.SettlingTime: unk("z")}, noLast,
			acceptance.Invalid, []string{"settling_time_s not measured at step 2: z"}},
		{"settling unknown, min only: no proof", map[metrics.Name]spec.Limit{"settling_time_s": {Min: verdictF(0.01)}},
			map[metrics.Name]metrics.Value{metrics.SettlingTime: unk("z")}, metrics.Known(0.9),
			acceptance.Invalid, []string{"settling_time_s not measured at step 2: z"}},
		{"other metric unknown, no settling proof", map[metrics.Name]spec.Limit{"rise_time_s": {Max: verdictF(0.35)}},
			map[metrics.Name]metrics.Value{metrics.RiseTime: unk("z")}, metrics.Known(0.9),
			acceptance.Invalid, []string{"rise_time_s not measured at step 2: z"}},
		{"fail and invalid: fail, failures first",
			map[metrics.Name]spec.Limit{"rise_time_s": {Max: verdictF(0.12)}, "overshoot_pct": {Max: verdictF(8)}, "dead_time_s": {Max: verdictF(0.01)}},
			map[metrics.Name]metrics.Value{metrics.DeadTime: unk("a"), metrics.RiseTime: metrics.Known(0.2), metrics.Overshoot: metrics.Known(12)}, metrics.Known(0.2),
			acceptance.Fail, []string{"rise_time_s 0.2 > 0.12 at step 2", "overshoot_pct 12 > 8 at step 2", "dead_time_s not measured at step 2: a"}},
		{"pass and invalid: invalid",
			map[metrics.Name]spec.Limit{"rise_time_s": {Max: verdictF(0.12)}, "overshoot_pct": {Max: verdictF(8)}},
			map[metrics.Name]metrics.Value{metrics.Overshoot: unk("b")}, metrics.Known(0.2),
			acceptance.Invalid, []string{"overshoot_pct not measured at step 2: b"}},
		{"large value", map[metrics.Name]spec.Limit{"peak_value": {Max: verdictF(12000)}},
			map[metrics.Name]metrics.Value{metrics.PeakValue: metrics.Known(12345.6)}, metrics.Known(0.2), acceptance.Fail,
			[]string{"peak_value 12350 > 12000 at step 2"}},
		{"tiny value", map[metrics.Name]spec.Limit{"dead_time_s": {Max: verdictF(0.00001)}},
			map[metrics.Name]metrics.Value{metrics.DeadTime: metrics.Known(0.0000456)}, metrics.Known(0.2), acceptance.Fail,
			[]string{"dead_time_s 4.56e-05 > 1e-05 at step 2"}},
		{"limit on a name that is not a metric", map[metrics.Name]spec.Limit{"jerk": {Max: verdictF(1)}},
			nil, metrics.Known(0.2), acceptance.Invalid, []string{"jerk is not a metric stepgate measures (step 2)"}},
		{"no limits", nil, nil, metrics.Known(0.2), acceptance.Pass, []string{}},
	}
}

// TestJudgeStepJSON checks that an unmeasured metric is written as null with
// its reason beside it, never as 0.
func TestJudgeStepJSON(t *testing.T) {
	s := &spec.Spec{Limits: map[metrics.Name]spec.Limit{"settling_time_s": {Max: verdictF(0.35)}}}
	m := verdictStep(map[metrics.Name]metrics.Value{metrics.SettlingTime: metrics.Unknown("record too short")}, metrics.Known(0.1))
	b := unitJSON(t, acceptance.UnitResult{Steps: []acceptance.StepResult{acceptance.JudgeStep(s, m)}})
	for _, want := range []string{`"settling_time_s": null`, `"value": null`, "\"unmeasured\": {\n            \"settling_time_s\": \"record too short\"\n", `"verdict": "invalid"`} {
		if !strings.Contains(string(b), want) {
			t.Errorf("JSON lacks %s: %s", want, b)
		}
	}
}

// TestJudgeUnit is the truth table of the unit verdict: a unit passes only
// with at least one step and every step passing (the product rule "pass
// only when every limited metric was measured and within limits"); any
// failing step fails it, even beside invalid ones.
func TestJudgeUnit(t *testing.T) {
	step := func(i int, v acceptance.Verdict, reasons ...string) acceptance.StepResult {
		return acceptance.StepResult{Index: i, Verdict: v, Reasons: acceptance.TextReasons(reasons...)}
	}
	cases := []struct {
		name    string
		steps   []acceptance.StepResult
		verdict acceptance.Verdict
		reasons []string
	}{
		{"no step", nil, acceptance.Invalid, []string{"no step found: the command never changed by min_change 0.5 mm"}},
		{"all pass", []acceptance.StepResult{step(1, acceptance.Pass), step(2, acceptance.Pass)}, acceptance.Pass, []string{}},
		{"one fail", []acceptance.StepResult{step(1, acceptance.Pass), step(2, acceptance.Fail, "f2")}, acceptance.Fail, []string{"f2"}},
		{"one invalid", []acceptance.StepResult{step(1, acceptance.Invalid, "i1"), step(2, acceptance.Pass)}, acceptance.Invalid, []string{"i1"}},
		{"invalid then fail", []acceptance.StepResult{step(1, acceptance.Invalid, "i1"), step(2, acceptance.Fail, "f2a", "f2b"), step(3, acceptance.Pass)},
			acceptance.Fail, []string{"i1", "f2a", "f2b"}},
		{"unset verdict is not a pass", []acceptance.StepResult{step(1, "")}, acceptance.Invalid, []string{}},
	}
	s := &spec.Spec{Steps: spec.StepRules{MinChange: 0.5}, ResponseUnit: "mm"}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			v, reasons := acceptance.JudgeUnit(s, c.steps)
			if got := acceptance.ReasonTexts(reasons); v != c.verdict || !reflect.DeepEqual(got, c.reasons) {
				t.Errorf("JudgeUnit = %s %q, want %s %q", v, got, c.verdict, c.reasons)
			}
		})
	}
}

// TestCount checks the tally of units by verdict.
func TestCount(t *testing.T) {
	u := func(v acceptance.Verdict) acceptance.UnitResult { return acceptance.UnitResult{Verdict: v} }
	cases := []struct {
		name  string
		units []acceptance.UnitResult
		want  acceptance.Summary
	}{
		{"none", nil, acceptance.Summary{}},
		{"mixed", []acceptance.UnitResult{u(acceptance.Pass), u(acceptance.Fail), u(acceptance.Pass), u(acceptance.Invalid), u(acceptance.Fail)},
			acceptance.Summary{Units: 5, Pass: 2, Fail: 2, Invalid: 1}},
		{"unset counts invalid", []acceptance.UnitResult{u(""), u(acceptance.Pass)}, acceptance.Summary{Units: 2, Pass: 1, Invalid: 1}},
	}
	for _, c := range cases {
		if got := acceptance.Count(c.units); got != c.want {
			t.Errorf("%s: Count = %+v, want %+v", c.name, got, c.want)
		}
	}
}

// unitJSON is a unit's record as results.json writes it.
func unitJSON(t *testing.T, u acceptance.UnitResult) []byte {
	t.Helper()
	d, err := digest.New(&acceptance.Batch{Units: []acceptance.UnitResult{u}, ReportDate: "2026-01-01"})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := jsonreport.Write(&buf, d); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}
