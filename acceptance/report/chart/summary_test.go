package chart

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/recorder"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// drawnText draws a plot on a recording canvas and returns every string it
// set, joined with "|".
func drawnText(t *testing.T, p *plot.Plot) string {
	t.Helper()
	rec := &recorder.Canvas{}
	p.Draw(draw.NewCanvas(rec, 500, 300))
	var text []string
	for _, a := range rec.Actions {
		if fs, ok := a.(*recorder.FillString); ok {
			text = append(text, fs.String)
		}
	}
	return strings.Join(text, "|")
}

func TestPareto(t *testing.T) {
	if _, err := Pareto(nil, 10); err == nil {
		t.Errorf("no causes: no error")
	}
	causes := []digest.Cause{
		{Verdict: acceptance.Fail, Key: "fail max settling_time_s", Label: "settling time above its max", Units: 6},
		{Verdict: acceptance.Invalid, Key: "log cannot be read", Label: "log cannot be read", Units: 1},
	}
	for i := 0; i < MaxBars+3; i++ {
		causes = append(causes, digest.Cause{Verdict: acceptance.Invalid, Key: string(rune('a' + i)), Label: "reason " + string(rune('a'+i)), Units: 1})
	}
	p, err := Pareto(causes, 40)
	if err != nil {
		t.Fatal(err)
	}
	text := drawnText(t, p)
	// 6 of 40 units is 15 %; 1 of 40 is 2.5 %, printed rounded.
	for _, w := range []string{"settling time above its max", "6 (15 %)", "log cannot be read", "1 (2 %)", "units showing the reason"} {
		if !strings.Contains(text, w) {
			t.Errorf("Pareto text lacks %q: %s", w, text)
		}
	}
	// At most MaxBars bars: the reasons beyond are left to the report's note.
	shown := strings.Count(text, "reason ")
	if shown != MaxBars-2 {
		t.Errorf("%d minor reasons drawn, want %d (MaxBars %d less the two above)", shown, MaxBars-2, MaxBars)
	}
}

func TestHistogram(t *testing.T) {
	s := digest.MetricStats{Metric: "overshoot_pct", Label: "overshoot", Unit: "%", Max: ptr(10),
		Mean: metrics.Known(8), Predicted: metrics.Known(6.8), N: 5,
		Bins: []digest.Bin{{Lo: 2, Hi: 6, Count: 2}, {Lo: 6, Hi: 10, Count: 2}, {Lo: 10, Hi: 14, Count: 1, Outside: true}}}
	p, err := Histogram(s)
	if err != nil {
		t.Fatal(err)
	}
	text := drawnText(t, p)
	for _, w := range []string{"overshoot (%)", "steps", "limit", "predicted", "mean"} {
		if !strings.Contains(text, w) {
			t.Errorf("histogram text lacks %q: %s", w, text)
		}
	}
	// The axis reaches the limit and the prediction.
	if p.X.Min > 2 || p.X.Max < 14 {
		t.Errorf("x axis %v … %v", p.X.Min, p.X.Max)
	}
	s.Bins = nil
	if _, err := Histogram(s); err == nil {
		t.Errorf("no bins: no error")
	}
}

// unitBatch is one unit with a record of steps 0 → 10 at 0.5 s and back at
// 3.5 s, the closed-form response of ζ = 0.5, ωn = 5 rad/s (Ogata, 5th ed.,
// §5-3), and an ideal prediction of the up-step recorded from t = 0.
func unitBatch(steps int) *acceptance.Batch {
	tr := &metrics.Trace{}
	up := secondOrder(0.5, 5, 0.002, 3, 0.5, 0, 10)
	down := secondOrder(0.5, 5, 0.002, 3, 0, 10, 0)
	tr.Time, tr.Command, tr.Response = append(tr.Time, up.Time...), append(tr.Command, up.Command...), append(tr.Response, up.Response...)
	for i := 1; i < down.Len(); i++ {
		tr.Time = append(tr.Time, 3+down.Time[i])
		tr.Command = append(tr.Command, down.Command[i])
		tr.Response = append(tr.Response, down.Response[i])
	}
	u := acceptance.UnitResult{Unit: "SN-1", Verdict: acceptance.Fail, Trace: tr}
	for k := 0; k < steps; k++ {
		s := acceptance.StepResult{Index: k + 1, StartS: 0.5, From: 0, To: 10, Verdict: acceptance.Fail,
			Metrics: acceptance.MetricsOf(map[metrics.Name]metrics.Value{"final_value": metrics.Known(10.1)})}
		if k%2 == 1 {
			s.StartS, s.From, s.To = 3.002, 10, 0
			s.Metrics = acceptance.MetricsOf(map[metrics.Name]metrics.Value{})
		}
		u.Steps = append(u.Steps, s)
	}
	return &acceptance.Batch{
		Units:   []acceptance.UnitResult{u},
		Limits:  map[metrics.Name]spec.Limit{"rise_time_s": {Max: ptr(0.6)}, "settling_time_s": {Max: ptr(1.6)}, "overshoot_pct": {Max: ptr(20)}},
		SpecDoc: &spec.Spec{ResponseUnit: "mm"},
		Model: &acceptance.ModelSummary{Nominal: []acceptance.NominalPrediction{{
			From: 0, To: 10, IdealTrace: secondOrder(0.6, 5, 0.002, 3, 0.1, 0, 10)}}},
	}
}

func TestForUnitSteps(t *testing.T) {
	ub := unitBatch(2)
	f := ForUnitSteps(ub, 0, ub.Units[0].Trace)
	if len(f.Panels) != 2 || f.NotDrawn != 0 || f.PredictionKind != "ideal" || f.ResponseUnit != "mm" {
		t.Fatalf("figure %d panels, %d not drawn, kind %q", len(f.Panels), f.NotDrawn, f.PredictionKind)
	}
	p := f.Panels[0]
	if p.Start != 0.5 || math.Abs(p.End-(0.5+1.5*1.6)) > 1e-9 {
		t.Errorf("window %v … %v, want 0.5 … 2.9 (1.5 × the settling limit)", p.Start, p.End)
	}
	// The band is ±2 % of the 10 mm step around the measured final value.
	if math.Abs(p.BandLo-9.9) > 1e-9 || math.Abs(p.BandHi-10.3) > 1e-9 {
		t.Errorf("band %v … %v, want 9.9 … 10.3", p.BandLo, p.BandHi)
	}
	// The limit instants: the step instant plus each time limit.
	var marks []string
	for _, m := range p.Marks {
		marks = append(marks, m.Label)
		want := map[string]float64{"rise-time max 0.6 s": 1.1, "settling-time max 1.6 s": 2.1}[m.Label]
		if math.Abs(m.At-want) > 1e-9 {
			t.Errorf("mark %q at %v, want %v", m.Label, m.At, want)
		}
	}
	if strings.Join(marks, "|") != "rise-time max 0.6 s|settling-time max 1.6 s" {
		t.Errorf("marks %v", marks)
	}
	// The prediction's step instant (0.1 s on its own clock) falls on the
	// record's at 0.5 s: every drawn point is the closed form of ζ = 0.6,
	// ωn = 5 rad/s at τ = t − 0.5 (Ogata, 5th ed., §5-3).
	sigma, wd := 0.6*5.0, 5*math.Sqrt(1-0.36)
	if len(p.PredT) < 10 || p.PredT[0] > 0.5 {
		t.Fatalf("prediction %d points from %v", len(p.PredT), p.PredT)
	}
	for i, tt := range p.PredT {
		want := 0.0
		if tau := tt - 0.5; tau > 1e-9 {
			want = 10 * (1 - math.Exp(-sigma*tau)*(math.Cos(wd*tau)+sigma/wd*math.Sin(wd*tau)))
		}
		if math.Abs(p.PredY[i]-want) > 1e-6 {
			t.Fatalf("prediction at %v s is %v, want %v: not shifted to the step instant", tt, p.PredY[i], want)
		}
	}
	// The panel holds every sample from 10 % of the window before the
	// step instant (0.26 s) to the end of the window (2.9 s), 2 ms apart.
	if len(p.T) != 1321 || len(p.T) != len(p.Response) || len(p.CmdT) != len(p.Command) || len(p.Command) != len(p.T) ||
		math.Abs(p.T[0]-0.26) > 1e-9 || math.Abs(p.T[len(p.T)-1]-2.9) > 1e-9 {
		t.Errorf("points: %d response from %v to %v, %d command", len(p.T), p.T[0], p.T[len(p.T)-1], len(p.Command))
	}
	checkReduced(t, p)
	// The down-step has no matching prediction and its band centres on the
	// command, its final value being unknown.
	q := f.Panels[1]
	if len(q.PredT) != 0 || math.Abs(q.BandLo+0.2) > 1e-9 {
		t.Errorf("down-step: prediction %d points, band %v … %v", len(q.PredT), q.BandLo, q.BandHi)
	}
	checkFigureText(t, f)

	// More steps than maxPanels: the rest are counted, not drawn.
	many := unitBatch(maxPanels + 2)
	if f := ForUnitSteps(many, 0, many.Units[0].Trace); len(f.Panels) != maxPanels || f.NotDrawn != 2 {
		t.Errorf("%d panels, %d not drawn; want %d and 2", len(f.Panels), f.NotDrawn, maxPanels)
	}
	// Without a record there is nothing to draw.
	if f := ForUnitSteps(unitBatch(2), 0, nil); len(f.Panels) != 0 || f.Steps != 2 {
		t.Errorf("no record: %d panels, %d steps", len(f.Panels), f.Steps)
	}
}

// checkReduced checks panel p reduced for 87 × 68 mm on paper: at most
// four samples per half millimetre, the extremes kept, the command a single
// step, the panel itself unchanged.
func checkReduced(t *testing.T, p Panel) {
	t.Helper()
	r := p.Reduced(87, 68)
	if n := len(r.T); n > 4*bucketCount(87) || n < 10 || n != len(r.Response) {
		t.Errorf("reduced response: %d times, %d values", n, len(r.Response))
	}
	if lo, hi := extremes(r.Response); lo != minOf(p.Response) || hi != maxOf(p.Response) {
		t.Errorf("reduced response spans %v … %v, the record %v … %v", lo, hi, minOf(p.Response), maxOf(p.Response))
	}
	if len(r.PredT) > 4*bucketCount(87) || r.PredT[0] != p.PredT[0] || r.PredT[len(r.PredT)-1] != p.PredT[len(p.PredT)-1] {
		t.Errorf("reduced prediction: %d points", len(r.PredT))
	}
	if fmt.Sprint(r.CmdT, r.Command) != fmt.Sprint([]float64{p.T[0], 0.5, p.T[len(p.T)-1]}, []float64{0, 10, 10}) {
		t.Errorf("reduced command %v %v, want the step 0 → 10 at 0.5 s", r.CmdT, r.Command)
	}
	if len(p.T) != 1321 {
		t.Errorf("Reduced changed the panel")
	}
	if rmin, rmax := r.valueRange(); fmt.Sprint(rmin, rmax) != fmt.Sprint(p.valueRange()) {
		t.Errorf("reduced value axis %v … %v", rmin, rmax)
	}
}

// checkFigureText checks the texts the figure's panels draw.
func checkFigureText(t *testing.T, f *UnitFigure) {
	t.Helper()
	text := ""
	for i := range f.Panels {
		pl, err := f.Panels[i].Plot(f.ResponseUnit, f.PredictionKind)
		if err != nil {
			t.Fatal(err)
		}
		text += drawnText(t, pl)
	}
	for _, w := range []string{"step 1: 0 → 10 mm, FAIL", "response (mm)", "time (s)", "command", "prediction (ideal)", "settling band", "rise-time max 0.6 s"} {
		if !strings.Contains(text, w) {
			t.Errorf("unit figure lacks %q", w)
		}
	}
}
