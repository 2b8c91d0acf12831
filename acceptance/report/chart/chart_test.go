package chart

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/recorder"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// secondOrder samples the closed-form unit-step response of
// ωn²/(s² + 2ζωn s + ωn²), y(t) = 1 − e^(−σt)(cos ωd t + (σ/ωd) sin ωd t),
// σ = ζωn, ωd = ωn√(1−ζ²) (K. Ogata, Modern Control Engineering, 5th ed.,
// §5-3), scaled to the step from → to at time at.
func secondOrder(zeta, wn, dt, end, at, from, to float64) *metrics.Trace {
	tr := &metrics.Trace{}
	sigma, wd := zeta*wn, wn*math.Sqrt(1-zeta*zeta)
	n := int(math.Round(end / dt))
	for k := 0; k <= n; k++ {
		t := float64(k) * dt
		cmd, y := from, from
		if t >= at-1e-12 {
			tau := t - at
			cmd = to
			y = from + (to-from)*(1-math.Exp(-sigma*tau)*(math.Cos(wd*tau)+sigma/wd*math.Sin(wd*tau)))
		}
		tr.Time = append(tr.Time, t)
		tr.Command = append(tr.Command, cmd)
		tr.Response = append(tr.Response, y)
	}
	return tr
}

func ptr(v float64) *float64 { return &v }

func TestStartIndex(t *testing.T) {
	tr := &metrics.Trace{Time: []float64{0, 0.01, 0.02, 0.03}}
	tests := []struct {
		at      float64
		want    int
		wantErr string
	}{
		{0, 0, ""}, {0.02, 2, ""}, {0.03, 3, ""},
		{0.0149, 1, ""}, // nearest sample, within half an interval
		{0.0151, 2, ""},
		{0.05, 0, "no sample at the step instant t = 0.05 s (record spans 0 s to 0.03 s)"},
		{-0.01, 0, "no sample at the step instant"},
	}
	for _, tc := range tests {
		got, err := StartIndex(tr, tc.at)
		switch {
		case tc.wantErr != "":
			if err == nil || !strings.Contains(err.Error(), tc.wantErr) {
				t.Errorf("StartIndex(%v): error %v, want %q", tc.at, err, tc.wantErr)
			}
		case err != nil || got != tc.want:
			t.Errorf("StartIndex(%v) = %d, %v; want %d", tc.at, got, err, tc.want)
		}
	}
	if _, err := StartIndex(&metrics.Trace{}, 0); err == nil {
		t.Errorf("empty record: no error")
	}
}

func TestCommandStart(t *testing.T) {
	tests := []struct {
		cmd      []float64
		from, to float64
		want     int
		ok       bool
	}{
		{[]float64{0, 0, 10, 10}, 0, 10, 2, true},
		{[]float64{10, 10}, 0, 10, 0, true}, // a simulated step that starts at the new level
		{[]float64{10, 10, 0, 0}, 10, 0, 2, true},
		{[]float64{0, 0, 0}, 0, 10, 0, false},
	}
	for _, tc := range tests {
		got, err := commandStart(&metrics.Trace{Command: tc.cmd}, tc.from, tc.to)
		if (err == nil) != tc.ok || (tc.ok && got != tc.want) {
			t.Errorf("commandStart(%v, %v → %v) = %d, %v; want %d (ok %v)", tc.cmd, tc.from, tc.to, got, err, tc.want, tc.ok)
		}
	}
}

func TestNormalise(t *testing.T) {
	tr := &metrics.Trace{
		Time:     []float64{0, 1, 2, 3, 4, 5},
		Response: []float64{10, 10, 7.5, 5, 5, 5},
	}
	// A down-step 10 → 5 from sample 1: y = (r − 10)/(5 − 10).
	gt, gy, err := Normalise(tr, 1, 6, 10, 5, 2.5)
	if err != nil {
		t.Fatal(err)
	}
	wantT := []float64{0, 1, 2, 3} // up to the first sample past the window
	wantY := []float64{0, 0.5, 1, 1}
	if len(gt) != len(wantT) || len(gy) != len(wantY) {
		t.Fatalf("Normalise = %v, %v; want %v, %v", gt, gy, wantT, wantY)
	}
	for i := range wantT {
		if gt[i] != wantT[i] || gy[i] != wantY[i] { // -0 == 0
			t.Errorf("Normalise = %v, %v; want %v, %v", gt, gy, wantT, wantY)
			break
		}
	}
	if _, _, err := Normalise(tr, 1, 6, 5, 5, 1); err == nil || !strings.Contains(err.Error(), "no size") {
		t.Errorf("zero step: error %v", err)
	}
	if _, _, err := Normalise(tr, 6, 6, 0, 1, 1); err == nil {
		t.Errorf("start past the record: no error")
	}
}

// TestDownsampleKeepsPeak reduces the closed-form response of ζ = 0.25 and
// checks that the overshoot survives: the peak is
// 1 + exp(−πζ/√(1−ζ²)) = 1.4443 at tp = π/ωd (Ogata, 5th ed., §5-3).
func TestDownsampleKeepsPeak(t *testing.T) {
	const zeta, wn = 0.25, 6.0
	tr := secondOrder(zeta, wn, 1e-4, 3, 0, 0, 1)
	for _, n := range []int{4, 50, 120, 300} {
		dt, dy := Downsample(tr.Time, tr.Response, n)
		if len(dt) > n {
			t.Errorf("n = %d: %d points", n, len(dt))
		}
		if dt[0] != 0 || dt[len(dt)-1] != tr.Time[tr.Len()-1] {
			t.Errorf("n = %d: first or last sample lost", n)
		}
		for i := 1; i < len(dt); i++ {
			if dt[i] <= dt[i-1] {
				t.Fatalf("n = %d: time not increasing at %d", n, i)
			}
		}
		peak, at := 0.0, 0.0
		for i, y := range dy {
			if y > peak {
				peak, at = y, dt[i]
			}
		}
		mp := math.Exp(-math.Pi * zeta / math.Sqrt(1-zeta*zeta))
		tp := math.Pi / (wn * math.Sqrt(1-zeta*zeta))
		if math.Abs(peak-(1+mp)) > 1e-6 || math.Abs(at-tp) > 1e-4 {
			t.Errorf("n = %d: peak %.6f at %.4f s, want %.6f at %.4f s", n, peak, at, 1+mp, tp)
		}
	}
	short := []float64{0, 1, 2}
	if gt, _ := Downsample(short, short, 10); len(gt) != 3 {
		t.Errorf("a short curve should be kept whole")
	}
}

// overlayBatch: three units with kept records (pass, fail, invalid), one
// without, a settling-time limit and an ideal prediction.
func overlayBatch() *acceptance.Batch {
	b := &acceptance.Batch{
		Limits: map[metrics.Name]spec.Limit{metrics.SettlingTime: {Max: ptr(1.2)}},
		Model: &acceptance.ModelSummary{Nominal: []acceptance.NominalPrediction{{
			From: 0, To: 10, IdealTrace: secondOrder(0.6, 5, 0.002, 4, 0, 0, 10),
		}}},
		SpecDoc: &spec.Spec{Metrics: spec.MetricRules{SettlingBandPct: 5}},
	}
	add := func(name string, v acceptance.Verdict, zeta float64, keep bool) {
		u := acceptance.UnitResult{Unit: name, Verdict: v, Steps: []acceptance.StepResult{
			{Index: 1, StartS: 0.5, From: 0, To: 10, Verdict: v},
		}}
		if keep {
			u.Trace = secondOrder(zeta, 5, 0.002, 4, 0.5, 0, 10)
		}
		b.Units = append(b.Units, u)
	}
	add("A", acceptance.Pass, 0.7, true)
	add("B", acceptance.Fail, 0.2, true)
	add("C", acceptance.Invalid, 0.5, true)
	add("D", acceptance.Pass, 0.7, false)
	return b
}

func TestForBatch(t *testing.T) {
	b := overlayBatch()
	o := ForBatch(b)
	if math.Abs(o.Window-1.8) > 1e-12 { // 1.5 × the 1.2 s settling-time limit
		t.Errorf("window %v s, want 1.8", o.Window)
	}
	if o.Band != 0.05 {
		t.Errorf("band %v, want 0.05 from settling_band_pct 5", o.Band)
	}
	if o.Steps != 4 || o.Shown != 3 || o.NoRecord != 1 || len(o.Skipped) != 0 {
		t.Errorf("steps %d shown %d no record %d skipped %v; want 4, 3, 1, none", o.Steps, o.Shown, o.NoRecord, o.Skipped)
	}
	var kinds []Kind
	for _, c := range o.Curves {
		kinds = append(kinds, c.Kind)
		if c.T[0] != 0 || c.Y[0] != 0 {
			t.Errorf("%s starts at (%v, %v), want (0, 0)", c.Label, c.T[0], c.Y[0])
		}
	}
	if fmt.Sprint(kinds) != fmt.Sprint([]Kind{StepPass, StepInvalid, StepFail, Prediction}) {
		t.Errorf("drawing order %v", kinds)
	}
	if o.PredictionKind != "ideal" {
		t.Errorf("prediction kind %q", o.PredictionKind)
	}
	// ζ = 0.2 overshoots by exp(−πζ/√(1−ζ²)) = 52.7 % (Ogata, §5-3): the
	// axis must reach above 1.527.
	if o.YMax < 1+math.Exp(-math.Pi*0.2/math.Sqrt(1-0.04)) || o.Clipped {
		t.Errorf("YMax %v clipped %v", o.YMax, o.Clipped)
	}

	// Without a settling limit the window is the longest step record.
	delete(b.Limits, metrics.SettlingTime)
	if o := ForBatch(b); math.Abs(o.Window-4) > 1e-9 {
		t.Errorf("window without a limit %v, want the 4 s prediction record", o.Window)
	}

	// A step that does not lie in its record is skipped with the reason.
	b = overlayBatch()
	b.Units[0].Steps[0].StartS = 99
	o = ForBatch(b)
	if len(o.Skipped) != 1 || !strings.Contains(o.Skipped[0], "A, step 1: no sample at the step instant") {
		t.Errorf("skipped %v", o.Skipped)
	}

	if o := forUnit(overlayBatch(), 1); o.Steps != 1 || o.Shown != 1 || len(o.Curves) != 2 {
		t.Errorf("forUnit: steps %d shown %d curves %d, want 1, 1, 2", o.Steps, o.Shown, len(o.Curves))
	}
}

func TestThin(t *testing.T) {
	b := &acceptance.Batch{Limits: map[metrics.Name]spec.Limit{}}
	tr := secondOrder(0.7, 5, 0.05, 2, 0.5, 0, 1)
	for i := 0; i < MaxCurves+100; i++ {
		v := acceptance.Pass
		if i%50 == 0 {
			v = acceptance.Fail
		}
		b.Units = append(b.Units, acceptance.UnitResult{Unit: fmt.Sprint(i), Verdict: v, Trace: tr,
			Steps: []acceptance.StepResult{{Index: 1, StartS: 0.5, From: 0, To: 1, Verdict: v}}})
	}
	o := ForBatch(b)
	fails := 0
	for _, c := range o.Curves {
		if c.Kind == StepFail {
			fails++
		}
	}
	if len(o.Curves) != MaxCurves || o.Thinned != 100 || fails != (MaxCurves+100)/50 {
		t.Errorf("curves %d thinned %d fails %d; want %d, 100, %d", len(o.Curves), o.Thinned, fails, MaxCurves, (MaxCurves+100)/50)
	}
	if n := len(o.Curves[0].T); n > PointsMany {
		t.Errorf("many curves: %d points each, want at most %d", n, PointsMany)
	}
}

func TestNiceTicks(t *testing.T) {
	tests := []struct {
		min, max float64
		labels   string
	}{
		{0, 1.8, "0.0 0.2 0.4 0.6 0.8 1.0 1.2 1.4 1.6 1.8"},
		{0, 2.4, "0.0 0.5 1.0 1.5 2.0"},
		{-0.1, 1.25, "0.0 0.2 0.4 0.6 0.8 1.0 1.2"},
		{0, 40, "0 10 20 30 40"},
		{0, 0.05, "0.00 0.01 0.02 0.03 0.04 0.05"},
	}
	for _, tc := range tests {
		var labels []string
		for _, tk := range (niceTicks{}).Ticks(tc.min, tc.max) {
			if tk.Label != "" {
				labels = append(labels, tk.Label)
			}
			if tk.Value < tc.min-1e-12 || tk.Value > tc.max+1e-12 {
				t.Errorf("%v..%v: tick %v outside", tc.min, tc.max, tk.Value)
			}
		}
		if got := strings.Join(labels, " "); got != tc.labels {
			t.Errorf("%v..%v: labels %q, want %q", tc.min, tc.max, got, tc.labels)
		}
	}
}

// TestPlotLegend draws the chart on a recording canvas and checks the
// legend names each kind of curve with its count.
func TestPlotLegend(t *testing.T) {
	p, err := ForBatch(overlayBatch()).Plot()
	if err != nil {
		t.Fatal(err)
	}
	rec := &recorder.Canvas{}
	p.Draw(draw.NewCanvas(rec, 500, 300))
	var text []string
	for _, a := range rec.Actions {
		if fs, ok := a.(*recorder.FillString); ok {
			text = append(text, fs.String)
		}
	}
	all := strings.Join(text, "|")
	for _, w := range []string{"settling band ±5 %", "steps passed (1)", "steps failed (1)", "steps invalid (1)",
		"prediction (ideal)", "time from the step instant (s)", "normalised response"} {
		if !strings.Contains(all, w) {
			t.Errorf("chart text lacks %q (has %s)", w, all)
		}
	}
}
