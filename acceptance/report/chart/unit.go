package chart

import (
	"fmt"
	"image/color"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/metrics"
)

// maxPanels is the most steps a unit's figure draws; the unit page lists
// every step in its tables.
const maxPanels = 4

// Colours of the unit figure: the command grey, the limit instants in
// P. Tol's purple and green (SRON/EPS/TN/09-002, from memory).
var (
	colourCommand  = color.RGBA{R: 0x88, G: 0x88, B: 0x88, A: 0xFF}
	colourRiseMark = color.RGBA{R: 0xAA, G: 0x33, B: 0x77, A: 0xFF}
	colourSettMark = color.RGBA{R: 0x22, G: 0x88, B: 0x33, A: 0xFF}
	colourMark     = color.RGBA{R: 0x66, G: 0x66, B: 0x66, A: 0xFF}
)

// UnitFigure is the figure of one unit: one panel per step, up to
// maxPanels, each in the record's own units and clock.
type UnitFigure struct {
	Panels []Panel
	// Steps counts the unit's steps; NotDrawn those beyond maxPanels.
	Steps, NotDrawn int
	// Skipped lists steps that could not be drawn, with the reason.
	Skipped []string
	// PredictionKind is "realised" or "ideal" when a panel shows a
	// prediction.
	PredictionKind string
	// ResponseUnit labels the value axis.
	ResponseUnit string
}

// Panel is one step of a unit: response and command against time on the
// record's clock, the prediction shifted to the step instant, the settling
// band around the final value and the instants at which limited times end.
type Panel struct {
	Step     int
	Verdict  acceptance.Verdict
	Start    float64 // step instant, seconds on the record's clock
	From, To float64
	// T and Response, CmdT and Command are every sample of the record
	// over the panel's window; Reduced thins them for drawing.
	T, Response, CmdT, Command []float64
	// PredT, PredY are the prediction shifted to the step instant, every
	// simulated sample over the window; empty without one.
	PredT, PredY []float64
	// BandLo and BandHi bound the settling band, from the step instant to
	// the end of the window.
	BandLo, BandHi float64
	// End is the end of the window on the record's clock.
	End float64
	// Marks are the instants step instant + limit of every limited time.
	Marks []Mark
}

// Mark is a vertical line at an instant on the record's clock.
type Mark struct {
	At    float64
	Label string       // e.g. "rise-time max 0.16 s"
	kind  metrics.Name // metric name
}

// ForUnitSteps lays out the steps of unit number i of the batch (an index
// into b.Units) on its record tr. A unit without a record (tr nil) gets a
// figure without panels.
func ForUnitSteps(b *acceptance.Batch, i int, tr *metrics.Trace) *UnitFigure {
	u := &b.Units[i]
	f := &UnitFigure{Steps: len(u.Steps), ResponseUnit: digest.ResponseUnit(b)}
	if tr == nil || tr.Len() == 0 {
		return f
	}
	band := digest.SettlingBand(b)
	for si := range u.Steps {
		if len(f.Panels) == maxPanels {
			f.NotDrawn = len(u.Steps) - si
			break
		}
		s := &u.Steps[si]
		label := fmt.Sprintf("step %d", s.Index)
		start, err := StartIndex(tr, s.StartS)
		if err != nil {
			f.Skipped = append(f.Skipped, label+": "+err.Error())
			continue
		}
		end := tr.Len()
		if si+1 < len(u.Steps) {
			if e, err := StartIndex(tr, u.Steps[si+1].StartS); err == nil && e > start {
				end = e
			}
		}
		lo := 0
		if si > 0 {
			if e, err := StartIndex(tr, u.Steps[si-1].StartS); err == nil && e < start {
				lo = e
			}
		}
		pn := panel(b, tr, s, start, end, lo, band)
		if pn.PredT != nil {
			f.PredictionKind = predictionKind(b)
		}
		f.Panels = append(f.Panels, pn)
	}
	return f
}

func predictionKind(b *acceptance.Batch) string {
	if b.Model != nil && b.Model.Realised {
		return "realised"
	}
	return "ideal"
}

// panel cuts one step's window out of the record.
func panel(b *acceptance.Batch, tr *metrics.Trace, s *acceptance.StepResult, start, end, lo int, band float64) Panel {
	p := Panel{Step: s.Index, Verdict: s.Verdict, Start: tr.Time[start], From: s.From, To: s.To}
	recEnd := tr.Time[end-1]
	window := recEnd - p.Start
	if l, ok := b.Limits[metrics.SettlingTime]; ok && l.Max != nil && *l.Max > 0 {
		window = math.Min(window, windowOverSett**l.Max)
	}
	if window <= 0 {
		window = recEnd - p.Start
	}
	p.End = p.Start + window
	t0 := math.Max(tr.Time[lo], p.Start-0.1*window)
	first := lo + sort.SearchFloat64s(tr.Time[lo:end], t0)
	stop := first
	for stop < end && tr.Time[stop] <= p.End {
		stop++
	}
	p.T = append([]float64(nil), tr.Time[first:stop]...)
	p.Response = append([]float64(nil), tr.Response[first:stop]...)
	if stop <= len(tr.Command) {
		p.CmdT, p.Command = p.T, append([]float64(nil), tr.Command[first:stop]...)
	}
	centre := s.To
	if v, ok := s.Metrics.Lookup(metrics.FinalValue); ok && v.OK {
		centre = v.V
	}
	half := band * math.Abs(s.To-s.From)
	p.BandLo, p.BandHi = centre-half, centre+half
	p.PredT, p.PredY = shiftedPrediction(b, s, t0, p.Start, p.End)
	for _, name := range digest.LimitedMetrics(b) {
		if m, ok := metrics.Lookup(name); !ok || m.Unit != metrics.Seconds {
			continue
		}
		l := b.Limits[name]
		// A time limit counts from the step instant, except the settling
		// after a move, which counts from the end of the commanded move.
		from := p.Start
		if name == metrics.SettlingAfterMove {
			mt, _ := s.Metrics.Lookup(metrics.MoveTime)
			if !mt.OK {
				continue
			}
			from += mt.V
		}
		for _, side := range []struct {
			v    *float64
			word string
		}{{l.Min, "min"}, {l.Max, "max"}} {
			if side.v == nil || *side.v < 0 {
				continue
			}
			label := strings.ReplaceAll(digest.MetricLabel(name), " ", "-") + " " + side.word + " " + digest.Num(*side.v) + " s"
			p.Marks = append(p.Marks, Mark{At: from + *side.v, Label: label, kind: name})
		}
	}
	return p
}

// shiftedPrediction returns the nominal prediction of the step's command
// change (levels within 1 % of the step size), its time shifted so that
// its step instant falls on the recorded one, over [t0, end].
func shiftedPrediction(b *acceptance.Batch, s *acceptance.StepResult, t0, at, end float64) (t, y []float64) {
	if b.Model == nil {
		return nil, nil
	}
	for i := range b.Model.Nominal {
		n := &b.Model.Nominal[i]
		if !n.Matches(s.From, s.To) {
			continue
		}
		_, tr, _ := b.Model.Compared(n)
		if tr == nil || tr.Len() == 0 {
			continue
		}
		k0, err := commandStart(tr, n.From, n.To)
		if err != nil {
			continue
		}
		shift := at - tr.Time[k0]
		var pt, py []float64
		for k := range tr.Time {
			tt := tr.Time[k] + shift
			if tt < t0 {
				continue
			}
			if tt > end {
				break
			}
			pt = append(pt, tt)
			py = append(py, tr.Response[k])
		}
		return pt, py
	}
	return nil, nil
}

// Reduced returns a copy of the panel with its series reduced for a plot
// w × h millimetres on paper, to what that plot can show: the response and
// the prediction keep the envelope of each of bucketCount(w) time buckets (see
// Envelope) and of that the samples a line needs to pass within TolMM of
// every other, the lowest and the highest; the command, drawn as steps,
// keeps the samples at which it changes. The panel itself is not changed,
// and its plot has the same axes.
func (pn *Panel) Reduced(w, h float64) Panel {
	r := *pn
	buckets := bucketCount(w)
	tol := 0.0
	if ymin, ymax := pn.valueRange(); h > 0 {
		// The data area is smaller than the plot, so this tolerance is
		// less than TolMM on paper.
		tol = tolMM * (ymax - ymin) / h
	}
	reduce := func(t, y []float64) ([]float64, []float64) {
		t, y = Envelope(t, y, buckets)
		return simplify(t, y, tol)
	}
	r.T, r.Response = reduce(pn.T, pn.Response)
	r.PredT, r.PredY = reduce(pn.PredT, pn.PredY)
	if len(pn.Command) > 0 {
		t, c := levelChanges(pn.CmdT, pn.Command)
		r.CmdT, r.Command = Envelope(t, c, buckets)
	}
	return r
}

// valueRange is the value axis of the panel's plot: the settling band, the
// step's levels, the response and the prediction, with a margin.
func (pn *Panel) valueRange() (ymin, ymax float64) {
	ymin, ymax = math.Min(pn.BandLo, math.Min(pn.From, pn.To)), math.Max(pn.BandHi, math.Max(pn.From, pn.To))
	for _, ys := range [][]float64{pn.Response, pn.PredY} {
		for _, v := range ys {
			ymin, ymax = math.Min(ymin, v), math.Max(ymax, v)
		}
	}
	pad := 0.06 * (ymax - ymin)
	if pad == 0 {
		pad = 1
	}
	return ymin - pad, ymax + pad
}

// Plot lays the panel out: the settling band, the command, the prediction,
// the response coloured by the step's verdict, and the limit instants.
func (pn *Panel) Plot(responseUnit, predictionKind string) (*plot.Plot, error) {
	p := pn.frame(responseUnit)
	band, err := plotter.NewPolygon(plotter.XYs{
		{X: pn.Start, Y: pn.BandLo}, {X: pn.End, Y: pn.BandLo}, {X: pn.End, Y: pn.BandHi}, {X: pn.Start, Y: pn.BandHi},
	})
	if err != nil {
		return nil, fmt.Errorf("chart: step %d settling band: %w", pn.Step, err)
	}
	band.Color = colourBand
	band.LineStyle.Color = colourBandEdge
	band.LineStyle.Width = vg.Points(0.4)
	band.LineStyle.Dashes = []vg.Length{vg.Points(2), vg.Points(2)}
	p.Add(band)
	lg := newLegendBox(p)
	lg.Add("settling band", band)
	if err := pn.addCurves(p, lg, predictionKind); err != nil {
		return nil, err
	}
	ymin, ymax := pn.valueRange()
	if err := pn.addMarks(p, lg, ymin, ymax); err != nil {
		return nil, err
	}
	pn.placeLegend(p)
	x0 := pn.Start - 0.1*(pn.End-pn.Start)
	if len(pn.T) > 0 {
		x0 = pn.T[0]
	}
	p.X.Min, p.X.Max = x0, pn.End
	p.Y.Min, p.Y.Max = ymin, ymax
	return p, nil
}

// frame returns the panel's plot with its title, axis labels, ticks and
// grid, and nothing drawn.
func (pn *Panel) frame(responseUnit string) *plot.Plot {
	p := plot.New()
	setFonts(p)
	p.BackgroundColor = color.White
	p.Title.Text = strings.TrimSpace(fmt.Sprintf("step %d: %s → %s %s", pn.Step, digest.Num(pn.From), digest.Num(pn.To), responseUnit)) +
		", " + strings.ToUpper(string(pn.Verdict))
	p.Title.TextStyle.Font = fontOf(9)
	p.X.Label.Text = "time (s)"
	p.Y.Label.Text = "response"
	if responseUnit != "" {
		p.Y.Label.Text += " (" + responseUnit + ")"
	}
	p.X.Label.TextStyle.Font = fontOf(8)
	p.Y.Label.TextStyle.Font = fontOf(8)
	p.X.Tick.Marker = niceTicks{}
	p.Y.Tick.Marker = niceTicks{}
	grid := plotter.NewGrid()
	grid.Vertical.Color, grid.Horizontal.Color = colourGrid, colourGrid
	grid.Vertical.Width, grid.Horizontal.Width = vg.Points(0.4), vg.Points(0.4)
	p.Add(grid)
	return p
}

// addCurves draws the command, the prediction and the response, each when
// the panel has it.
func (pn *Panel) addCurves(p *plot.Plot, lg *legendBox, predictionKind string) error {
	if len(pn.Command) > 0 {
		l, err := newLine(pn.CmdT, pn.Command)
		if err != nil {
			return fmt.Errorf("chart: step %d command: %w", pn.Step, err)
		}
		l.Color, l.Width = colourCommand, vg.Points(0.8)
		l.StepStyle = plotter.PostStep
		p.Add(l)
		lg.Add("command", l)
	}
	if len(pn.PredT) > 0 {
		l, err := newLine(pn.PredT, pn.PredY)
		if err != nil {
			return fmt.Errorf("chart: step %d prediction: %w", pn.Step, err)
		}
		l.Color, l.Width = colourPrediction, vg.Points(1.3)
		p.Add(l)
		lg.Add("prediction ("+predictionKind+")", l)
	}
	if len(pn.T) > 0 {
		l, err := newLine(pn.T, pn.Response)
		if err != nil {
			return fmt.Errorf("chart: step %d response: %w", pn.Step, err)
		}
		styleLine(l.Line, kindOf(pn.Verdict))
		l.Width = vg.Points(1)
		p.Add(l)
		lg.Add("response ("+strings.ToLower(string(pn.Verdict))+")", l)
	}
	return nil
}

// addMarks draws the vertical lines of the time limits from ymin to ymax.
func (pn *Panel) addMarks(p *plot.Plot, lg *legendBox, ymin, ymax float64) error {
	for _, m := range pn.Marks {
		l, err := newLine([]float64{m.At, m.At}, []float64{ymin, ymax})
		if err != nil {
			return fmt.Errorf("chart: step %d mark: %w", pn.Step, err)
		}
		l.Width = vg.Points(0.9)
		switch m.kind {
		case metrics.RiseTime:
			l.Color, l.Dashes = colourRiseMark, []vg.Length{vg.Points(3), vg.Points(2)}
		case metrics.SettlingTime:
			l.Color, l.Dashes = colourSettMark, []vg.Length{vg.Points(5), vg.Points(2), vg.Points(1), vg.Points(2)}
		default:
			l.Color, l.Dashes = colourMark, []vg.Length{vg.Points(1), vg.Points(2)}
		}
		p.Add(l)
		lg.Add(m.Label, l)
	}
	return nil
}

// placeLegend puts the legend where the response is not: at the bottom
// after an up-step, at the top after a down-step.
func (pn *Panel) placeLegend(p *plot.Plot) {
	p.Legend.Top = pn.To < pn.From
	p.Legend.Left = false
	p.Legend.TextStyle.Font = fontOf(6.5)
	p.Legend.ThumbnailWidth = vg.Points(14)
	p.Legend.Padding = vg.Points(1)
	p.Legend.XOffs = -vg.Points(3)
	if p.Legend.Top {
		p.Legend.YOffs = -vg.Points(3)
	} else {
		p.Legend.YOffs = vg.Points(3)
	}
}
