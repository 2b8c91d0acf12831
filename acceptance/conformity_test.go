package acceptance_test

import (
	"strings"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// guardedSpec parses a spec with one limit on the steady-state error and
// the given decision rule and limit keys.
func guardedSpec(t *testing.T, rule, limit string) *spec.Spec {
	t.Helper()
	doc := "spec_id: T\nrevision: A\nsignals: {time: t, command: c, response: p}\nsteps: {min_change: 1}\n" +
		"decision_rule: " + rule + "\nlimits:\n  steady_state_error: " + limit + "\n"
	s, err := spec.Parse([]byte(doc), "t.yaml")
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// uncertaintyOf measures the uncertainty of a step with a known final
// value: a record with a 0.01 encoder count, so the resolution is found
// in it, and a noise-free response, so u of the final value is q/√12 and
// U = 2q/√12 = 0.00577 (GUM F.2.2.1, k = 2).
func uncertaintyOf(t *testing.T, final float64) (metrics.StepMetrics, metrics.StepUncertainty) {
	t.Helper()
	var tr metrics.Trace
	for i := 0; i < 3000; i++ {
		tt := float64(i) / 1000
		c, y := 0.0, 0.0
		if i >= 500 {
			c = 10
			y = final
			if k := i - 500; k < 950 { // a ramp of one count per sample, so the record shows its count
				y = min(final, float64(k)/100)
			}
		}
		tr.Time = append(tr.Time, tt)
		tr.Command = append(tr.Command, c)
		tr.Response = append(tr.Response, y)
	}
	if err := tr.Validate(); err != nil {
		t.Fatal(err)
	}
	o := metrics.DefaultOptions()
	m := metrics.Measure(tr, 1, o)[0]
	return m, metrics.MeasureUncertainty(tr, m, o, metrics.UncertaintyOptions{})
}

// TestConformity is the truth table of the decision rules with
// uncertainty. ILAC-G8:09/2019 §4.2 (references.md §6, §10): pass inside
// the limit by more than U, conditional pass inside within U, conditional
// fail outside within U, fail outside by more than U. ISO 14253-1:2017:
// simple acceptance accepts a value within the limit; guarded acceptance
// narrows the acceptance zone by the guard band w (w = U by default,
// JCGM 106:2012 §8). Values are compared at their resolution: a value on
// the limit, whatever its float residue, is on it.
func TestConformity(t *testing.T) {
	const U = 2 * 0.01 / 3.4641016151377544 // 2q/√12 for q = 0.01
	cases := []struct {
		name, rule, limit string
		sse               float64 // steady-state error: command 10 − final value
		verdict           acceptance.Verdict
		conf              acceptance.Conformity
		reason            string
	}{
		// The case of a 0.12 error on a 0.12 limit that float residue
		// once failed: on the limit, so inside it.
		{"on the limit, float residue", "simple", "{max: 0.12}", 0.120000000000001, acceptance.Pass, acceptance.ConditionalPass, ""},
		{"on the limit", "simple", "{max: 0.12}", 0.12, acceptance.Pass, acceptance.ConditionalPass, ""},
		{"well inside", "simple", "{max: 0.12}", 0.05, acceptance.Pass, acceptance.Conforms, ""},
		{"one count outside", "simple", "{max: 0.12}", 0.13, acceptance.Fail, acceptance.NotConforms, "steady_state_error 0.13 > 0.12"},
		{"within U outside", "simple", "{max: 0.125}", 0.13, acceptance.Fail, acceptance.ConditionalFail, "> 0.125"},
		{"guarded: on the limit", "guarded", "{max: 0.12}", 0.12, acceptance.Fail, acceptance.ConditionalPass, "within the guard band of max 0.12"},
		{"guarded: inside by more than U", "guarded", "{max: 0.12}", 0.11, acceptance.Pass, acceptance.Conforms, ""},
		{"guarded: absolute band", "guarded", "{max: 0.12, guard_band: 0.02}", 0.11, acceptance.Fail, acceptance.Conforms, "accepted up to 0.1, w = 0.02"},
		{"guarded: band of 2U", "guarded", "{max: 0.12, guard_band_u: 2}", 0.11, acceptance.Fail, acceptance.Conforms, "within the guard band"},
		{"guarded: outside", "guarded", "{max: 0.12}", 0.13, acceptance.Fail, acceptance.NotConforms, "> 0.12"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			s := guardedSpec(t, c.rule, c.limit)
			m, u := uncertaintyOf(t, 10-0.5)
			// The metric under test is set directly; its uncertainty and
			// resolution come from the record.
			m.SteadyStateError = metrics.Known(c.sse)
			if r := u.Resolution; r != 0.01 {
				t.Fatalf("resolution found %g, want 0.01", r)
			}
			r := acceptance.JudgeStepWith(s, m, &u)
			ch := r.Checks[0]
			if ch.Verdict != c.verdict || ch.Conformity != c.conf {
				t.Errorf("verdict %s, conformity %s; want %s, %s (reason %q)", ch.Verdict, ch.Conformity, c.verdict, c.conf, ch.Reason)
			}
			if !strings.Contains(ch.Reason, c.reason) || (c.reason == "") != (ch.Reason == "") {
				t.Errorf("reason %q, want …%s…", ch.Reason, c.reason)
			}
			if ch.U == nil || ch.Resolution == nil || *ch.Resolution != 0.01 {
				t.Fatalf("u %v, resolution %v; want both set, resolution 0.01", ch.U, ch.Resolution)
			}
			if got := 2 * *ch.U; got < U*0.99 || got > U*1.01 {
				t.Errorf("2u = %g, want U = 2q/√12 = %g", got, U)
			}
			if v := r.Uncertainty.Get(metrics.SteadyStateError); !v.OK || v.V != 2**ch.U {
				t.Errorf("step uncertainty of the error %+v, want U = 2u = %g", v, 2**ch.U)
			}
			if (ch.GuardBand != nil) != (c.rule == "guarded") {
				t.Errorf("guard band %v under %s", ch.GuardBand, c.rule)
			}
		})
	}
}

// TestConformityWithoutUncertainty checks a step judged without an
// uncertainty evaluation: no conformity statement, the value alone decides
// under simple acceptance, and guarded acceptance with w = U cannot decide.
func TestConformityWithoutUncertainty(t *testing.T) {
	m, _ := uncertaintyOf(t, 9.9)
	r := acceptance.JudgeStep(guardedSpec(t, "simple", "{max: 0.12}"), m)
	if c := r.Checks[0]; c.Verdict != acceptance.Pass || c.Conformity != "" || c.U != nil {
		t.Errorf("simple without U: %+v", c)
	}
	r = acceptance.JudgeStep(guardedSpec(t, "guarded", "{max: 0.12}"), m)
	if c := r.Checks[0]; c.Verdict != acceptance.Invalid || !strings.Contains(c.Reason, "guard band is a multiple of U") {
		t.Errorf("guarded without U: %+v", c)
	}
	r = acceptance.JudgeStep(guardedSpec(t, "guarded", "{max: 0.12, guard_band: 0.01}"), m)
	if c := r.Checks[0]; c.Verdict != acceptance.Pass {
		t.Errorf("guarded with an absolute band without U: %+v", c)
	}
}
