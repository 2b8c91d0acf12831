package metrics

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// constTrace is a record at a fixed sample period whose command steps from
// 0 to cmd at sample at, with the response given per sample time (seconds
// from the step instant, negative before it).
func constTrace(n, at int, cmd float64, resp func(ts float64) float64) Trace {
	var tr Trace
	for i := range n {
		ti := 1 + float64(i)*dt
		c := 0.0
		if i >= at {
			c = cmd
		}
		tr.Time = append(tr.Time, ti)
		tr.Command = append(tr.Command, c)
		tr.Response = append(tr.Response, resp(float64(i-at)*dt))
	}
	return tr
}

// TestUnknownsCarryReasons checks that a metric that cannot be measured is
// unknown with a reason a technician can act on, and that every other metric
// is still measured. The closed forms are those of references.md §2–§3.
func TestUnknownsCarryReasons(t *testing.T) {
	for _, tc := range unknownCases() {
		t.Run(tc.name, func(t *testing.T) {
			checkUnknowns(t, tc)
		})
	}
}

// checkUnknowns measures the step of tc and checks every metric and
// LastOutside against tc.want.
func checkUnknowns(t *testing.T, tc unknownCase) {
	t.Helper()
	o := DefaultOptions()
	if tc.opts != nil {
		tc.opts(&o)
	}
	var s Step
	if tc.step != nil {
		s = tc.step(tc.tr)
	} else {
		steps := FindSteps(tc.tr, 1)
		if len(steps) != 1 {
			t.Fatalf("found %d steps, want 1", len(steps))
		}
		s = steps[0]
	}
	m := MeasureStep(tc.tr, s, o)
	for _, n := range Names {
		v, _ := m.Get(n)
		if want, ok := tc.want.unknown[n]; ok {
			if v.OK {
				t.Errorf("%s = %g, want unknown (%q)", n, v.V, want)
			} else if !strings.Contains(v.Why, want) {
				t.Errorf("%s reason %q, want it to contain %q", n, v.Why, want)
			}
			continue
		}
		if !v.OK {
			if v.Why == "" {
				t.Errorf("%s unknown without a reason", n)
			}
			if _, ok := tc.want.known[n]; ok {
				t.Errorf("%s unknown (%s), want %g", n, v.Why, tc.want.known[n])
			}
			continue
		}
		if want, ok := tc.want.known[n]; ok && math.Abs(v.V-want) > tc.want.tol {
			t.Errorf("%s = %.9g, want %.9g ± %g", n, v.V, want, tc.want.tol)
		}
	}
	if math.IsNaN(tc.want.last) {
		if m.LastOutside.OK || m.LastOutside.Why == "" {
			t.Errorf("LastOutside = %+v, want unknown with a reason", m.LastOutside)
		}
	} else {
		near(t, "LastOutside", m.LastOutside, tc.want.last, 1e-9)
	}
}

// unknownWant is what a case of TestUnknownsCarryReasons expects.
type unknownWant struct {
	unknown map[Name]string // metric → substring of its reason
	known   map[Name]float64
	tol     float64
	last    float64 // expected LastOutside; NaN: unknown
}

// unknownCase is a record with a metric that cannot be measured.
type unknownCase struct {
	name string
	tr   Trace
	step func(tr Trace) Step // nil: the single step FindSteps finds
	opts func(*Options)
	want unknownWant
}

// unknownCases are the records of TestUnknownsCarryReasons. The closed
// forms are those of references.md §2–§3.
func unknownCases() []unknownCase {
	ogata := underdamped(0.6, 5) // Ogata 5th ed. Example 5-1 (from memory)
	return []unknownCase{
		{
			// Record ends 0.5 s after the step, before the 0.785 s peak.
			name: "record ends before settling",
			tr:   rig{dt: dt, f: ogata}.record([]segment{{0.5, 0}, {0.5, 25}}),
			want: unknownWant{
				unknown: map[Name]string{
					FinalValue:          "record ends 0.5 s after the step, before the response settles",
					RiseTime:            "final value unknown: record ends",
					DeadTime:            "final value unknown",
					Overshoot:           "final value unknown",
					SettlingTime:        "final value unknown: record ends",
					SteadyStateError:    "final value unknown",
					SteadyStateErrorPct: "final value unknown",
				},
				// y(0.5) = 1 − e^(−1.5)(cos 2 + 0.75 sin 2) = 0.9406 of the
				// step (closed form), outside ±2 % of the command: the last
				// sample is outside the band centred on the command.
				known: map[Name]float64{StepSize: 25, InitialValue: 0, PeakValue: 25 * ogata(0.5), PeakTime: 0.5},
				tol:   1e-9, last: 0.5,
			},
		},
		{
			// First order, τ = 1 s, recorded for 1.5 s: still rising.
			name: "slow first order cut short",
			tr:   rig{dt: dt, f: firstOrder(1)}.record([]segment{{1, 0}, {1.5, 10}}),
			want: unknownWant{
				unknown: map[Name]string{
					FinalValue:   "record ends 1.5 s after the step",
					SettlingTime: "final value unknown",
					RiseTime:     "final value unknown",
				},
				known: map[Name]float64{StepSize: 10, InitialValue: 0, PeakValue: 10 * (1 - math.Exp(-1.5)), PeakTime: 1.5},
				tol:   1e-9, last: 1.5,
			},
		},
		{
			// A glitch on the very last sample: the final value rejects
			// it, but the record ends outside the band, so by definition
			// the settling time is unknown while LastOutside shows where.
			name: "last sample outside the band",
			tr: func() Trace {
				tr := rig{dt: dt, f: firstOrder(0.05)}.record([]segment{{0.5, 0}, {1, 25}})
				tr.Response[len(tr.Response)-1] += 3
				return tr
			}(),
			want: unknownWant{
				unknown: map[Name]string{SettlingTime: "still outside the ±0.5 band around 25 at the end of the record, 1 s after the step"},
				// Overshoot (28 − 25)/25 = 12 %; the final value of a
				// first-order tail is short of 25 by < 1e-6 of the step.
				known: map[Name]float64{FinalValue: 25, InitialValue: 0, SteadyStateError: 0, Overshoot: 12},
				tol:   1e-5, last: 1,
			},
		},
		{
			name: "too few samples",
			tr:   constTrace(105, 100, 25, func(float64) float64 { return 0 }),
			want: unknownWant{
				unknown: allBut(StepSize, "step has only 5 samples (0.004 s); 10 are needed to measure it"),
				known:   map[Name]float64{StepSize: 25},
				last:    0.004,
			},
		},
		{
			// The drive never moves: there is no transition to time, but
			// the response is settled (at the wrong place), so the
			// settling time is 0 by definition and the error is 100 %.
			name: "response never moves",
			tr:   constTrace(3000, 500, 25, func(float64) float64 { return 0.003 }),
			want: unknownWant{
				unknown: map[Name]string{
					RiseTime:  "response moved only 0 (from 0.003 to 0.003), within the ±0.5 settling band: no transition to time",
					DeadTime:  "no transition to time",
					Overshoot: "no transition to time",
				},
				known: map[Name]float64{
					InitialValue: 0.003, FinalValue: 0.003, PeakValue: 0.003, PeakTime: 0,
					SettlingTime: 0, SteadyStateError: 24.997, SteadyStateErrorPct: 99.988,
				},
				tol: 1e-9, last: 0,
			},
		},
		{
			// Reversed polarity: the response goes down for an up-step.
			name: "response moves against the command",
			tr: constTrace(3000, 500, 25, func(ts float64) float64 {
				if ts < 0 {
					return 0
				}
				return -25 * firstOrder(0.05)(ts)
			}),
			want: unknownWant{
				unknown: map[Name]string{RiseTime: "against the command change of 25", Overshoot: "against the command"},
				// The response settles (at −25), so the band is centred on
				// the final value and the last sample outside it is the one
				// before τ·ln 50 = 0.1956 s (references.md §3).
				known: map[Name]float64{FinalValue: -25, SteadyStateError: 50, SteadyStateErrorPct: 200, PeakValue: 0, PeakTime: 0},
				tol:   1e-5, last: 0.195,
			},
		},
		{
			// Sustained oscillation of ±2 around the command: no steady
			// final level.
			name: "sustained oscillation",
			tr: constTrace(4000, 500, 25, func(ts float64) float64 {
				if ts < 0 {
					return 0
				}
				return 25 + 2*math.Sin(2*math.Pi*3*ts)
			}),
			want: unknownWant{
				unknown: map[Name]string{
					FinalValue:   "response does not hold a steady level by the end of the record",
					SettlingTime: "final value unknown",
				},
				known: map[Name]float64{InitialValue: 0, PeakValue: 27, StepSize: 25},
				// Final value unknown, so the band is ±0.5 around the
				// command: 25 + 2 sin(6πt) last leaves it asin(0.25)/(6π)
				// before the zero crossing at 3.5 s; the last sample outside
				// is the one at or before that instant.
				tol: 1e-3, last: math.Floor((3.5-math.Asin(0.25)/(6*math.Pi))/dt) * dt,
			},
		},
		{
			name: "step two samples into the record",
			tr:   constTrace(2000, 2, 25, func(ts float64) float64 { return 25 * firstOrder(0.05)(math.Max(ts, 0)) }),
			want: unknownWant{
				unknown: map[Name]string{
					InitialValue: "only 2 samples before the step; 3 are needed for the initial value",
					RiseTime:     "initial value unknown: only 2 samples",
				},
				known: map[Name]float64{FinalValue: 25, SettlingTime: 0.05 * math.Log(50)},
				tol:   1e-5, last: 0.195,
			},
		},
		{
			// The response is still ramping when the step comes.
			name: "not steady before the step",
			tr:   constTrace(2000, 500, 25, func(ts float64) float64 { return 25*firstOrder(0.05)(math.Max(ts, 0)) + math.Min(ts, 0)*4 }),
			want: unknownWant{
				unknown: map[Name]string{InitialValue: "response is not steady before the step: its level drifts by 0.5 over the 0.25 s before it (limit 0.25)"},
				known:   map[Name]float64{FinalValue: 25},
				tol:     1e-5, last: 0.195,
			},
		},
		{
			name: "invalid options",
			tr:   rig{dt: dt, f: ogata}.record([]segment{{0.5, 0}, {2, 25}}),
			opts: func(o *Options) { o.RiseLow, o.RiseHigh = 0.9, 0.1 },
			want: unknownWant{
				unknown: allBut(StepSize, "metrics options: RiseLow = 0.9 is not below RiseHigh = 0.1"),
				known:   map[Name]float64{StepSize: 25},
				last:    math.NaN(),
			},
		},
		{
			name: "step outside the record",
			tr:   rig{dt: dt, f: ogata}.record([]segment{{0.5, 0}, {2, 25}}),
			step: func(tr Trace) Step { return Step{Index: 1, Start: 500, End: 9000, From: 0, To: 25} },
			want: unknownWant{
				unknown: allBut(StepSize, "step 1 spans samples 500..8999 (pre-step from 0), which do not fit a record of 2501 samples"),
				known:   map[Name]float64{StepSize: 25},
				last:    math.NaN(),
			},
		},
		{
			name: "non-finite sample inside the step",
			tr: func() Trace {
				tr := rig{dt: dt, f: ogata}.record([]segment{{0.5, 0}, {2, 25}})
				tr.Response[700] = math.NaN()
				return tr
			}(),
			want: unknownWant{
				unknown: allBut(StepSize, "trace: sample index 700, response: value NaN is not a finite number"),
				known:   map[Name]float64{StepSize: 25},
				last:    math.NaN(),
			},
		},
	}
}

// allBut marks every metric except keep unknown with the same reason.
func allBut(keep Name, why string) map[Name]string {
	m := map[Name]string{}
	for _, n := range Names {
		if n != keep {
			m[n] = why
		}
	}
	return m
}

// TestNoStep checks that a record whose command never changes by minChange
// has no steps and no metrics, rather than metrics of an invented step.
func TestNoStep(t *testing.T) {
	tr := constTrace(1000, 1000, 25, func(float64) float64 { return 0 })
	for i := range tr.Command {
		tr.Command[i] = 0.004 * math.Sin(float64(i)) // jitter below minChange
	}
	if got := FindSteps(tr, 0.01); got != nil {
		t.Errorf("FindSteps = %+v, want none", got)
	}
	if got := Measure(tr, 0.01, DefaultOptions()); got != nil {
		t.Errorf("Measure = %+v, want none", got)
	}
}

// TestUnknownIsNullInJSON checks that an unknown metric is written as null,
// never as 0, and a known one as its number.
func TestUnknownIsNullInJSON(t *testing.T) {
	m := MeasureStep(constTrace(105, 100, 25, func(float64) float64 { return 0 }), Step{Index: 1, Start: 100, End: 105, To: 25}, DefaultOptions())
	b, err := json.Marshal(map[string]Value{"size": m.StepSize, "rise": m.RiseTime})
	if err != nil {
		t.Fatal(err)
	}
	if got, want := string(b), `{"rise":null,"size":25}`; got != want {
		t.Errorf("JSON %s, want %s", got, want)
	}
}
