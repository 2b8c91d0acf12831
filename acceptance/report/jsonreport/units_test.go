package jsonreport

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"reflect"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/batch"
	"github.com/stepgate/stepgate/acceptance/demo"
	"github.com/stepgate/stepgate/acceptance/logs"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// checkSameBytes fails when Write's bytes for b differ from the reference,
// showing the first differing line.
func checkSameBytes(t *testing.T, b *acceptance.Batch) {
	t.Helper()
	var got bytes.Buffer
	if err := writeBatch(&got, b, digest.ReportID(b)); err != nil {
		t.Fatal(err)
	}
	want := referenceJSON(t, b)
	if bytes.Equal(got.Bytes(), want) {
		return
	}
	gl, wl := strings.Split(got.String(), "\n"), strings.Split(string(want), "\n")
	for i := 0; i < max(len(gl), len(wl)); i++ {
		var g, w string
		if i < len(gl) {
			g = gl[i]
		}
		if i < len(wl) {
			w = wl[i]
		}
		if g != w {
			t.Fatalf("results.json differs from the reference at line %d:\n got %q\nwant %q", i+1, g, w)
		}
	}
	t.Fatalf("results.json differs from the reference (%d bytes, want %d)", got.Len(), len(want))
}

// demoBatch runs the invented demo line once per test binary and returns
// its batch. Units that get a page keep their record and step curves, which
// results.json must leave out.
var demoBatch = sync.OnceValues(func() (*acceptance.Batch, error) {
	dir, err := tempDir()
	if err != nil {
		return nil, err
	}
	specPath, logDir, err := demo.Write(dir, demo.Options{Units: 60, Duration: 6})
	if err != nil {
		return nil, err
	}
	spec, err := spec.Load(specPath)
	if err != nil {
		return nil, err
	}
	files, err := logs.FindLogs([]string{logDir}, nil)
	if err != nil {
		return nil, err
	}
	b, _, err := batch.Run(context.Background(), spec, files, batch.Options{
		ReportDate: "2026-12-01", Traces: batch.KeepAllTraces,
		Tool: acceptance.ToolInfo{Name: "stepgate", Version: "test"},
	})
	return b, err
})

// demoDir is the directory the demo logs are written to, shared by the
// tests and benchmarks of one test binary and removed by TestMain.
var demoDir string

func tempDir() (string, error) {
	if demoDir == "" {
		return "", fmt.Errorf("no temporary directory (TestMain did not run)")
	}
	return demoDir, nil
}

func TestMain(m *testing.M) {
	dir, err := os.MkdirTemp("", "jsonreport-demo-")
	if err != nil {
		fmt.Println(err)
		os.Exit(1)
	}
	demoDir = dir
	code := m.Run()
	os.RemoveAll(dir)
	os.Exit(code)
}

// The demo line's batch (model, fits, predictions, gaps, evidence, failed
// and invalid units) encodes to exactly the reference's bytes.
func TestWriteDemoBatch(t *testing.T) {
	b, err := demoBatch()
	if err != nil {
		t.Fatal(err)
	}
	// The comparison is only as good as what the batch holds.
	var fits, predicted, unmeasured, gaps, evidence, traces, curves int
	verdicts := map[acceptance.Verdict]int{}
	for i := range b.Units {
		u := &b.Units[i]
		verdicts[u.Verdict]++
		if u.Fit != nil {
			fits++
		}
		if u.Trace != nil {
			traces++
		}
		for j := range u.Steps {
			s := &u.Steps[j]
			if s.Predicted != nil {
				predicted++
				if len(s.Predicted.Metrics.Unmeasured()) > 0 {
					unmeasured++
				}
			}
			if s.Gap != nil {
				gaps++
			}
			if s.Evidence != nil {
				evidence++
			}
			if s.Curve != nil {
				curves++
			}
		}
	}
	if b.Model == nil || fits == 0 || predicted == 0 || gaps == 0 || evidence == 0 || traces == 0 || curves == 0 ||
		verdicts[acceptance.Pass] == 0 || verdicts[acceptance.Fail] == 0 || verdicts[acceptance.Invalid] == 0 {
		t.Fatalf("demo batch lacks content to compare: model %v, fits %d, predictions %d, gaps %d, evidence %d, traces %d, curves %d, verdicts %v",
			b.Model != nil, fits, predicted, gaps, evidence, traces, curves, verdicts)
	}
	t.Logf("%d units; predictions with unknown metrics: %d", len(b.Units), unmeasured)
	checkSameBytes(t, b)
}

// Numbers at the edges of encoding/json's float formatting: the 'f'/'e'
// switch at 1e-6 and 1e21, negative zero, the smallest subnormal and the
// largest finite number.
var extremes = []float64{
	1e-7, -1e-7, 1e-6, 9.999999999999999e-7, 1e21, -1e21, 9.999999999999999e20, 1e20,
	math.Copysign(0, -1), 0, 5e-324, -5e-324, 1.7976931348623157e308, -1.7976931348623157e308,
	2.2250738585072014e-308, 0.1, 1.0 / 3, 123456789.125, 12345678901234567890, 1e-10, 3e-100, 4.5e+100,
}

// Strings that encoding/json escapes: HTML characters, U+2028 and U+2029,
// invalid UTF-8, control characters, quotes and backslashes.
var awkward = []string{
	"<script>alert('&')</script>",
	"line\u2028sep\u2029para",
	"bad \xff\xfe utf-8 \xe2\x80 cut \xed\xa0\x80 surrogate \xc0\xaf overlong",
	"ctl \x00\x01\x07\x08\x0b\x0e\x1b\x1f\x7f \b\f\n\r\t",
	`"quoted" back\slash /slash`,
	"é ü 日本 🎉 \u00a0 \ufeff \U0010ffff",
	"",
	"=1+1",
}

func floatPtr(v float64) *float64 { return &v }

// metricsWith returns a set with every metric measured, the i-th from vals
// (cycled), except the metrics named in unknown, which get those reasons.
func metricsWith(vals []float64, unknown map[metrics.Name]metrics.Value) acceptance.MetricSet {
	m := map[metrics.Name]metrics.Value{}
	for i, n := range metrics.Names {
		if v, ok := unknown[n]; ok {
			m[n] = v
			continue
		}
		m[n] = metrics.Known(vals[i%len(vals)])
	}
	return acceptance.MetricsOf(m)
}

// fixtureUnits returns hand-built units that between them set every
// exported field of every type reachable from acceptance.UnitResult to a
// value other than its zero (TestFixtureCoversEveryField holds them to
// this), and also the zero, nil and empty forms where they encode
// differently.
func fixtureUnits() []acceptance.UnitResult {
	trace := &metrics.Trace{Time: []float64{0, 1}, Command: []float64{0, 1}, Response: []float64{0, 1}, Effort: []float64{0, 1}}
	full := acceptance.StepResult{
		Index: 1, Axis: "X <&>", StartS: 0.5, From: -0.0, To: 25, Verdict: acceptance.Fail,
		Reasons: acceptance.TextReasons(awkward...),
		Metrics: metricsWith(extremes, map[metrics.Name]metrics.Value{
			metrics.SettlingTime:     metrics.Unknown("record ends <before> settling & \u2028"),
			metrics.DeadTime:         {}, // no reason: reported as "no reason recorded"
			metrics.RiseTime:         metrics.Unknown("   "),
			metrics.SteadyStateError: {V: math.NaN(), Why: "computed value is not finite"},
			metrics.PeakTime:         metrics.Unknown(awkward[2]),
		}),
		Uncertainty: metricsWith([]float64{0.9, 1e-7, 0}, map[metrics.Name]metrics.Value{metrics.SettlingTime: metrics.Unknown("")}),
		Checks: []acceptance.Check{
			{Metric: "overshoot_pct", Value: floatPtr(9.1), Min: floatPtr(-1e-7), Max: floatPtr(8), Verdict: acceptance.Fail, Reason: "overshoot_pct 9.1 > 8 <&>",
				U: floatPtr(0.45), Conformity: acceptance.ConditionalFail, Resolution: floatPtr(1e-7), GuardBand: floatPtr(0.9)},
			{Metric: "settling_time_s", Verdict: acceptance.Invalid, Reason: awkward[3]},
			{Metric: metrics.Name(awkward[0]), Value: floatPtr(5e-324), Max: floatPtr(1e21), Verdict: acceptance.Pass},
		},
		Predicted: &acceptance.Prediction{Kind: "realised", Metrics: metricsWith([]float64{0.25, 1e-7, 3}, map[metrics.Name]metrics.Value{
			metrics.Overshoot: metrics.Unknown("no overshoot"), metrics.DeadTime: metrics.Unknown(""),
		})},
		Gap: acceptance.GapsOf(map[metrics.Name]*float64{
			"overshoot_pct": floatPtr(-1.7976931348623157e308), "rise_time_s": floatPtr(1e-7),
			"dead_time_s": floatPtr(math.Copysign(0, -1)), "step_size": floatPtr(1e21), "not_a_metric": floatPtr(1),
		}),
		Evidence: &acceptance.StepEvidence{
			EffortSaturatedPct: metrics.Known(42.5), EffortLimit: metrics.Known(1e-7), FinalDrift: metrics.Unknown("<short>"),
		},
		Curve: &acceptance.StepCurve{Window: 1, Y: []float32{0, 0.5, 1}},
	}
	allKnown := acceptance.StepResult{
		Index: 2, StartS: 2.5, From: 25, To: 0, Verdict: acceptance.Pass,
		Reasons:   []acceptance.Reason{},
		Metrics:   metricsWith([]float64{1, 2.5, 1e-6}, nil),
		Checks:    []acceptance.Check{},
		Predicted: &acceptance.Prediction{Kind: "ideal", Metrics: metricsWith([]float64{-0.5}, nil)},
		Gap:       acceptance.GapsOf(nil),
		Evidence:  &acceptance.StepEvidence{EffortSaturatedPct: metrics.Unknown("no effort"), EffortLimit: metrics.Unknown(""), FinalDrift: metrics.Known(0)},
	}
	bare := acceptance.StepResult{Index: 3, Verdict: acceptance.Invalid, Metrics: acceptance.MetricsOf(nil)}
	var zeroStep acceptance.StepResult // every metric the zero Value
	return []acceptance.UnitResult{
		{
			Unit: awkward[0], File: awkward[1], SHA256: "0123456789abcdef",
			Metadata: map[string]string{
				"station": "EOL-2", "serial": "VD25-261101", "": "empty key", "\xffkey": "bad key",
				"<k>": awkward[3], "z\u2028": "", "Zeta": "upper sorts first", "é": awkward[5],
			},
			Verdict: acceptance.Fail, Reasons: []acceptance.Reason{
				{Kind: acceptance.AboveMax, Metric: metrics.Overshoot, Step: 1, Value: 9.1, Limit: 8, Text: "overshoot_pct 9.1 > 8 at step 1"},
				{Text: awkward[2]},
			},
			Steps:   []acceptance.StepResult{full, allKnown, bare, zeroStep},
			Samples: 3500, Attempt: 2, Attempts: 3, Lot: "L-42 <&>", Shift: "night \u2028",
			FileTime: time.Date(2026, 11, 30, 6, 0, 0, 0, time.UTC),
			Fit: &acceptance.Fit{
				Step: 1, StaticGain: metrics.Known(1.0000000000000002), Damping: metrics.Known(0.45),
				NaturalFrequency: metrics.Known(1.7976931348623157e308), DeadTime: metrics.Known(5e-324),
				RMSResidual: metrics.Known(-1e-7), Why: "fit <converged> & \u2029",
			},
			Causes: []string{"loop_delay", "gain_spread"},
			Trace:  trace,
			Axes: []acceptance.AxisResult{
				{Name: "X <&>", Verdict: acceptance.Fail, Reasons: acceptance.TextReasons("axis X: overshoot")},
				{Name: "", Verdict: acceptance.Pass, Reasons: []acceptance.Reason{}},
				{Name: "lift", Verdict: acceptance.Invalid},
			},
		},
		// nil slices and maps encode as null, no fit is omitted.
		{Unit: "nil", File: "nil.csv", Verdict: acceptance.Invalid},
		// Empty slices and maps encode as [] and {}; a fit that failed.
		{
			Unit: "empty", Metadata: map[string]string{}, Reasons: []acceptance.Reason{}, Steps: []acceptance.StepResult{},
			Fit:    &acceptance.Fit{Why: "too few samples", StaticGain: metrics.Unknown("x")},
			Causes: []string{},
		},
		{Unit: "bare steps", Steps: []acceptance.StepResult{bare}, Reasons: acceptance.TextReasons(""), Fit: &acceptance.Fit{}},
		{}, // the zero unit
	}
}

// Hand-built units, alone and together, encode to exactly the reference's
// bytes.
func TestWriteFixture(t *testing.T) {
	units := fixtureUnits()
	cases := []struct {
		name  string
		units []acceptance.UnitResult
	}{{"all", units}}
	for i := range units {
		cases = append(cases, struct {
			name  string
			units []acceptance.UnitResult
		}{fmt.Sprintf("unit %d %q", i, units[i].Unit), units[i : i+1]})
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			checkSameBytes(t, &acceptance.Batch{Units: c.units, Limits: map[metrics.Name]spec.Limit{}})
		})
	}
}

// zeroAllowed lists the fields, as "package.Type.Field", that the fixture
// may leave at their zero value everywhere. Add a field only when its zero
// value is the point (and say why); a field added to the result types
// belongs in fixtureUnits and in the encoder.
var zeroAllowed = map[string]string{}

// Every exported field of every type reachable from UnitResult is set to a
// non-zero value somewhere in the fixture, so that a field added later must
// be added to the fixture, where TestWriteFixture checks that the encoder
// writes it.
func TestFixtureCoversEveryField(t *testing.T) {
	seen := map[string]bool{}
	collectFields(reflect.TypeFor[acceptance.UnitResult](), seen, map[reflect.Type]bool{})
	for _, u := range fixtureUnits() {
		markFields(reflect.ValueOf(u), seen)
	}
	if len(seen) < 20 {
		t.Fatalf("found only %d fields: %v", len(seen), seen)
	}
	for f, ok := range seen {
		if !ok && zeroAllowed[f] == "" {
			t.Errorf("fixtureUnits leaves %s at its zero value everywhere: set it in the fixture and encode it in the encoder", f)
		}
	}
}

// fieldKey names a struct field as "package.Type.Field".
func fieldKey(t reflect.Type, f reflect.StructField) string {
	return t.String() + "." + f.Name
}

// notInResults lists the fields, as "package.Type.Field", that results.json
// leaves out: records and chart curves kept for the other reports. The
// fixture still sets them, to show that they stay out.
var notInResults = map[string]bool{
	"acceptance.UnitResult.Trace":    true,
	"acceptance.StepResult.Curve":    true,
	"acceptance.UnitResult.FileTime": true,
}

// encoded reports whether results.json holds field f of type t.
func encoded(t reflect.Type, f reflect.StructField) bool {
	return !notInResults[fieldKey(t, f)]
}

// collectFields adds every exported field of every struct type reachable
// from t that results.json holds, unmarked, to seen.
func collectFields(t reflect.Type, seen map[string]bool, visited map[reflect.Type]bool) {
	switch t.Kind() {
	case reflect.Pointer, reflect.Slice, reflect.Array:
		collectFields(t.Elem(), seen, visited)
	case reflect.Map:
		collectFields(t.Key(), seen, visited)
		collectFields(t.Elem(), seen, visited)
	case reflect.Struct:
		if visited[t] {
			return
		}
		visited[t] = true
		for i := range t.NumField() {
			f := t.Field(i)
			if f.IsExported() {
				seen[fieldKey(t, f)] = false // until markFields finds a value
			}
			if encoded(t, f) {
				collectFields(f.Type, seen, visited)
			}
		}
	}
}

// markFields marks in seen the exported fields that hold a non-zero value
// somewhere in v.
func markFields(v reflect.Value, seen map[string]bool) {
	switch v.Kind() {
	case reflect.Pointer:
		if !v.IsNil() {
			markFields(v.Elem(), seen)
		}
	case reflect.Slice, reflect.Array:
		for i := range v.Len() {
			markFields(v.Index(i), seen)
		}
	case reflect.Map:
		for it := v.MapRange(); it.Next(); {
			markFields(it.Key(), seen)
			markFields(it.Value(), seen)
		}
	case reflect.Struct:
		t := v.Type()
		for i := range t.NumField() {
			f := t.Field(i)
			if f.IsExported() && !v.Field(i).IsZero() {
				seen[fieldKey(t, f)] = true
			}
			if encoded(t, f) {
				markFields(v.Field(i), seen)
			}
		}
	}
}

// A unit with a number that is not finite fails as encoding/json fails,
// wherever the number is; an unknown value's number is never written.
func TestWriteNonFinite(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	step := func(f func(s *acceptance.StepResult)) acceptance.UnitResult {
		s := acceptance.StepResult{Index: 1, Metrics: acceptance.MetricsOf(nil)}
		f(&s)
		return acceptance.UnitResult{Unit: "U1", File: "u1.csv", Steps: []acceptance.StepResult{s}}
	}
	bad := map[string]acceptance.UnitResult{
		"start_s": step(func(s *acceptance.StepResult) { s.StartS = nan }),
		"to":      step(func(s *acceptance.StepResult) { s.To = -inf }),
		"metric":  step(func(s *acceptance.StepResult) { s.Metrics.Set(metrics.Overshoot, metrics.Value{V: inf, OK: true}) }),
		"check":   step(func(s *acceptance.StepResult) { s.Checks = []acceptance.Check{{Min: &nan}} }),
		"gap": step(func(s *acceptance.StepResult) {
			s.Gap = acceptance.GapsOf(map[metrics.Name]*float64{"step_size": &inf})
		}),
		"prediction": step(func(s *acceptance.StepResult) {
			s.Predicted = &acceptance.Prediction{Metrics: metricsWith([]float64{1}, map[metrics.Name]metrics.Value{metrics.PeakValue: {V: nan, OK: true}})}
		}),
		"evidence": step(func(s *acceptance.StepResult) {
			s.Evidence = &acceptance.StepEvidence{FinalDrift: metrics.Value{V: nan, OK: true}}
		}),
		"fit":            {Unit: "U1", Fit: &acceptance.Fit{Damping: metrics.Value{V: -inf, OK: true}}},
		"second of many": step(func(s *acceptance.StepResult) { s.From = nan }),
	}
	for name, u := range bad {
		t.Run(name, func(t *testing.T) {
			units := []acceptance.UnitResult{u}
			if name == "second of many" {
				units = []acceptance.UnitResult{{Unit: "U0"}, u, {Unit: "U2"}}
			}
			b := &acceptance.Batch{Units: units}
			_, werr := json.MarshalIndent(refOf(b), "", "  ")
			if werr == nil {
				t.Fatal("MarshalIndent accepted a number that is not finite")
			}
			err := writeBatch(io.Discard, b, "id")
			if err == nil {
				t.Fatal("Write accepted a number that is not finite")
			}
			if !strings.Contains(err.Error(), `unit "U1"`) {
				t.Errorf("error %q does not name the unit", err)
			}
		})
	}
	t.Run("unknown", func(t *testing.T) {
		s := acceptance.StepResult{Metrics: acceptance.MetricsOf(map[metrics.Name]metrics.Value{"overshoot_pct": {V: nan, Why: "not finite"}})}
		ev := &acceptance.StepEvidence{EffortLimit: metrics.Value{V: inf}}
		s.Evidence = ev
		checkSameBytes(t, &acceptance.Batch{Units: []acceptance.UnitResult{{Steps: []acceptance.StepResult{s}}}})
	})
}

// BenchmarkWrite writes results.json of the demo line's batch (60 units
// of three steps each, with a model) with encoding/json through the
// reference types ("reference") and with the encoder ("encoder"). The bytes
// per operation are the JSON written.
func BenchmarkWrite(b *testing.B) {
	batch, err := demoBatch()
	if err != nil {
		b.Fatal(err)
	}
	for _, c := range []struct {
		name string
		f    func(io.Writer, *acceptance.Batch) error
	}{
		{"reference", func(w io.Writer, b *acceptance.Batch) error { return json.NewEncoder(w).Encode(refOf(b)) }},
		{"encoder", func(w io.Writer, b *acceptance.Batch) error { return writeBatch(w, b, "id") }},
	} {
		b.Run(c.name, func(b *testing.B) {
			var n countingWriter
			if err := c.f(&n, batch); err != nil {
				b.Fatal(err)
			}
			b.SetBytes(int64(n))
			b.ReportAllocs()
			b.ResetTimer()
			for b.Loop() {
				if err := c.f(&n, batch); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(batch.Units)), "ns/unit")
		})
	}
}

// countingWriter discards what it is given and counts the bytes.
type countingWriter int

func (c *countingWriter) Write(p []byte) (int, error) {
	*c += countingWriter(len(p))
	return len(p), nil
}
