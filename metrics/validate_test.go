package metrics

import (
	"errors"
	"math"
	"strings"
	"testing"
)

func TestTraceValidate(t *testing.T) {
	good := func() Trace {
		return Trace{
			Time:     []float64{0, 0.001, 0.002, 0.003},
			Command:  []float64{0, 0, 1, 1},
			Response: []float64{0, 0, 0.1, 0.5},
		}
	}
	tests := []struct {
		name   string
		edit   func(*Trace)
		index  int
		signal string
		cause  error
		msg    string // exact error text; empty: no error
	}{
		{name: "valid", edit: func(*Trace) {}},
		{name: "valid with effort", edit: func(tr *Trace) { tr.Effort = []float64{0, 1, 2, 3} }},
		{name: "empty effort is absent", edit: func(tr *Trace) { tr.Effort = []float64{} }},
		{"command too short", func(tr *Trace) { tr.Command = tr.Command[:3] }, -1, "command", ErrLength,
			"trace: command: has 3 samples but time has 4"},
		{"response too long", func(tr *Trace) { tr.Response = append(tr.Response, 1) }, -1, "response", ErrLength,
			"trace: response: has 5 samples but time has 4"},
		{"effort length", func(tr *Trace) { tr.Effort = []float64{1, 2} }, -1, "effort", ErrLength,
			"trace: effort: has 2 samples but time has 4"},
		{"one sample", func(tr *Trace) { *tr = Trace{Time: []float64{0}, Command: []float64{0}, Response: []float64{0}} }, -1, "", ErrTooShort,
			"trace: has 1 samples; at least 2 are needed"},
		{"repeated time", func(tr *Trace) { tr.Time[2] = 0.001 }, 2, "time", ErrTimeOrder,
			"trace: sample index 2, time: 0.001 s is not after the previous sample's 0.001 s"},
		{"time goes back", func(tr *Trace) { tr.Time[3] = 0.0015 }, 3, "time", ErrTimeOrder,
			"trace: sample index 3, time: 0.0015 s is not after the previous sample's 0.002 s"},
		{"NaN time", func(tr *Trace) { tr.Time[1] = math.NaN() }, 1, "time", ErrNotFinite,
			"trace: sample index 1, time: value NaN is not a finite number"},
		{"infinite command", func(tr *Trace) { tr.Command[0] = math.Inf(1) }, 0, "command", ErrNotFinite,
			"trace: sample index 0, command: value +Inf is not a finite number"},
		{"NaN response", func(tr *Trace) { tr.Response[3] = math.NaN() }, 3, "response", ErrNotFinite,
			"trace: sample index 3, response: value NaN is not a finite number"},
		{"NaN effort", func(tr *Trace) { tr.Effort = []float64{0, 0, math.NaN(), 0} }, 2, "effort", ErrNotFinite,
			"trace: sample index 2, effort: value NaN is not a finite number"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			tr := good()
			tc.edit(&tr)
			err := tr.Validate()
			if tc.msg == "" {
				if err != nil {
					t.Fatalf("Validate = %v, want nil", err)
				}
				return
			}
			var se *SampleError
			if !errors.As(err, &se) {
				t.Fatalf("Validate = %v, want a *SampleError", err)
			}
			if se.Index != tc.index || se.Signal != tc.signal || !errors.Is(err, tc.cause) || err.Error() != tc.msg {
				t.Errorf("Validate = %q (index %d, signal %q, cause %v), want %q (index %d, signal %q, cause %v)",
					err, se.Index, se.Signal, se.Err, tc.msg, tc.index, tc.signal, tc.cause)
			}
		})
	}
}

func TestOptionsValidate(t *testing.T) {
	tests := []struct {
		name string
		edit func(*Options)
		want string // substring of the error; empty: valid
	}{
		{"defaults", func(*Options) {}, ""},
		{"0-100 % rise levels", func(o *Options) { o.RiseLow, o.RiseHigh = 0, 1 }, ""},
		{"whole step as final window", func(o *Options) { o.FinalWindow = 1 }, ""},
		{"levels swapped", func(o *Options) { o.RiseLow, o.RiseHigh = 0.9, 0.1 }, "RiseLow = 0.9 is not below RiseHigh = 0.1"},
		{"percent instead of fraction", func(o *Options) { o.RiseHigh = 90 }, "RiseHigh = 90: must be above 0 and at most 1"},
		{"negative low", func(o *Options) { o.RiseLow = -0.1 }, "RiseLow = -0.1"},
		{"zero band", func(o *Options) { o.Band = 0 }, "Band = 0: must be above 0 and below 1"},
		{"NaN band", func(o *Options) { o.Band = math.NaN() }, "Band = NaN"},
		{"zero dead-time level", func(o *Options) { o.DeadTimeLevel = 0 }, "DeadTimeLevel = 0"},
		{"zero final window", func(o *Options) { o.FinalWindow = 0 }, "FinalWindow = 0"},
		{"one sample", func(o *Options) { o.MinSamples = 1 }, "MinSamples = 1: must be at least 2"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			o := DefaultOptions()
			tc.edit(&o)
			err := o.Validate()
			switch {
			case tc.want == "" && err != nil:
				t.Errorf("Validate = %v, want nil", err)
			case tc.want != "" && (err == nil || !strings.Contains(err.Error(), tc.want)):
				t.Errorf("Validate = %v, want an error containing %q", err, tc.want)
			}
		})
	}
}

// TestValidatedTraceMark: measuring a validated trace gives exactly what
// measuring the same samples unvalidated gives; a slice replaced after
// Validate (here by one holding a NaN) is checked again rather than
// trusted; a trace that fails Validate carries no mark; Clone keeps it.
func TestValidatedTraceMark(t *testing.T) {
	base := rig{dt: dt, f: underdamped(0.6, 5), noise: 0.02, quant: 0.01, seed: 3}.record([]segment{{0.5, 0}, {2, 25}})
	s := FindSteps(base, 1)[0]
	o := DefaultOptions()

	plain := MeasureStep(base, s, o)
	marked := base
	if err := marked.Validate(); err != nil {
		t.Fatal(err)
	}
	if !marked.validated() || base.validated() {
		t.Fatalf("validated(): marked %v, original %v", marked.validated(), base.validated())
	}
	if got := MeasureStep(marked, s, o); got != plain {
		t.Errorf("validated trace measures differently:\n got %+v\nwant %+v", got, plain)
	}
	if c := marked.Clone(); !c.validated() {
		t.Errorf("Clone of a validated trace lost the mark")
	}

	swapped := marked
	bad := append([]float64(nil), base.Response...)
	bad[s.Start+10] = math.NaN()
	swapped.Response = bad
	if swapped.validated() {
		t.Fatalf("a replaced Response slice still counts as validated")
	}
	m := MeasureStep(swapped, s, o)
	if m.RiseTime.OK || !strings.Contains(m.RiseTime.Why, "not a finite number") {
		t.Errorf("NaN in a replaced slice: rise time %+v, want unknown for a value that is not finite", m.RiseTime)
	}

	failing := base
	failing.Time = append([]float64(nil), base.Time...)
	failing.Time[5] = failing.Time[4]
	if err := failing.Validate(); err == nil || failing.validated() {
		t.Errorf("time not increasing: Validate %v, validated() %v", err, failing.validated())
	}
}
