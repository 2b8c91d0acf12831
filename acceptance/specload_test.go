package acceptance_test

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/metrics"
	"github.com/stepgate/stepgate/templates"
)

// specloadBase is the smallest valid spec; the rule cases edit it.
const specloadBase = `spec_id: T-1
revision: A
signals:
  time: t
  command: cmd
  response: pos
steps:
  min_change: 0.5
limits:
  overshoot_pct: {max: 8}
`

// specloadEdit returns specloadBase with old replaced by new (old must
// occur), or with new appended when old is empty.
func specloadEdit(t *testing.T, old, new string) string {
	t.Helper()
	if old == "" {
		return specloadBase + new
	}
	if !strings.Contains(specloadBase, old) {
		t.Fatalf("base spec has no %q", old)
	}
	return strings.Replace(specloadBase, old, new, 1)
}

// specloadProblems parses doc and returns its problems (none for a valid
// spec), failing the test when the error is not a *SpecError.
func specloadProblems(t *testing.T, doc string) []acceptance.Problem {
	t.Helper()
	_, err := acceptance.ParseSpec([]byte(doc), "t.yaml")
	if err == nil {
		return nil
	}
	var se *acceptance.SpecError
	if !errors.As(err, &se) {
		t.Fatalf("error is %T, want *acceptance.SpecError: %v", err, err)
	}
	if se.File != "t.yaml" {
		t.Errorf("SpecError.File = %q, want t.yaml", se.File)
	}
	return se.Problems
}

// TestParseSpecRules checks every validation rule of the spec format, one
// case accepting a boundary value where the rule has one. The rules are
// stepgate's spec format; where a rule follows from an outside definition,
// the case says which.
func TestParseSpecRules(t *testing.T) {
	type edit struct{ old, new string }
	cases := []struct {
		name string
		edit edit
		// key and msg (a substring) of the single problem expected; key ""
		// means the spec is valid. line 0 skips the position check.
		key       string
		msg       string
		line, col int
	}{
		// Identification: required, printed on every report page
		// (ISO/IEC 17025:2017 §7.8.2.1, unique identification, from memory).
		{"spec_id missing", edit{"spec_id: T-1\n", ""}, "spec_id", "required", 1, 1},
		{"spec_id blank", edit{"spec_id: T-1", `spec_id: "  "`}, "spec_id", "must not be empty", 1, 10},
		{"revision missing", edit{"revision: A\n", ""}, "revision", "required", 0, 0},
		{"revision number reads as text", edit{"revision: A", "revision: 2"}, "", "", 0, 0},

		// Signals: three required, distinct columns; effort optional.
		{"time missing", edit{"  time: t\n", ""}, "signals.time", "required", 3, 1},
		{"command missing", edit{"  command: cmd\n", ""}, "signals.command", "required", 3, 1},
		{"response missing", edit{"  response: pos\n", ""}, "signals.response", "required", 3, 1},
		{"response same as command", edit{"response: pos", "response: cmd"}, "signals.response", `must differ from signals.command (both are "cmd")`, 6, 13},
		{"time same as response", edit{"time: t", "time: pos"}, "signals.response", "must differ from signals.time", 6, 13},
		{"effort optional", edit{"  response: pos\n", "  response: pos\n  effort: drive\n"}, "", "", 0, 0},
		{"effort same as time", edit{"  response: pos\n", "  response: pos\n  effort: t\n"}, "signals.effort", "must differ from signals.time", 7, 11},
		{"effort empty", edit{"  response: pos\n", "  response: pos\n  effort: \"\"\n"}, "signals.effort", "must not be empty", 7, 11},
		{"signals not a mapping", edit{"signals:\n  time: t\n  command: cmd\n  response: pos\n", "signals: [t, cmd, pos]\n"}, "signals", "must be a mapping with keys time, command, response, effort; got a list", 3, 10},

		// Time unit: SI prefixes (BIPM, The International System of Units,
		// 9th ed., 2019, Table 7: milli 10⁻³, micro 10⁻⁶).
		{"time_unit ms", edit{"", "time_unit: ms\n"}, "", "", 0, 0},
		{"time_unit us", edit{"", "time_unit: us\n"}, "", "", 0, 0},
		{"time_unit min", edit{"", "time_unit: min\n"}, "time_unit", `must be one of s, ms, us; got "min"`, 11, 12},
		{"time_unit empty", edit{"", "time_unit: \"\"\n"}, "time_unit", "must be one of s, ms, us", 11, 12},

		// Steps.
		{"min_change missing", edit{"steps:\n  min_change: 0.5\n", ""}, "steps.min_change", "required", 1, 1},
		{"min_change zero", edit{"min_change: 0.5", "min_change: 0"}, "steps.min_change", "must be > 0, got 0", 8, 15},
		{"min_change negative", edit{"min_change: 0.5", "min_change: -1"}, "steps.min_change", "must be > 0, got -1", 8, 15},
		{"min_change text", edit{"min_change: 0.5", "min_change: half"}, "steps.min_change", `must be a number, got text "half"`, 8, 15},
		{"min_change quoted number", edit{"min_change: 0.5", `min_change: "0.5"`}, "steps.min_change", `must be a number, got text "0.5"`, 8, 15},
		{"min_change infinite", edit{"min_change: 0.5", "min_change: .inf"}, "steps.min_change", "must be a finite number, got .inf", 8, 15},

		// Rise levels: reference levels strictly inside the transition
		// (IEEE Std 181-2011, reference levels between the two state levels).
		{"rise levels 5 95", edit{"", "metrics: {rise_levels_pct: [5, 95]}\n"}, "", "", 0, 0},
		{"rise levels one number", edit{"", "metrics: {rise_levels_pct: [10]}\n"}, "metrics.rise_levels_pct", "must be two numbers [low, high], got 1", 11, 28},
		{"rise levels three numbers", edit{"", "metrics: {rise_levels_pct: [10, 50, 90]}\n"}, "metrics.rise_levels_pct", "got 3", 11, 28},
		{"rise levels low 0", edit{"", "metrics: {rise_levels_pct: [0, 90]}\n"}, "metrics.rise_levels_pct", "must satisfy 0 < low < high < 100, got [0, 90]", 11, 28},
		{"rise levels high 100", edit{"", "metrics: {rise_levels_pct: [10, 100]}\n"}, "metrics.rise_levels_pct", "got [10, 100]", 11, 28},
		{"rise levels reversed", edit{"", "metrics: {rise_levels_pct: [90, 10]}\n"}, "metrics.rise_levels_pct", "got [90, 10]", 11, 28},
		{"rise levels equal", edit{"", "metrics: {rise_levels_pct: [50, 50]}\n"}, "metrics.rise_levels_pct", "got [50, 50]", 11, 28},
		{"rise levels not a list", edit{"", "metrics: {rise_levels_pct: 10}\n"}, "metrics.rise_levels_pct", "must be a list of numbers", 11, 28},
		{"rise level text", edit{"", "metrics: {rise_levels_pct: [10, high]}\n"}, "metrics.rise_levels_pct[1]", `must be a number, got text "high"`, 11, 33},

		// Settling band: a band of 0 can never be entered by a noisy signal,
		// one of 100 % or more contains the initial value.
		{"band 0", edit{"", "metrics: {settling_band_pct: 0}\n"}, "metrics.settling_band_pct", "must be > 0 and < 100, got 0", 11, 30},
		{"band 100", edit{"", "metrics: {settling_band_pct: 100}\n"}, "metrics.settling_band_pct", "got 100", 11, 30},
		{"band 150", edit{"", "metrics: {settling_band_pct: 150}\n"}, "metrics.settling_band_pct", "got 150", 11, 30},
		{"band 5", edit{"", "metrics: {settling_band_pct: 5}\n"}, "", "", 0, 0},
		{"band 99.9", edit{"", "metrics: {settling_band_pct: 99.9}\n"}, "", "", 0, 0},

		// Dead-time level: below the 50 % instant, above 0.
		{"dead level 0", edit{"", "metrics: {dead_time_level_pct: 0}\n"}, "metrics.dead_time_level_pct", "must be > 0 and < 50, got 0", 11, 32},
		{"dead level 50", edit{"", "metrics: {dead_time_level_pct: 50}\n"}, "metrics.dead_time_level_pct", "got 50", 11, 32},
		{"dead level 49", edit{"", "metrics: {dead_time_level_pct: 49}\n"}, "", "", 0, 0},

		// Final window: a fraction of the step's record, all of it at most.
		{"final window 0", edit{"", "metrics: {final_window_pct: 0}\n"}, "metrics.final_window_pct", "must be > 0 and ≤ 100, got 0", 11, 29},
		{"final window 100", edit{"", "metrics: {final_window_pct: 100}\n"}, "", "", 0, 0},
		{"final window 101", edit{"", "metrics: {final_window_pct: 101}\n"}, "metrics.final_window_pct", "got 101", 11, 29},
		{"unknown metrics key", edit{"", "metrics: {settle_band_pct: 2}\n"}, "metrics.settle_band_pct", "unknown key; valid keys here: rise_levels_pct, settling_band_pct, dead_time_level_pct, final_window_pct", 11, 11},

		// Log format. A comma cannot both separate fields and mark decimals
		// (RFC 4180 §2: fields are separated by commas).
		{"delimiter tab", edit{"", "log: {delimiter: tab}\n"}, "", "", 0, 0},
		{"delimiter pipe", edit{"", "log: {delimiter: pipe}\n"}, "log.delimiter", `must be one of auto, comma, semicolon, tab; got "pipe"`, 11, 18},
		{"decimal comma with comma", edit{"", "log: {delimiter: comma, decimal_comma: true}\n"}, "log.decimal_comma", "cannot be true with delimiter comma", 11, 40},
		{"decimal comma with semicolon", edit{"", "log: {delimiter: semicolon, decimal_comma: true}\n"}, "", "", 0, 0},
		{"decimal comma with auto", edit{"", "log: {decimal_comma: true}\n"}, "", "", 0, 0},
		{"decimal comma not bool", edit{"", "log: {decimal_comma: maybe}\n"}, "log.decimal_comma", `must be true or false, got text "maybe"`, 11, 22},

		// Limits.
		{"no limits key", edit{"limits:\n  overshoot_pct: {max: 8}\n", ""}, "limits", "at least one limit is required", 1, 1},
		{"empty limits", edit{"limits:\n  overshoot_pct: {max: 8}\n", "limits: {}\n"}, "limits", "at least one limit is required", 9, 1},
		{"unknown metric", edit{"overshoot_pct: {max: 8}", "overshot_pct: {max: 8}"}, "limits.overshot_pct", "unknown metric; valid names: step_size, initial_value, final_value, dead_time_s, rise_time_s, peak_value, peak_time_s, overshoot_pct, settling_time_s, steady_state_error, steady_state_error_pct", 10, 3},
		{"limit without bound", edit{"overshoot_pct: {max: 8}", "overshoot_pct: {}"}, "limits.overshoot_pct", "needs min, max or both", 10, 3},
		{"limit null", edit{"overshoot_pct: {max: 8}", "overshoot_pct:"}, "limits.overshoot_pct", "needs min, max or both", 10, 3},
		{"limit min only", edit{"overshoot_pct: {max: 8}", "dead_time_s: {min: 0.001}"}, "", "", 0, 0},
		{"limit min equals max", edit{"overshoot_pct: {max: 8}", "final_value: {min: 10, max: 10}"}, "", "", 0, 0},
		{"limit min above max", edit{"overshoot_pct: {max: 8}", "final_value: {min: 11, max: 10}"}, "limits.final_value.min", "must be ≤ max, got min 11 > max 10", 10, 22},
		{"signed metric may be negative", edit{"overshoot_pct: {max: 8}", "step_size: {min: -10, max: -1}"}, "", "", 0, 0},
		{"negative max on overshoot", edit{"overshoot_pct: {max: 8}", "overshoot_pct: {max: -3}"}, "limits.overshoot_pct.max", "must be ≥ 0, got -3", 10, 24},
		{"negative min on a time", edit{"overshoot_pct: {max: 8}", "rise_time_s: {min: -0.1}"}, "limits.rise_time_s.min", "must be ≥ 0, got -0.1", 10, 22},
		{"negative max on steady-state error", edit{"overshoot_pct: {max: 8}", "steady_state_error: {max: -0.1}"}, "limits.steady_state_error.max", "must be ≥ 0", 10, 29},
		{"limit not finite", edit{"overshoot_pct: {max: 8}", "overshoot_pct: {max: .nan}"}, "limits.overshoot_pct.max", "must be a finite number, got .nan", 10, 24},
		{"limit as text", edit{"overshoot_pct: {max: 8}", "overshoot_pct: {max: 8%}"}, "limits.overshoot_pct.max", `must be a number, got text "8%"`, 10, 24},
		{"limit unknown bound key", edit{"overshoot_pct: {max: 8}", "overshoot_pct: {maximum: 8}"}, "limits.overshoot_pct.maximum", "unknown key; valid keys here: min, max", 10, 19},
		{"limit as a number", edit{"overshoot_pct: {max: 8}", "overshoot_pct: 8"}, "limits.overshoot_pct", "must be a mapping with keys min, max; got 8", 10, 18},
		{"limits as a list", edit{"limits:\n  overshoot_pct: {max: 8}\n", "limits: [overshoot_pct]\n"}, "limits", "must be a mapping of metric names to {min, max}; got a list", 9, 9},

		// Report logo: PNG or JPEG only (the image formats PDF writers embed).
		{"logo png", edit{"", "report: {logo: art/logo.PNG}\n"}, "", "", 0, 0},
		{"logo jpeg", edit{"", "report: {logo: logo.jpeg}\n"}, "", "", 0, 0},
		{"logo gif", edit{"", "report: {logo: logo.gif}\n"}, "report.logo", `must be a .png, .jpg or .jpeg file, got "logo.gif"`, 11, 16},
		{"signatory unknown key", edit{"", "report: {approved_by: {name: A, title: QM}}\n"}, "report.approved_by.title", "unknown key; valid keys here: name, role", 11, 33},

		// Unknown and duplicate keys anywhere.
		{"unknown top-level key", edit{"", "limit: {}\n"}, "limit", "unknown key; valid keys here: spec_id, revision, title, signals, time_unit, response_unit, effort_unit, log, steps, metrics, limits, model, report", 11, 1},
		{"duplicate key", edit{"", "spec_id: T-2\n"}, "spec_id", "key given twice (first at line 1)", 11, 1},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			doc := specloadEdit(t, c.edit.old, c.edit.new)
			probs := specloadProblems(t, doc)
			if c.key == "" {
				if len(probs) != 0 {
					t.Fatalf("want a valid spec, got %v", probs)
				}
				return
			}
			if len(probs) != 1 {
				t.Fatalf("want 1 problem at %s, got %d: %v", c.key, len(probs), probs)
			}
			p := probs[0]
			if p.Key != c.key || !strings.Contains(p.Msg, c.msg) {
				t.Errorf("problem = %s: %s\nwant      %s: …%s…", p.Key, p.Msg, c.key, c.msg)
			}
			if c.line != 0 && (p.Line != c.line || p.Column != c.col) {
				t.Errorf("position = %d:%d, want %d:%d", p.Line, p.Column, c.line, c.col)
			}
		})
	}
}

// TestParseSpecModelRules checks the structural rules of the model section.
// A physical plant's transfer function is proper, numerator degree ≤
// denominator degree (K. Ogata, Modern Control Engineering, 5th ed., §2-3,
// from memory); the reference-test parameters of G·ωn²/(s² + 2ζωn s + ωn²)
// are positive for a stable, moving loop (references.md §2 and §4).
func TestParseSpecModelRules(t *testing.T) {
	const ref = "model:\n  reference_test: {gain: 1, static_gain: 1, damping: 0.45, natural_frequency_rad_s: 22}\n  controller: {kp: 0.55}\n"
	cases := []struct {
		name  string
		model string
		key   string // "" means valid
		msg   string
	}{
		{"reference test", ref, "", ""},
		{"plant", "model:\n  plant: {numerator: [200], denominator: [1, 20, 0]}\n  controller: {kp: 0.5}\n", "", ""},
		{"plant biproper", "model:\n  plant: {numerator: [1, 2], denominator: [1, 3]}\n  controller: {kp: 0.5}\n", "", ""},
		{"plant numerator leading zeros", "model:\n  plant: {numerator: [0, 0, 5], denominator: [1, 2]}\n  controller: {kp: 0.5}\n", "", ""},
		{"null model is no model", "model:\n", "", ""},
		{"both", "model:\n  reference_test: {gain: 1, static_gain: 1, damping: 0.45, natural_frequency_rad_s: 22}\n  plant: {numerator: [200], denominator: [1, 20, 0]}\n  controller: {kp: 0.55}\n", "model.plant", "either reference_test or plant, not both"},
		{"neither", "model:\n  controller: {kp: 0.55}\n", "model", "needs reference_test"},
		{"gain missing", strings.Replace(ref, "gain: 1, static_gain", "static_gain", 1), "model.reference_test.gain", "required"},
		{"gain zero", strings.Replace(ref, "{gain: 1", "{gain: 0", 1), "model.reference_test.gain", "must be > 0, got 0"},
		{"static gain negative", strings.Replace(ref, "static_gain: 1", "static_gain: -1", 1), "model.reference_test.static_gain", "must be > 0, got -1"},
		{"damping zero", strings.Replace(ref, "damping: 0.45", "damping: 0", 1), "model.reference_test.damping", "must be > 0, got 0"},
		{"natural frequency zero", strings.Replace(ref, "natural_frequency_rad_s: 22", "natural_frequency_rad_s: 0", 1), "model.reference_test.natural_frequency_rad_s", "must be > 0, got 0"},
		{"denominator empty", "model:\n  plant: {numerator: [200], denominator: []}\n  controller: {kp: 0.5}\n", "model.plant.denominator", "required: at least one coefficient"},
		{"denominator missing", "model:\n  plant: {numerator: [200]}\n  controller: {kp: 0.5}\n", "model.plant.denominator", "required"},
		{"denominator leading zero", "model:\n  plant: {numerator: [200], denominator: [0, 1, 20]}\n  controller: {kp: 0.5}\n", "model.plant.denominator[0]", "leading coefficient must not be 0"},
		{"numerator empty", "model:\n  plant: {numerator: [], denominator: [1, 20, 0]}\n  controller: {kp: 0.5}\n", "model.plant.numerator", "required"},
		{"numerator zero", "model:\n  plant: {numerator: [0, 0], denominator: [1, 20, 0]}\n  controller: {kp: 0.5}\n", "model.plant.numerator", "must not be all zero"},
		{"improper", "model:\n  plant: {numerator: [1, 0, 0], denominator: [1, 5]}\n  controller: {kp: 0.5}\n", "model.plant.numerator", "degree 2 exceeds the denominator's degree 1: the plant must be proper"},
		{"coefficient infinite", "model:\n  plant: {numerator: [.inf], denominator: [1, 5]}\n  controller: {kp: 0.5}\n", "model.plant.numerator[0]", "must be a finite number"},
		{"no controller", "model:\n  reference_test: {gain: 1, static_gain: 1, damping: 0.45, natural_frequency_rad_s: 22}\n", "model.controller", "kp or ki must be > 0, got kp 0 and ki 0"},
		{"integral only", strings.Replace(ref, "{kp: 0.55}", "{ki: 2}", 1), "", ""},
		{"kp negative", strings.Replace(ref, "{kp: 0.55}", "{kp: -1, ki: 1}", 1), "model.controller.kp", "must be ≥ 0, got -1"},
		{"ki negative", strings.Replace(ref, "{kp: 0.55}", "{kp: 1, ki: -1}", 1), "model.controller.ki", "must be ≥ 0, got -1"},
		{"kd negative", strings.Replace(ref, "{kp: 0.55}", "{kp: 1, kd: -0.1}", 1), "model.controller.kd", "must be ≥ 0, got -0.1"},
		{"derivative filter negative", strings.Replace(ref, "{kp: 0.55}", "{kp: 1, kd: 0.1, derivative_filter_hz: -5}", 1), "model.controller.derivative_filter_hz", "must be ≥ 0, got -5"},
		{"controller unknown key", strings.Replace(ref, "{kp: 0.55}", "{kp: 0.55, kpp: 1}", 1), "model.controller.kpp", "unknown key; valid keys here: kp, ki, kd, derivative_filter_hz"},
		{"plant dead time negative", ref + "  plant_dead_time_s: -0.1\n", "model.plant_dead_time_s", "must be ≥ 0, got -0.1"},
		{"loop", ref + "  loop: {sample_period_s: 0.001, delay_s: 0.002}\n", "", ""},
		{"loop period zero", ref + "  loop: {sample_period_s: 0}\n", "model.loop.sample_period_s", "must be > 0, got 0"},
		{"loop period missing", ref + "  loop: {delay_s: 0.002}\n", "model.loop.sample_period_s", "required"},
		{"loop delay negative", ref + "  loop: {sample_period_s: 0.001, delay_s: -0.001}\n", "model.loop.delay_s", "must be ≥ 0, got -0.001"},
		{"actuator", ref + "  actuator: {effort_limit: 0, deadband: 0}\n", "", ""},
		{"effort limit negative", ref + "  actuator: {effort_limit: -1}\n", "model.actuator.effort_limit", "must be ≥ 0, got -1"},
		{"deadband negative", ref + "  actuator: {effort_limit: 10, deadband: -0.5}\n", "model.actuator.deadband", "must be ≥ 0, got -0.5"},
		{"unknown model key", ref + "  plant_deadtime: 0\n", "model.plant_deadtime", "unknown key; valid keys here: reference_test, plant, plant_dead_time_s, controller, loop, actuator"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			probs := specloadProblems(t, specloadBase+c.model)
			if c.key == "" {
				if len(probs) != 0 {
					t.Fatalf("want a valid spec, got %v", probs)
				}
				return
			}
			if len(probs) != 1 {
				t.Fatalf("want 1 problem at %s, got %d: %v", c.key, len(probs), probs)
			}
			if p := probs[0]; p.Key != c.key || !strings.Contains(p.Msg, c.msg) || p.Line < 11 {
				t.Errorf("problem = %d:%d %s: %s\nwant       line ≥ 11 %s: …%s…", p.Line, p.Column, p.Key, p.Msg, c.key, c.msg)
			}
		})
	}
}

// TestParseSpecDocumentProblems checks problems with the file as a whole.
func TestParseSpecDocumentProblems(t *testing.T) {
	cases := []struct {
		name string
		doc  string
		want string // the whole Error() text
	}{
		{"empty", "", "t.yaml: the file is empty; `stepgate spec init` prints a template"},
		{"comments only", "# nothing\n", "t.yaml: the file is empty; `stepgate spec init` prints a template"},
		{"document marker only", "---", "t.yaml: the file holds no keys; `stepgate spec init` prints a template"},
		{"null document", "null\n", "t.yaml:1:1: the file holds no keys; `stepgate spec init` prints a template"},
		{"tagged null document", "--- !!null\n", "t.yaml:1:5: the file holds no keys; `stepgate spec init` prints a template"},
		{"not a mapping", "- a\n- b\n", "t.yaml:1:1: a spec must be a mapping of keys (spec_id, revision, title, signals, time_unit, response_unit, effort_unit, log, steps, metrics, limits, model, report), got a list"},
		{"unclosed brace", "spec_id: T-1\nlimits: {overshoot_pct: {max: 8}\n", "t.yaml:2: invalid YAML: did not find expected ',' or '}' in the part that starts on this line"},
		{"tab indent", "spec_id: T-1\nsignals:\n\ttime: t\n", "t.yaml:3: invalid YAML: found character that cannot start any token"},
		{"two documents", specloadBase + "---\nspec_id: T-2\n", "t.yaml:11:1: only one YAML document is allowed; remove the '---' separator and what follows"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			s, err := acceptance.ParseSpec([]byte(c.doc), "t.yaml")
			if err == nil {
				t.Fatalf("want an error, got spec %+v", s)
			}
			if s != nil {
				t.Errorf("spec returned with an error")
			}
			if err.Error() != c.want {
				t.Errorf("error:\n%s\nwant:\n%s", err, c.want)
			}
		})
	}
}

// TestParseSpecAllProblems checks that every problem in a file is reported,
// one per line, in file order, with file, line, column and key path.
func TestParseSpecAllProblems(t *testing.T) {
	path := filepath.Join("..", "testdata", "specs", "invalid_many.yaml")
	_, err := acceptance.LoadSpec(path)
	if err == nil {
		t.Fatal("want an error")
	}
	want := []string{
		"2:11: revision: must not be empty: the spec's revision, printed on every report page",
		`6:13: signals.response: must differ from signals.command (both are "position")`,
		"7:3: signals.efort: unknown key; valid keys here: time, command, response, effort",
		`8:12: time_unit: must be one of s, ms, us; got "min"`,
		"9:40: log.decimal_comma: cannot be true with delimiter comma: the comma cannot both separate fields and mark decimals; use semicolon or tab",
		"11:15: steps.min_change: must be > 0, got 0",
		"13:20: metrics.rise_levels_pct: must satisfy 0 < low < high < 100, got [90, 10]",
		"14:22: metrics.settling_band_pct: must be > 0 and < 100, got 100",
		"16:24: limits.overshoot_pct.max: must be ≥ 0, got -3",
		"17:3: limits.rise_tme_s: unknown metric; valid names: step_size, initial_value, final_value, dead_time_s, rise_time_s, peak_value, peak_time_s, overshoot_pct, settling_time_s, steady_state_error, steady_state_error_pct",
		"18:26: limits.settling_time_s.min: must be ≤ max, got min 0.5 > max 0.35",
		"19:3: limits.steady_state_error: needs min, max or both, e.g. {max: 8}",
		"21:47: model.plant.denominator[0]: the leading coefficient must not be 0",
		"22:3: model.controller: kp or ki must be > 0, got kp 0 and ki 0",
		"23:27: model.loop.sample_period_s: must be > 0, got 0",
		`25:9: report.logo: must be a .png, .jpg or .jpeg file, got "logo.gif"`,
	}
	for i := range want {
		want[i] = path + ":" + want[i]
	}
	got := strings.Split(err.Error(), "\n")
	if !reflect.DeepEqual(got, want) {
		t.Errorf("error lines:\n%s\nwant:\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
	var se *acceptance.SpecError
	if !errors.As(err, &se) || len(se.Problems) != len(want) {
		t.Fatalf("want a *SpecError with %d problems, got %#v", len(want), err)
	}
}

// TestParseSpecKeepsChecking checks that a rejected value does not hide the
// file's other problems, nor raise false ones about the section it was in.
func TestParseSpecKeepsChecking(t *testing.T) {
	doc := specloadEdit(t, "min_change: 0.5", "min_change: half") +
		"time_unit: min\nmetrics: {rise_levels_pct: [10, x]}\nmodel:\n  plant: [1, 2]\n  controller: {kp: -1, ki: 1}\n"
	doc = strings.Replace(doc, "overshoot_pct: {max: 8}", "overshoot_pct: 8", 1)
	want := []string{
		`t.yaml:8:15: steps.min_change: must be a number, got text "half"`,
		"t.yaml:10:18: limits.overshoot_pct: must be a mapping with keys min, max; got 8",
		`t.yaml:11:12: time_unit: must be one of s, ms, us; got "min"`,
		`t.yaml:12:33: metrics.rise_levels_pct[1]: must be a number, got text "x"`,
		"t.yaml:14:10: model.plant: must be a mapping with keys numerator, denominator; got a list",
		"t.yaml:15:20: model.controller.kp: must be ≥ 0, got -1",
	}
	_, err := acceptance.ParseSpec([]byte(doc), "t.yaml")
	if err == nil {
		t.Fatal("want an error")
	}
	if got := strings.Split(err.Error(), "\n"); !reflect.DeepEqual(got, want) {
		t.Errorf("error lines:\n%s\nwant:\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
}

// TestParseSpecAnchors checks YAML anchors, aliases and merge keys (YAML
// 1.1 merge key type, yaml.org/type/merge.html): keys of the mapping itself
// override merged ones, and problems inside merged mappings are found.
func TestParseSpecAnchors(t *testing.T) {
	doc := specloadBase + "x_unused: &tight {max: 0.1}\n"
	if probs := specloadProblems(t, doc); len(probs) != 1 || probs[0].Key != "x_unused" {
		t.Errorf("anchor on an unknown key: %v", probs)
	}
	doc = strings.Replace(specloadBase, "  overshoot_pct: {max: 8}\n",
		"  rise_time_s: &fast {max: 0.1}\n  dead_time_s: *fast\n  settling_time_s:\n    <<: *fast\n    max: 0.3\n", 1)
	s, err := acceptance.ParseSpec([]byte(doc), "t.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if got := *s.Limits["dead_time_s"].Max; got != 0.1 {
		t.Errorf("alias: dead_time_s max = %v, want 0.1", got)
	}
	if got := *s.Limits["settling_time_s"].Max; got != 0.3 {
		t.Errorf("merge override: settling_time_s max = %v, want 0.3", got)
	}
	doc = strings.Replace(specloadBase, "  overshoot_pct: {max: 8}\n",
		"  rise_time_s: &fast {maxi: 0.1}\n  settling_time_s:\n    <<: *fast\n    max: 0.3\n", 1)
	probs := specloadProblems(t, doc)
	keys := []string{}
	for _, p := range probs {
		keys = append(keys, p.Key)
	}
	if !reflect.DeepEqual(keys, []string{"limits.rise_time_s.maxi", "limits.settling_time_s.maxi"}) {
		t.Errorf("problems in a merged mapping: %v", probs)
	}
}

// TestLoadSpecFiles loads the example specs and checks what they say, the
// defaults, and the digest. SHA-256 is FIPS 180-4; the digest is recomputed
// here from the file bytes.
func TestLoadSpecFiles(t *testing.T) {
	path := filepath.Join("..", "testdata", "specs", "vd25.yaml")
	s, err := acceptance.LoadSpec(path)
	if err != nil {
		t.Fatal(err)
	}
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(data)
	if s.SHA256 != hex.EncodeToString(sum[:]) || len(s.SHA256) != 64 {
		t.Errorf("SHA256 = %q, want the file digest", s.SHA256)
	}
	if s.Source != path {
		t.Errorf("Source = %q, want %q", s.Source, path)
	}
	if s.SpecID != "VD25-EOL" || s.Revision != "B" || s.Signals != (acceptance.Signals{Time: "t", Command: "target", Response: "position", Effort: "drive"}) {
		t.Errorf("identity or signals wrong: %+v", s)
	}
	if s.Steps.MinChange != 0.5 || s.ResponseUnit != "mm" {
		t.Errorf("steps or unit wrong: %+v %q", s.Steps, s.ResponseUnit)
	}
	wantRef := &model.ReferenceTest{Gain: 1, StaticGain: 1, Damping: 0.45, NaturalFrequency: 22}
	if s.Model == nil || !reflect.DeepEqual(s.Model.ReferenceTest, wantRef) || s.Model.Plant != nil {
		t.Fatalf("model = %+v", s.Model)
	}
	if s.Model.Controller.Kp != 0.55 || s.Model.Loop == nil || *s.Model.Loop != (model.Loop{SamplePeriod: 0.001, Delay: 0.002}) ||
		s.Model.Actuator == nil || s.Model.Actuator.EffortLimit != 100 {
		t.Errorf("controller, loop or actuator wrong: %+v", s.Model)
	}
	if got, want := s.LimitNames(), []metrics.Name{"rise_time_s", "overshoot_pct", "settling_time_s", "steady_state_error"}; !reflect.DeepEqual(got, want) {
		t.Errorf("LimitNames = %v, want %v (metrics.Names order)", got, want)
	}
	if l := s.Limits["overshoot_pct"]; l.Min != nil || l.Max == nil || *l.Max != 8 {
		t.Errorf("overshoot limit = %+v", l)
	}
	// Defaults the file leaves out.
	if s.Metrics.DeadTimeLevelPct != 2 || s.Metrics.FinalWindowPct != 20 || s.Log.Delimiter != "auto" {
		t.Errorf("defaults not applied: %+v %+v", s.Metrics, s.Log)
	}

	// The second example sets a logo that exists beside it.
	path = filepath.Join("..", "testdata", "specs", "plant_loop.yaml")
	s, err = acceptance.LoadSpec(path)
	if err != nil {
		t.Fatal(err)
	}
	if s.Model == nil || s.Model.Plant == nil || !reflect.DeepEqual(s.Model.Plant.Denominator, []float64{1, 20, 0}) {
		t.Errorf("plant = %+v", s.Model)
	}
	if got, want := s.LogoPath(), filepath.Join("..", "testdata", "specs", "logo.png"); got != want {
		t.Errorf("LogoPath = %q, want %q", got, want)
	}
	if s.TimeUnit != "ms" || !s.Log.DecimalComma || s.Log.Delimiter != "semicolon" || s.Revision != "3" {
		t.Errorf("format wrong: %q %+v %q", s.TimeUnit, s.Log, s.Revision)
	}
}

// TestLoadSpecLogo checks that LoadSpec resolves the logo against the spec's
// folder and reports a missing one together with the other problems.
func TestLoadSpecLogo(t *testing.T) {
	dir := t.TempDir()
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	write("art/logo.png", "\x89PNG\r\n\x1a\n")
	cases := []struct {
		name, spec string
		want       string // "" for success, else the whole error text
	}{
		{"present", "report: {logo: art/logo.png}\n", ""},
		{"missing", "report: {logo: art/missing.png}\n",
			"s.yaml:11:16: report.logo: cannot use logo " + filepath.Join(dir, "art", "missing.png") + " (paths are relative to the spec file): no such file"},
		{"folder", "report: {logo: art.png}\n",
			"s.yaml:11:16: report.logo: " + filepath.Join(dir, "art.png") + " is a folder, not an image file"},
		{"missing with other problems", "report: {logo: art/missing.png}\ntime_unit: min\n",
			"s.yaml:11:16: report.logo: cannot use logo " + filepath.Join(dir, "art", "missing.png") + " (paths are relative to the spec file): no such file\n" +
				`s.yaml:12:12: time_unit: must be one of s, ms, us; got "min"`},
	}
	if err := os.MkdirAll(filepath.Join(dir, "art.png"), 0o755); err != nil {
		t.Fatal(err)
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := write("s.yaml", specloadBase+c.spec)
			s, err := acceptance.LoadSpec(p)
			if c.want == "" {
				if err != nil {
					t.Fatal(err)
				}
				if s.LogoPath() != filepath.Join(dir, "art", "logo.png") {
					t.Errorf("LogoPath = %q", s.LogoPath())
				}
				return
			}
			if err == nil {
				t.Fatal("want an error")
			}
			if got := strings.ReplaceAll(err.Error(), p, "s.yaml"); got != c.want {
				t.Errorf("error:\n%s\nwant:\n%s", got, c.want)
			}
		})
	}

	_, err := acceptance.LoadSpec(filepath.Join(dir, "nope.yaml"))
	if !errors.Is(err, fs.ErrNotExist) || !strings.Contains(err.Error(), "nope.yaml") {
		t.Errorf("missing file: err = %v, want one naming the file and wrapping fs.ErrNotExist", err)
	}
}

// TestSpecDefaultsAndOptions checks the defaults and their conversion to
// fractions (1 % = 0.01; BIPM SI Brochure, 9th ed., 2019, §5.4.7, from
// memory). The default levels: 10 % and 90 % reference levels (IEEE Std
// 181-2011, references.md §1); a 2 % settling band (K. Ogata, Modern Control
// Engineering, 5th ed., §5-3); the 2 % dead-time level and 20 % final window
// are stepgate's (common practice, no source).
func TestSpecDefaultsAndOptions(t *testing.T) {
	cases := []struct {
		name, extra string
		want        metrics.Options
	}{
		{"defaults", "", metrics.Options{RiseLow: 0.10, RiseHigh: 0.90, Band: 0.02, DeadTimeLevel: 0.02, FinalWindow: 0.20, MinSamples: 10}},
		{"set", "metrics: {rise_levels_pct: [5, 95], settling_band_pct: 5, dead_time_level_pct: 1, final_window_pct: 100}\n",
			metrics.Options{RiseLow: 0.05, RiseHigh: 0.95, Band: 0.05, DeadTimeLevel: 0.01, FinalWindow: 1, MinSamples: 10}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			s, err := acceptance.ParseSpec([]byte(specloadBase+c.extra), "t.yaml")
			if err != nil {
				t.Fatal(err)
			}
			o := s.Options()
			for _, f := range []struct {
				name      string
				got, want float64
			}{
				{"RiseLow", o.RiseLow, c.want.RiseLow}, {"RiseHigh", o.RiseHigh, c.want.RiseHigh},
				{"Band", o.Band, c.want.Band}, {"DeadTimeLevel", o.DeadTimeLevel, c.want.DeadTimeLevel},
				{"FinalWindow", o.FinalWindow, c.want.FinalWindow},
			} {
				if math.Abs(f.got-f.want) > 1e-15 {
					t.Errorf("%s = %v, want %v", f.name, f.got, f.want)
				}
			}
			if o.MinSamples != c.want.MinSamples {
				t.Errorf("MinSamples = %d, want %d", o.MinSamples, c.want.MinSamples)
			}
		})
	}
	s, err := acceptance.ParseSpec([]byte(specloadBase), "t.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if s.TimeUnit != "s" || s.Log.Delimiter != "auto" || !reflect.DeepEqual(s.Metrics.RiseLevelsPct, []float64{10, 90}) ||
		s.Metrics.SettlingBandPct != 2 || s.Metrics.DeadTimeLevelPct != 2 || s.Metrics.FinalWindowPct != 20 || s.Model != nil {
		t.Errorf("defaults: %+v %+v %q", s.Metrics, s.Log, s.TimeUnit)
	}
}

// TestTimeScale checks the conversion of the time column to seconds: SI
// prefixes milli = 10⁻³ and micro = 10⁻⁶ (BIPM, The International System of
// Units, 9th ed., 2019, Table 7).
func TestTimeScale(t *testing.T) {
	cases := []struct {
		unit string
		want float64
	}{
		{"s", 1}, {"", 1}, {"ms", 1e-3}, {"us", 1e-6},
	}
	for _, c := range cases {
		s := &acceptance.Spec{TimeUnit: c.unit}
		if got := s.TimeScale(); got != c.want {
			t.Errorf("TimeScale(%q) = %v, want %v", c.unit, got, c.want)
		}
	}
	if got := (&acceptance.Spec{TimeUnit: "min"}).TimeScale(); !math.IsNaN(got) {
		t.Errorf("TimeScale(min) = %v, want NaN for a unit the spec format rejects", got)
	}
}

// TestLimitNames checks that limits come in report order, metrics.Names.
func TestLimitNames(t *testing.T) {
	v := 1.0
	s := &acceptance.Spec{Limits: map[metrics.Name]acceptance.Limit{
		"steady_state_error_pct": {Max: &v}, "step_size": {Min: &v}, "overshoot_pct": {Max: &v}, "dead_time_s": {Max: &v},
	}}
	want := []metrics.Name{"step_size", "dead_time_s", "overshoot_pct", "steady_state_error_pct"}
	for i := 0; i < 5; i++ { // map order must not leak
		if got := s.LimitNames(); !reflect.DeepEqual(got, want) {
			t.Fatalf("LimitNames = %v, want %v", got, want)
		}
	}
}

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
			s, err := acceptance.LoadSpec(filepath.Join("..", "testdata", "specs", c.file))
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
	s := &acceptance.Spec{SpecID: "X", Revision: "1", Limits: map[metrics.Name]acceptance.Limit{"dead_time_s": {Min: &min}}}
	if out := s.Explain(); !strings.Contains(out, "  dead_time_s ≥ 0.001 s\n") || !strings.Contains(out, "Model: none") {
		t.Errorf("min-only limit or no model not worded:\n%s", out)
	}
}

// TestSpecTemplate checks that the template printed by `stepgate spec init`
// is a valid spec and documents every key and metric name.
func TestSpecTemplate(t *testing.T) {
	s, err := acceptance.ParseSpec([]byte(templates.SpecTemplate), "spec.yaml")
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
	collect(reflect.TypeOf(acceptance.Spec{}))
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
