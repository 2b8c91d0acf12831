package spec_test

import (
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
	"github.com/stepgate/stepgate/templates"
)

// TestExplain checks the spec summary's wording of limits, levels and model.
func TestExplain(t *testing.T) {
	cases := []struct {
		name, file string
		want       []string
	}{
		{"vd25", "vd25.yaml", []string{
			"Spec VD25-EOL revision B: VD-25 vent drive, end-of-line step test",
			`  time      column "t", in s`,
			`  response  column "position", in mm`,
			"a step is a change of the command by at least 0.5 mm",
			"rise time between 10 % and 90 % of the transition",
			"settling band ±2 % of the step size around the final value",
			"  overshoot_pct ≤ 8 %\n",
			"  rise_time_s ≤ 0.12 s\n",
			"  settling_time_s ≤ 0.35 s\n",
			"  steady_state_error ≤ 0.05 mm\n",
			"G = 1, ζ = 0.45, ωn = 22 rad/s",
			"controller kp = 0.55, ki = 0, kd = 0",
			"loop sampled every 0.001 s, controller output delayed 0.002 s",
		}},
		{"plant", "plant_loop.yaml", []string{
			`  time      column "zeit_ms", in ms`,
			"fields separated by: semicolon; decimal mark: comma (1,5)",
			"  effort    not read (signals.effort not set)",
			"  0 ≤ dead_time_s ≤ 0.01 s\n",
			"  9.9 ≤ final_value ≤ 10.1 mm\n",
			"plant (200) / (s^2 + 20·s)",
			"plant dead time 0.001 s",
			"derivative filtered at 200 Hz",
			"actuator: effort limited to ±24, deadband 0.2",
		}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			s, err := spec.Load(filepath.Join("..", "..", "testdata", "specs", c.file))
			if err != nil {
				t.Fatal(err)
			}
			out := s.Explain()
			for _, w := range c.want {
				if !strings.Contains(out, w) {
					t.Errorf("Explain lacks %q:\n%s", w, out)
				}
			}
			if out != s.Explain() {
				t.Error("Explain is not deterministic")
			}
		})
	}
	min := 0.001
	s := &spec.Spec{SpecID: "X", Revision: "1", Limits: map[metrics.Name]spec.Limit{"dead_time_s": {Min: &min}}}
	if out := s.Explain(); !strings.Contains(out, "  dead_time_s ≥ 0.001 s\n") || !strings.Contains(out, "Model: none") {
		t.Errorf("min-only limit or no model not worded:\n%s", out)
	}
}

// TestExplainDecision checks the wording of the decision rule, its risk
// (JCGM 106:2012: up to 50 % for a value on the limit under simple
// acceptance; about 2.3 % at the acceptance limit for w = U, k = 2, a
// normal distribution) and each limit's optional keys.
func TestExplainDecision(t *testing.T) {
	doc := `spec_id: T-1
revision: A
signals: {time: t, command: cmd, response: pos}
steps: {min_change: 0.5}
response_unit: mm
response_resolution: 0.01
decision_rule: guarded
limits:
  overshoot_pct: {max: 8, guard_band: 0.5, min_ppk: 1.33}
  rise_time_s: {max: 0.12, guard_band_u: 2, resolution: 0.001}
  steady_state_error: {max: 0.12, min_cpk: 1.67}
`
	s, err := spec.Parse([]byte(doc), "t.yaml")
	if err != nil {
		t.Fatal(err)
	}
	out := s.Explain()
	for _, w := range []string{
		"  guarded acceptance: a value passes only inside its limits narrowed by",
		"outside its limit stays below about 2.5 % (JCGM 106:2012).",
		"  overshoot_pct ≤ 8 %\n      guard band 0.5 % inside each bound\n      the batch must reach Ppk ≥ 1.33 (overall σ)\n",
		"  rise_time_s ≤ 0.12 s\n      stated and compared in steps of 0.001 s\n      guard band 2 × U inside each bound\n",
		"  steady_state_error ≤ 0.12 mm\n      guard band U inside each bound\n      the batch must reach Cpk ≥ 1.67 (within-subgroup σ)\n",
		"  response resolution 0.01 mm (the encoder count)",
	} {
		if !strings.Contains(out, w) {
			t.Errorf("Explain lacks %q:\n%s", w, out)
		}
	}
	if s.DecisionRule != spec.RuleGuarded {
		t.Errorf("decision rule %q", s.DecisionRule)
	}
	_, err = spec.Parse([]byte(strings.Replace(doc, "decision_rule: guarded\n", "", 1)), "t.yaml")
	if err == nil || !strings.Contains(err.Error(), "applies only under decision_rule: guarded") {
		t.Errorf("guard bands without the guarded rule: err = %v", err)
	}
	plain, err := spec.Parse([]byte("spec_id: T\nrevision: A\nsignals: {time: t, command: c, response: p}\nsteps: {min_change: 1}\nlimits: {overshoot_pct: {max: 8}}\n"), "t.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if plain.DecisionRule != spec.RuleSimple || plain.Guarded() {
		t.Errorf("default decision rule %q, want simple", plain.DecisionRule)
	}
}

// TestSpecTemplate checks that the template printed by `stepgate spec init`
// is a valid spec and documents every key and metric name.
func TestSpecTemplate(t *testing.T) {
	s, err := spec.Parse([]byte(templates.SpecTemplate), "spec.yaml")
	if err != nil {
		t.Fatalf("template does not parse:\n%v", err)
	}
	if s.Model == nil || s.Model.ReferenceTest == nil || len(s.Limits) == 0 {
		t.Errorf("template lacks the model or limits: %+v", s)
	}
	var keys []string
	var collect func(reflect.Type)
	collect = func(t reflect.Type) {
		for t.Kind() == reflect.Pointer || t.Kind() == reflect.Slice || t.Kind() == reflect.Map {
			t = t.Elem()
		}
		if t.Kind() != reflect.Struct {
			return
		}
		for i := 0; i < t.NumField(); i++ {
			name, _, _ := strings.Cut(t.Field(i).Tag.Get("yaml"), ",")
			if name == "" || name == "-" {
				continue
			}
			keys = append(keys, name)
			collect(t.Field(i).Type)
		}
	}
	collect(reflect.TypeOf(spec.Spec{}))
	for _, k := range keys {
		if !strings.Contains(templates.SpecTemplate, k+":") {
			t.Errorf("template does not document key %s", k)
		}
	}
	for _, n := range metrics.Names {
		if !strings.Contains(templates.SpecTemplate, "#   "+string(n)+" ") {
			t.Errorf("template does not list metric %s", n)
		}
	}
}
