package spec_test

import (
	"fmt"

	"github.com/stepgate/stepgate/acceptance/spec"
)

// A small spec: three columns, one limit, no model.
func ExampleParse() {
	doc := []byte(`spec_id: LA-40-EOL
revision: A
signals: {time: t_ms, command: setpoint, response: position}
time_unit: ms
response_unit: mm
steps: {min_change: 0.5}
limits:
  overshoot_pct: {max: 8}
  final_value: {min: 9.95, max: 10.05}
`)
	s, err := spec.Parse(doc, "la40.yaml")
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Print(s.Explain())
	// Output:
	// Spec LA-40-EOL revision A
	//
	// Read from each log:
	//   time      column "t_ms", in ms
	//   command   column "setpoint", in mm
	//   response  column "position", in mm
	//   effort    not read (signals.effort not set)
	//   fields separated by: detected from the header row; decimal mark: point (1.5)
	//
	// Steps:
	//   a step is a change of the command by at least 0.5 mm, in one sample (an
	//   ideal step) or over several (a profiled move: ramp, trapezoid, S-curve);
	//   it starts at the first command change and its move ends when the command
	//   has held its value for 0.05 s; each is measured from its start to the
	//   next step or the end of the record
	//
	// Measurement levels:
	//   rise time between 10 % and 90 % of the transition
	//   settling band ±2 % of the step size around the final value
	//   dead time ends when the response has moved 2 % of the transition
	//   final value taken from the last 20 % of each step's record
	//
	// Limits (a unit passes only when every limited metric of every step is
	// measured and accepted under the decision rule below):
	//   9.95 ≤ final_value ≤ 10.05 mm
	//   overshoot_pct ≤ 8 %
	//
	// Decision rule (ISO/IEC 17025:2017 §7.8.6, ISO 14253-1:2017, ILAC-G8:09/2019):
	//   simple acceptance: a value within its limits passes whatever its
	//   measurement uncertainty. A value within U of a limit is reported as a
	//   conditional pass or fail; one on the limit may in truth lie outside it
	//   with a chance of up to 50 % (JCGM 106:2012).
	//   every check states its expanded uncertainty U (k = 2), evaluated from
	//   the record itself (noise, resolution, sample period)
	//   response resolution: the count found in each log; values are compared
	//   with limits at their resolution (that count, or the sample period for times)
	//
	// Model: none (no prediction, no comparison with a model)
}

// Every problem in a spec is reported at once, with line, column and key.
func ExampleParse_problems() {
	doc := []byte(`spec_id: LA-40-EOL
revision: A
signals: {time: t, command: setpoint, response: setpoint}
steps: {min_change: 0.5}
metrics: {settling_band_pct: 0}
limits:
  overshoot_pct: {max: -3}
  rise_tme_s: {max: 0.1}
`)
	_, err := spec.Parse(doc, "la40.yaml")
	fmt.Println(err)
	// Output:
	// la40.yaml:3:49: signals.response: must differ from signals.command (both are "setpoint")
	// la40.yaml:5:30: metrics.settling_band_pct: must be > 0 and < 100, got 0
	// la40.yaml:7:24: limits.overshoot_pct.max: must be ≥ 0, got -3
	// la40.yaml:8:3: limits.rise_tme_s: unknown metric; valid names: step_size, initial_value, final_value, dead_time_s, rise_time_s, peak_value, peak_time_s, overshoot_pct, settling_time_s, steady_state_error, steady_state_error_pct, move_time_s, settling_after_move_s, max_following_error
}
