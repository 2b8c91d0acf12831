package metrics_test

import (
	"encoding/binary"
	"math"
	"path/filepath"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/logs"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// fuzzSample is the size of one encoded sample: three little-endian float32
// values, the time since the previous sample, the command and the response.
const fuzzSample = 12

// fuzzMaxSamples bounds a fuzzed trace so that one execution stays fast.
const fuzzMaxSamples = 1024

// encodeTrace writes a trace in the fuzz encoding.
func encodeTrace(tr metrics.Trace) []byte {
	n := min(tr.Len(), fuzzMaxSamples)
	b := make([]byte, 0, n*fuzzSample)
	for i := 0; i < n; i++ {
		dt := 0.0
		if i > 0 {
			dt = tr.Time[i] - tr.Time[i-1]
		}
		for _, v := range []float64{dt, tr.Command[i], tr.Response[i]} {
			b = binary.LittleEndian.AppendUint32(b, math.Float32bits(float32(v)))
		}
	}
	return b
}

// decodeTrace reads the fuzz encoding; time starts at t0 and accumulates
// the encoded intervals, which may be zero, negative or not finite.
func decodeTrace(data []byte, t0 float64) metrics.Trace {
	n := min(len(data)/fuzzSample, fuzzMaxSamples)
	tr := metrics.Trace{Time: make([]float64, n), Command: make([]float64, n), Response: make([]float64, n)}
	f := func(i, k int) float64 {
		return float64(math.Float32frombits(binary.LittleEndian.Uint32(data[i*fuzzSample+4*k:])))
	}
	t := t0
	for i := 0; i < n; i++ {
		if i > 0 {
			t += f(i, 0)
		}
		tr.Time[i], tr.Command[i], tr.Response[i] = t, f(i, 1), f(i, 2)
	}
	return tr
}

// fuzzSeeds reads the logs of the repository's test data with their specs'
// formats and returns them encoded.
func fuzzSeeds(f *testing.F) [][]byte {
	var out [][]byte
	for _, set := range []struct{ spec, glob string }{
		{"../testdata/bad/specs/corpus.yaml", "../testdata/bad/*.csv"},
		{"../testdata/e2e/spec.yaml", "../testdata/e2e/*.csv"},
		{"../testdata/specs/vd25.yaml", "../testdata/logs/vd25-000123.csv"},
		{"../testdata/specs/plant_loop.yaml", "../testdata/logs/vd25-000124.csv"},
	} {
		spec, err := spec.Load(set.spec)
		if err != nil {
			f.Fatal(err)
		}
		paths, _ := filepath.Glob(set.glob)
		for _, p := range paths {
			lg, err := logs.ReadFile(p, spec.Format())
			if err != nil {
				continue // an unreadable log has no trace to seed with
			}
			out = append(out, encodeTrace(lg.Trace))
		}
	}
	if len(out) == 0 {
		f.Fatal("no seed traces in testdata")
	}
	return out
}

// FuzzMeasure checks the invariants of step measurement on arbitrary
// traces, options and limits:
//
//   - no panic; every metric is a finite number or unknown with a reason;
//     the step size is To − From whenever that is finite;
//   - times measured from the step instant (dead, rise, peak and settling
//     time, the last sample outside the band) lie between 0 and the step's
//     duration; overshoot and steady-state error are not negative;
//   - the peak is a sample of the step and no sample lies beyond it in the
//     step's direction; state levels lie within the samples they average;
//   - after the settling time every sample lies within the band around the
//     final value (the definition of settling time: K. Ogata, Modern Control
//     Engineering, 5th ed., §5-3; ANSI/ISA-51.1-1979, from memory);
//   - steps tile the record: each starts where the previous ends;
//   - the decision rule (simple acceptance, ISO 14253-1:2017): a step with a
//     measured value outside a limit fails, and a step passes only when
//     every limited metric is measured and within its limits; the unit's
//     verdict follows its steps.
func FuzzMeasure(f *testing.F) {
	for i, s := range fuzzSeeds(f) {
		f.Add(s, 0.5, 0.02, 0.2, float64(i%3), 0.3)
	}
	// A few shapes the test data lack: a constant record, one step with
	// two samples, a record whose time does not increase.
	f.Add(encodeTrace(metrics.Trace{Time: []float64{0, 1, 2}, Command: []float64{0, 0, 0}, Response: []float64{1, 1, 1}}), 0.5, 0.02, 0.2, 0.0, 1.0)
	f.Add(encodeTrace(metrics.Trace{Time: []float64{0, 1}, Command: []float64{0, 1}, Response: []float64{0, 1}}), 0.5, 0.02, 0.2, 0.0, 1.0)
	f.Add(encodeTrace(metrics.Trace{Time: []float64{0, 1, 0.5}, Command: []float64{0, 1, 1}, Response: []float64{0, 1, 1}}), 0.5, 0.02, 0.2, 0.0, 1.0)

	f.Fuzz(measureOne)
}

// measureOne is one execution of FuzzMeasure.
func measureOne(t *testing.T, data []byte, minChange, band, window, lo, hi float64) {
	tr := decodeTrace(data, 1)
	o := metrics.DefaultOptions()
	o.Band, o.FinalWindow = band, window
	spec := fuzzSpec(lo, hi)

	steps := metrics.FindSteps(tr, minChange)
	valid := tr.Validate() == nil
	var results []acceptance.StepResult
	for k, s := range steps {
		checkStepShape(t, tr, steps, k, minChange)
		var m metrics.StepMetrics
		if valid && k == 0 {
			all := metrics.Measure(tr, minChange, o)
			if len(all) != len(steps) {
				t.Fatalf("Measure found %d steps, FindSteps %d", len(all), len(steps))
			}
			m = all[0]
		} else {
			m = metrics.MeasureStep(tr, s, o)
		}
		checkMetrics(t, tr, s, m, o)
		checkUncertainty(t, tr, m, o)
		r := acceptance.JudgeStep(spec, m)
		checkVerdict(t, spec, m, r)
		results = append(results, r)
	}
	v, reasons := acceptance.JudgeUnit(spec, results)
	switch {
	case len(results) == 0 && v != acceptance.Invalid:
		t.Fatalf("unit without steps is %s", v)
	case v != acceptance.Pass && len(reasons) == 0:
		t.Fatalf("unit %s without a reason", v)
	}
	for _, r := range results {
		if v == acceptance.Pass && r.Verdict != acceptance.Pass {
			t.Fatalf("unit passes with step %d %s", r.Index, r.Verdict)
		}
		if r.Verdict == acceptance.Fail && v != acceptance.Fail {
			t.Fatalf("unit %s with failing step %d", v, r.Index)
		}
	}
	// A step that does not fit the record is refused, not read past.
	if len(data) >= 3 {
		bad := metrics.Step{Index: 1, PreStart: int(int8(data[0])), Start: int(int8(data[1])), End: int(int8(data[2])), From: 0, To: 1}
		checkMetrics(t, tr, bad, metrics.MeasureStep(tr, bad, o), o)
	}
}

// fuzzSpec limits every metric, alternately from below by lo and from above
// by hi (the settling time from above, so that the record's evidence rule
// is exercised).
func fuzzSpec(lo, hi float64) *spec.Spec {
	s := &spec.Spec{Limits: map[metrics.Name]spec.Limit{}}
	for i, n := range metrics.Names {
		l, h := lo, hi
		if i%2 == 0 && n != metrics.SettlingTime {
			s.Limits[n] = spec.Limit{Min: &l}
		} else {
			s.Limits[n] = spec.Limit{Max: &h}
		}
	}
	return s
}

// checkStepShape checks that step k of FindSteps tiles the record.
func checkStepShape(t *testing.T, tr metrics.Trace, steps []metrics.Step, k int, minChange float64) {
	s := steps[k]
	if s.Index != k+1 || s.Start < 1 || s.Start >= s.End || s.End > tr.Len() || s.PreStart > s.Start {
		t.Fatalf("step %d: %+v does not fit %d samples", k+1, s, tr.Len())
	}
	if k+1 < len(steps) && steps[k+1].Start != s.End {
		t.Fatalf("step %d ends at %d, step %d starts at %d", k+1, s.End, k+2, steps[k+1].Start)
	}
	if k+1 == len(steps) && s.End != tr.Len() {
		t.Fatalf("last step ends at %d of %d", s.End, tr.Len())
	}
	if d := math.Abs(s.To - s.From); !(d >= minChange) || d == 0 {
		t.Fatalf("step %d changes the command by %v, below %v", k+1, d, minChange)
	}
}

// checkMetrics checks the measurement invariants of one step.
func checkMetrics(t *testing.T, tr metrics.Trace, s metrics.Step, m metrics.StepMetrics, o metrics.Options) {
	for _, n := range metrics.Names {
		v, ok := m.Get(n)
		if !ok {
			t.Fatalf("metric %s missing from Get", n)
		}
		checkValue(t, string(n), v)
	}
	checkValue(t, "last outside", m.LastOutside)
	if size := s.To - s.From; m.StepSize.OK != !(math.IsNaN(size) || math.IsInf(size, 0)) || (m.StepSize.OK && m.StepSize.V != size) {
		t.Fatalf("step size %v, want %v", m.StepSize, size)
	}
	if !m.FinalValue.OK && !m.InitialValue.OK && !m.PeakValue.OK {
		return // nothing was measured; the reasons were checked
	}
	// From here the step fits a trace whose samples in its range are
	// finite and increasing (else every metric is unknown).
	ts, ys := tr.Time[s.Start:s.End], tr.Response[s.Start:s.End]
	dur := ts[len(ts)-1] - ts[0]
	eps := 1e-9 * (1 + math.Abs(dur))
	for _, c := range []struct {
		name string
		v    metrics.Value
	}{
		{"dead time", m.DeadTime}, {"rise time", m.RiseTime}, {"peak time", m.PeakTime},
		{"settling time", m.SettlingTime}, {"last outside", m.LastOutside},
	} {
		if c.v.OK && (c.v.V < -eps || c.v.V > dur+eps) {
			t.Fatalf("%s %v outside 0 … %v", c.name, c.v.V, dur)
		}
	}
	for _, c := range []struct {
		name string
		v    metrics.Value
	}{{"overshoot", m.Overshoot}, {"steady-state error", m.SteadyStateError}, {"steady-state error %", m.SteadyStateErrorPct}} {
		if c.v.OK && c.v.V < 0 {
			t.Fatalf("%s %v is negative", c.name, c.v.V)
		}
	}
	rising := s.To > s.From
	lo, hi := minMax(ys)
	if m.PeakValue.OK {
		p := m.PeakValue.V
		if (rising && p != hi) || (!rising && p != lo) {
			t.Fatalf("peak %v, samples span %v … %v (rising %v)", p, lo, hi, rising)
		}
	}
	if v := m.FinalValue; v.OK && !within(v.V, lo, hi) {
		t.Fatalf("final value %v outside the step's samples %v … %v", v.V, lo, hi)
	}
	if v := m.InitialValue; v.OK && s.Start > s.PreStart {
		plo, phi := minMax(tr.Response[s.PreStart:s.Start])
		if !within(v.V, plo, phi) {
			t.Fatalf("initial value %v outside the pre-step samples %v … %v", v.V, plo, phi)
		}
	}
	if m.SettlingTime.OK && m.FinalValue.OK {
		half := o.Band * math.Abs(s.To-s.From)
		for i, y := range ys {
			if ts[i]-ts[0] > m.SettlingTime.V+eps && math.Abs(y-m.FinalValue.V) > half {
				t.Fatalf("sample %v at %v s is outside ±%v of %v after the settling time %v", y, ts[i]-ts[0], half, m.FinalValue.V, m.SettlingTime.V)
			}
		}
	}
}

// checkValue checks that a value is finite when known and carries a reason
// when unknown.
func checkValue(t *testing.T, name string, v metrics.Value) {
	switch {
	case v.OK && (math.IsNaN(v.V) || math.IsInf(v.V, 0)):
		t.Fatalf("%s is known but %v", name, v.V)
	case !v.OK && v.Why == "":
		t.Fatalf("%s is unknown without a reason", name)
	}
}

// checkVerdict checks the decision rule on one judged step.
func checkVerdict(t *testing.T, spec *spec.Spec, m metrics.StepMetrics, r acceptance.StepResult) {
	for _, name := range spec.LimitNames() {
		v, _ := m.Get(name)
		l := spec.Limits[name]
		violated := v.OK && ((l.Min != nil && v.V < *l.Min) || (l.Max != nil && v.V > *l.Max))
		if violated && r.Verdict != acceptance.Fail {
			t.Fatalf("%s = %v breaks its limit %+v but the step is %s", name, v.V, l, r.Verdict)
		}
		if r.Verdict == acceptance.Pass && (!v.OK || violated) {
			t.Fatalf("step passes with %s = %+v against %+v", name, v, l)
		}
	}
	if r.Verdict != acceptance.Pass && len(r.Reasons) == 0 {
		t.Fatalf("step %s without a reason", r.Verdict)
	}
}

func minMax(y []float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, v := range y {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	return lo, hi
}

// within reports lo ≤ v ≤ hi up to the rounding of a mean.
func within(v, lo, hi float64) bool {
	tol := 1e-12 * math.Max(math.Abs(lo), math.Abs(hi))
	return v >= lo-tol && v <= hi+tol
}

// TestFuzzSeedsDecode checks the fuzz encoding on the test data: a seed
// decodes to the record it was made from, to float32 precision.
func TestFuzzSeedsDecode(t *testing.T) {
	spec, err := spec.Load("../testdata/bad/specs/corpus.yaml")
	if err != nil {
		t.Fatal(err)
	}
	lg, err := logs.ReadFile("../testdata/bad/good.csv", spec.Format())
	if err != nil {
		t.Fatal(err)
	}
	got := decodeTrace(encodeTrace(lg.Trace), lg.Trace.Time[0])
	if got.Len() != lg.Trace.Len() {
		t.Fatalf("%d samples, want %d", got.Len(), lg.Trace.Len())
	}
	for i := range got.Time {
		if math.Abs(got.Time[i]-lg.Trace.Time[i]) > 1e-6 || math.Abs(got.Response[i]-lg.Trace.Response[i]) > 1e-5 {
			t.Fatalf("sample %d: %v %v, want %v %v", i, got.Time[i], got.Response[i], lg.Trace.Time[i], lg.Trace.Response[i])
		}
	}
}

// checkUncertainty checks that every measured metric has a finite,
// non-negative uncertainty and every unmeasured one none, with a reason.
func checkUncertainty(t *testing.T, tr metrics.Trace, m metrics.StepMetrics, o metrics.Options) {
	t.Helper()
	u := metrics.MeasureUncertainty(tr, m, o, metrics.UncertaintyOptions{Replicates: 20})
	for i, n := range metrics.Names {
		v, uv := m.At(i), u.Standard(n)
		switch {
		case !v.OK && (uv.OK || uv.Why == ""):
			t.Fatalf("%s unknown but its uncertainty is %+v", n, uv)
		case v.OK && m.Step.Start < m.Step.End && (!uv.OK || uv.V < 0 || math.IsNaN(uv.V) || math.IsInf(uv.V, 0)):
			t.Fatalf("%s = %v measured but its uncertainty is %+v", n, v.V, uv)
		}
	}
}
