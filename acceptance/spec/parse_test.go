package spec_test

import (
	"errors"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/stepgate/stepgate/acceptance/spec"
)

// baseSpec is the smallest valid spec; the rule cases edit it.
const baseSpec = `spec_id: T-1
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

// editSpec returns baseSpec with old replaced by new (old must
// occur), or with new appended when old is empty.
func editSpec(t *testing.T, old, new string) string {
	t.Helper()
	if old == "" {
		return baseSpec + new
	}
	if !strings.Contains(baseSpec, old) {
		t.Fatalf("base spec has no %q", old)
	}
	return strings.Replace(baseSpec, old, new, 1)
}

// problemsOf parses doc and returns its problems (none for a valid
// spec), failing the test when the error is not a *Error.
func problemsOf(t *testing.T, doc string) []spec.Problem {
	t.Helper()
	_, err := spec.Parse([]byte(doc), "t.yaml")
	if err == nil {
		return nil
	}
	var se *spec.Error
	if !errors.As(err, &se) {
		t.Fatalf("error is %T, want *spec.Error: %v", err, err)
	}
	if se.File != "t.yaml" {
		t.Errorf("Error.File = %q, want t.yaml", se.File)
	}
	return se.Problems
}

// TestParseRules checks every validation rule of the spec format, one
// case accepting a boundary value where the rule has one. The rules are
// stepgate's spec format; where a rule follows from an outside definition,
// the case says which.
func TestParseRules(t *testing.T) {
	for _, c := range parseRuleCases() {
		t.Run(c.name, func(t *testing.T) { checkParseRule(t, c) })
	}
}

// checkParseRule checks one case of TestParseRules.
func checkParseRule(t *testing.T, c parseRuleCase) {
	t.Helper()
	doc := editSpec(t, c.edit.old, c.edit.new)
	probs := problemsOf(t, doc)
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
}

// edit replaces old by new in the base spec.
type edit struct{ old, new string }

// parseRuleCase is one case of TestParseRules.
type parseRuleCase struct {
	name string
	edit edit
	// key and msg (a substring) of the single problem expected; key ""
	// means the spec is valid. line 0 skips the position check.
	key       string
	msg       string
	line, col int
}

// parseRuleCases are the cases of TestParseRules.
func parseRuleCases() []parseRuleCase {
	return []parseRuleCase{
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
		{"steady_s set", edit{"min_change: 0.5", "min_change: 0.5\n  steady_s: 0.2"}, "", "", 0, 0},
		{"steady_s zero", edit{"min_change: 0.5", "min_change: 0.5\n  steady_s: 0"}, "steps.steady_s", "must be > 0 and ≤ 10, got 0", 9, 13},
		{"steady_s negative", edit{"min_change: 0.5", "min_change: 0.5\n  steady_s: -0.1"}, "steps.steady_s", "must be > 0 and ≤ 10, got -0.1", 9, 13},
		{"steady_s too long", edit{"min_change: 0.5", "min_change: 0.5\n  steady_s: 30"}, "steps.steady_s", "must be > 0 and ≤ 10, got 30", 9, 13},
		{"steady_s text", edit{"min_change: 0.5", "min_change: 0.5\n  steady_s: long"}, "steps.steady_s", `must be a number, got text "long"`, 9, 13},

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
		{"unknown metric", edit{"overshoot_pct: {max: 8}", "overshot_pct: {max: 8}"}, "limits.overshot_pct", "unknown metric; valid names: step_size, initial_value, final_value, dead_time_s, rise_time_s, peak_value, peak_time_s, overshoot_pct, settling_time_s, steady_state_error, steady_state_error_pct, move_time_s, settling_after_move_s, max_following_error", 10, 3},
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
		{"limit as a number", edit{"overshoot_pct: {max: 8}", "overshoot_pct: 8"}, "limits.overshoot_pct", "must be a mapping with keys min, max, resolution, guard_band, guard_band_u, min_ppk, min_cpk; got 8", 10, 18},
		{"limits as a list", edit{"limits:\n  overshoot_pct: {max: 8}\n", "limits: [overshoot_pct]\n"}, "limits", "must be a mapping of metric names to {min, max}; got a list", 9, 9},

		// Decision rules (ISO 14253-1:2017; ILAC-G8:09/2019): simple or
		// guarded acceptance; a guard band only narrows the acceptance zone
		// under guarded acceptance, in the metric's unit or as a multiple of
		// U, and must leave a zone between two bounds.
		{"rule simple", edit{"", "decision_rule: simple\n"}, "", "", 0, 0},
		{"rule guarded", edit{"", "decision_rule: guarded\n"}, "", "", 0, 0},
		{"rule unknown", edit{"", "decision_rule: strict\n"}, "decision_rule", `must be simple (a value within its limits passes) or guarded`, 11, 16},
		{"guard band under guarded", edit{"overshoot_pct: {max: 8}", "overshoot_pct: {max: 8, guard_band: 0.5}\ndecision_rule: guarded"}, "", "", 0, 0},
		{"guard band in U", edit{"overshoot_pct: {max: 8}", "overshoot_pct: {max: 8, guard_band_u: 1}\ndecision_rule: guarded"}, "", "", 0, 0},
		{"guard band under simple", edit{"overshoot_pct: {max: 8}", "overshoot_pct: {max: 8, guard_band: 0.5}"}, "limits.overshoot_pct.guard_band", "applies only under decision_rule: guarded", 10, 27},
		{"guard band negative", edit{"overshoot_pct: {max: 8}", "overshoot_pct: {max: 8, guard_band_u: -1}\ndecision_rule: guarded"}, "limits.overshoot_pct.guard_band_u", "must be ≥ 0, got -1", 10, 41},
		{"both guard bands", edit{"overshoot_pct: {max: 8}", "overshoot_pct: {max: 8, guard_band: 0.5, guard_band_u: 1}\ndecision_rule: guarded"}, "limits.overshoot_pct.guard_band_u", "not both", 10, 44},
		{"guard bands leave no zone", edit{"overshoot_pct: {max: 8}", "final_value: {min: 9, max: 10, guard_band: 0.5}\ndecision_rule: guarded"}, "limits.final_value.guard_band", "0.5 at each bound leaves no acceptance zone between min 9 and max 10", 10, 46},

		// Resolution and required indices.
		{"response resolution", edit{"", "response_resolution: 0.01\n"}, "", "", 0, 0},
		{"response resolution zero", edit{"", "response_resolution: 0\n"}, "response_resolution", "must be > 0: the encoder count", 11, 22},
		{"metric resolution", edit{"overshoot_pct: {max: 8}", "steady_state_error: {max: 0.12, resolution: 0.01}"}, "", "", 0, 0},
		{"metric resolution negative", edit{"overshoot_pct: {max: 8}", "steady_state_error: {max: 0.12, resolution: -0.01}"}, "limits.steady_state_error.resolution", "must be > 0: the step the values are stated in, got -0.01", 10, 47},
		{"min ppk", edit{"overshoot_pct: {max: 8}", "overshoot_pct: {max: 8, min_ppk: 1.33, min_cpk: 1.33}"}, "", "", 0, 0},
		{"min ppk zero", edit{"overshoot_pct: {max: 8}", "overshoot_pct: {max: 8, min_ppk: 0}"}, "limits.overshoot_pct.min_ppk", "must be > 0", 10, 36},

		// Report logo: PNG or JPEG only (the image formats PDF writers embed).
		{"logo png", edit{"", "report: {logo: art/logo.PNG}\n"}, "", "", 0, 0},
		{"logo jpeg", edit{"", "report: {logo: logo.jpeg}\n"}, "", "", 0, 0},
		{"logo gif", edit{"", "report: {logo: logo.gif}\n"}, "report.logo", `must be a .png, .jpg or .jpeg file, got "logo.gif"`, 11, 16},
		{"signatory unknown key", edit{"", "report: {approved_by: {name: A, title: QM}}\n"}, "report.approved_by.title", "unknown key; valid keys here: name, role", 11, 33},

		// Unknown and duplicate keys anywhere.
		{"unknown top-level key", edit{"", "limit: {}\n"}, "limit", "unknown key; valid keys here: spec_id, revision, title, signals, time_unit, response_unit, effort_unit, log, steps, metrics, limits, axes, decision_rule, response_resolution, model, report", 11, 1},
		{"duplicate key", edit{"", "spec_id: T-2\n"}, "spec_id", "key given twice (first at line 1)", 11, 1},
	}
}

// TestParseModelRules checks the structural rules of the model section.
// A physical plant's transfer function is proper, numerator degree ≤
// denominator degree (K. Ogata, Modern Control Engineering, 5th ed., §2-3,
// from memory); the reference-test parameters of G·ωn²/(s² + 2ζωn s + ωn²)
// are positive for a stable, moving loop (references.md §2 and §4).
func TestParseModelRules(t *testing.T) {
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
			probs := problemsOf(t, baseSpec+c.model)
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

// TestParseDocumentProblems checks problems with the file as a whole.
func TestParseDocumentProblems(t *testing.T) {
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
		{"not a mapping", "- a\n- b\n", "t.yaml:1:1: a spec must be a mapping of keys (spec_id, revision, title, signals, time_unit, response_unit, effort_unit, log, steps, metrics, limits, axes, decision_rule, response_resolution, model, report, line), got a list"},
		{"unclosed brace", "spec_id: T-1\nlimits: {overshoot_pct: {max: 8}\n", "t.yaml:2: invalid YAML: did not find expected ',' or '}' in the part that starts on this line"},
		{"tab indent", "spec_id: T-1\nsignals:\n\ttime: t\n", "t.yaml:3: invalid YAML: found character that cannot start any token"},
		{"two documents", baseSpec + "---\nspec_id: T-2\n", "t.yaml:11:1: only one YAML document is allowed; remove the '---' separator and what follows"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			s, err := spec.Parse([]byte(c.doc), "t.yaml")
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

// TestParseAllProblems checks that every problem in a file is reported,
// one per line, in file order, with file, line, column and key path.
func TestParseAllProblems(t *testing.T) {
	path := filepath.Join("..", "..", "testdata", "specs", "invalid_many.yaml")
	_, err := spec.Load(path)
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
		"17:3: limits.rise_tme_s: unknown metric; valid names: step_size, initial_value, final_value, dead_time_s, rise_time_s, peak_value, peak_time_s, overshoot_pct, settling_time_s, steady_state_error, steady_state_error_pct, move_time_s, settling_after_move_s, max_following_error",
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
	var se *spec.Error
	if !errors.As(err, &se) || len(se.Problems) != len(want) {
		t.Fatalf("want a *Error with %d problems, got %#v", len(want), err)
	}
}

// TestParseKeepsChecking checks that a rejected value does not hide the
// file's other problems, nor raise false ones about the section it was in.
func TestParseKeepsChecking(t *testing.T) {
	doc := editSpec(t, "min_change: 0.5", "min_change: half") +
		"time_unit: min\nmetrics: {rise_levels_pct: [10, x]}\nmodel:\n  plant: [1, 2]\n  controller: {kp: -1, ki: 1}\n"
	doc = strings.Replace(doc, "overshoot_pct: {max: 8}", "overshoot_pct: 8", 1)
	want := []string{
		`t.yaml:8:15: steps.min_change: must be a number, got text "half"`,
		"t.yaml:10:18: limits.overshoot_pct: must be a mapping with keys min, max, resolution, guard_band, guard_band_u, min_ppk, min_cpk; got 8",
		`t.yaml:11:12: time_unit: must be one of s, ms, us; got "min"`,
		`t.yaml:12:33: metrics.rise_levels_pct[1]: must be a number, got text "x"`,
		"t.yaml:14:10: model.plant: must be a mapping with keys numerator, denominator; got a list",
		"t.yaml:15:20: model.controller.kp: must be ≥ 0, got -1",
	}
	_, err := spec.Parse([]byte(doc), "t.yaml")
	if err == nil {
		t.Fatal("want an error")
	}
	if got := strings.Split(err.Error(), "\n"); !reflect.DeepEqual(got, want) {
		t.Errorf("error lines:\n%s\nwant:\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
}

// TestParseAnchors checks YAML anchors, aliases and merge keys (YAML
// 1.1 merge key type, yaml.org/type/merge.html): keys of the mapping itself
// override merged ones, and problems inside merged mappings are found.
func TestParseAnchors(t *testing.T) {
	doc := baseSpec + "x_unused: &tight {max: 0.1}\n"
	if probs := problemsOf(t, doc); len(probs) != 1 || probs[0].Key != "x_unused" {
		t.Errorf("anchor on an unknown key: %v", probs)
	}
	doc = strings.Replace(baseSpec, "  overshoot_pct: {max: 8}\n",
		"  rise_time_s: &fast {max: 0.1}\n  dead_time_s: *fast\n  settling_time_s:\n    <<: *fast\n    max: 0.3\n", 1)
	s, err := spec.Parse([]byte(doc), "t.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if got := *s.Limits["dead_time_s"].Max; got != 0.1 {
		t.Errorf("alias: dead_time_s max = %v, want 0.1", got)
	}
	if got := *s.Limits["settling_time_s"].Max; got != 0.3 {
		t.Errorf("merge override: settling_time_s max = %v, want 0.3", got)
	}
	doc = strings.Replace(baseSpec, "  overshoot_pct: {max: 8}\n",
		"  rise_time_s: &fast {maxi: 0.1}\n  settling_time_s:\n    <<: *fast\n    max: 0.3\n", 1)
	probs := problemsOf(t, doc)
	keys := []string{}
	for _, p := range probs {
		keys = append(keys, p.Key)
	}
	if !reflect.DeepEqual(keys, []string{"limits.rise_time_s.maxi", "limits.settling_time_s.maxi"}) {
		t.Errorf("problems in a merged mapping: %v", probs)
	}
}
