package chart

import (
	"fmt"
	"image/color"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/digest"
)

// MaxBars is the most reasons a Pareto chart shows; the rest are counted
// in a note by the report.
const MaxBars = 10

// Colours of the summary charts.
var (
	colourBars      = color.RGBA{R: 0x44, G: 0x77, B: 0xAA, A: 0xFF} // histogram bars, as passed steps
	colourLimit     = colourFail                                     // limit lines
	colourPredicted = colourPrediction                               // predicted value
	colourMean      = color.RGBA{R: 0x66, G: 0x66, B: 0x66, A: 0xFF}
)

// Pareto lays out the failure reasons as horizontal bars, most frequent at
// the top, at most MaxBars of them, each labelled with its count of units
// and its share of the units tested: red for a limit exceeded, orange for a
// reason that kept the data from showing pass or fail. It fails when there
// are no causes to draw.
func Pareto(causes []digest.Cause, units int) (*plot.Plot, error) {
	if len(causes) == 0 {
		return nil, fmt.Errorf("chart: no failure reasons to draw")
	}
	shown := causes
	if len(shown) > MaxBars {
		shown = shown[:MaxBars]
	}
	p := plot.New()
	setFonts(p)
	p.BackgroundColor = color.White
	p.X.Label.Text = "units showing the reason"
	n := len(shown)
	names := make([]string, n)
	most := 0
	var labels plotter.XYLabels
	for i, c := range shown {
		pos := float64(n - 1 - i) // most frequent at the top
		names[n-1-i] = c.Label
		most = max(most, c.Units)
		bar, err := plotter.NewBarChart(plotter.Values{float64(c.Units)}, vg.Points(10))
		if err != nil {
			return nil, fmt.Errorf("chart: bar %q: %w", c.Label, err)
		}
		bar.Horizontal = true
		bar.XMin = pos
		bar.LineStyle.Width = 0
		bar.Color = colourInvalid
		if c.Verdict == acceptance.Fail {
			bar.Color = colourFail
		}
		p.Add(bar)
		text := strconv.Itoa(c.Units)
		if units > 0 {
			text += " (" + strconv.FormatFloat(100*float64(c.Units)/float64(units), 'f', 0, 64) + " %)"
		}
		labels.XYs = append(labels.XYs, plotter.XY{X: float64(c.Units), Y: pos})
		labels.Labels = append(labels.Labels, text)
	}
	l, err := plotter.NewLabels(labels)
	if err != nil {
		return nil, fmt.Errorf("chart: bar labels: %w", err)
	}
	for i := range l.TextStyle {
		l.TextStyle[i].Handler = chartText
		l.TextStyle[i].Font = fontOf(7.5)
		l.TextStyle[i].YAlign = -0.5
		l.Offset = vg.Point{X: vg.Points(3)}
	}
	p.Add(l)
	p.NominalY(names...)
	p.Y.Tick.Label.Font = fontOf(8)
	p.X.Min = 0
	p.X.Max = float64(most) * 1.3
	p.X.Tick.Marker = countTicks{}
	p.Y.Min, p.Y.Max = -0.6, float64(n)-0.4
	grid := plotter.NewGrid()
	grid.Horizontal.Width = 0
	grid.Vertical.Color = colourGrid
	grid.Vertical.Width = vg.Points(0.4)
	p.Add(grid)
	return p, nil
}

// Histogram lays out the histogram of one limited metric over the measured
// steps, the bins beyond the limits in red, with its limits as red dashed
// lines, the predicted value as a black line and the batch mean as a grey
// dotted one. It fails when the
// metric was measured on no step.
func Histogram(s digest.MetricStats) (*plot.Plot, error) {
	if len(s.Bins) == 0 {
		return nil, fmt.Errorf("chart: %s was measured on no step", s.Metric)
	}
	p := plot.New()
	setFonts(p)
	p.BackgroundColor = color.White
	p.Title.Text = s.Label
	if s.Unit != "" {
		p.X.Label.Text = s.Label + " (" + s.Unit + ")"
	} else {
		p.X.Label.Text = s.Label
	}
	p.Y.Label.Text = "steps"
	p.Title.TextStyle.Font = fontOf(9.5)
	p.X.Label.TextStyle.Font = fontOf(8)
	p.Y.Label.TextStyle.Font = fontOf(8)
	most := addBins(p, s.Bins)
	v := &vlines{lo: s.Bins[0].Lo, hi: s.Bins[len(s.Bins)-1].Hi, top: math.Max(1, float64(most)) * 1.25}
	if err := v.add(p, s); err != nil {
		return nil, err
	}
	p.Legend.Top = true
	p.Legend.TextStyle.Font = fontOf(7)
	p.Legend.ThumbnailWidth = vg.Points(16)
	p.Legend.Padding = vg.Points(1.5)
	pad := 0.05 * (v.hi - v.lo)
	if pad == 0 {
		pad = 1
	}
	p.X.Min, p.X.Max = v.lo-pad, v.hi+pad
	p.Y.Min, p.Y.Max = 0, v.top*1.15
	p.X.Tick.Marker = niceTicks{}
	p.Y.Tick.Marker = countTicks{}
	return p, nil
}

// addBins draws the bins, those inside the limits in blue and those beyond
// them in red, and returns the largest count.
func addBins(p *plot.Plot, bins []digest.Bin) int {
	in := &plotter.Histogram{FillColor: colourBars}
	out := &plotter.Histogram{FillColor: colourFail}
	most := 0
	for _, b := range bins {
		bin := plotter.HistogramBin{Min: b.Lo, Max: b.Hi, Weight: float64(b.Count)}
		if b.Outside {
			out.Bins = append(out.Bins, bin)
		} else {
			in.Bins = append(in.Bins, bin)
		}
		most = max(most, b.Count)
	}
	for _, h := range []*plotter.Histogram{in, out} {
		if len(h.Bins) == 0 {
			continue
		}
		h.LineStyle.Width = vg.Points(0.4)
		h.LineStyle.Color = color.White
		h.Width = h.Bins[0].Max - h.Bins[0].Min
		p.Add(h)
	}
	return most
}

// vlines draws a histogram's vertical lines from 0 to top, widening the
// range lo to hi of the x axis to take them in.
type vlines struct{ lo, hi, top float64 }

func (v *vlines) line(x float64, c color.Color, width float64, dashes []vg.Length) (*plotter.Line, error) {
	l, err := plotter.NewLine(plotter.XYs{{X: x, Y: 0}, {X: x, Y: v.top}})
	if err != nil {
		return nil, err
	}
	l.Color, l.Width, l.Dashes = c, vg.Points(width), dashes
	v.lo, v.hi = math.Min(v.lo, x), math.Max(v.hi, x)
	return l, nil
}

// add draws the limits, the mean and the predicted value, and lists them
// in the legend.
func (v *vlines) add(p *plot.Plot, s digest.MetricStats) error {
	var limitLine *plotter.Line
	for _, lim := range []*float64{s.Min, s.Max} {
		if lim == nil {
			continue
		}
		l, err := v.line(*lim, colourLimit, 1.2, []vg.Length{vg.Points(4), vg.Points(2)})
		if err != nil {
			return fmt.Errorf("chart: %s limit: %w", s.Metric, err)
		}
		p.Add(l)
		limitLine = l
	}
	var meanLine, predLine *plotter.Line
	if s.Mean.OK {
		l, err := v.line(s.Mean.V, colourMean, 0.9, []vg.Length{vg.Points(1), vg.Points(1.5)})
		if err != nil {
			return fmt.Errorf("chart: %s mean: %w", s.Metric, err)
		}
		p.Add(l)
		meanLine = l
	}
	if s.Predicted.OK {
		l, err := v.line(s.Predicted.V, colourPredicted, 1.4, nil)
		if err != nil {
			return fmt.Errorf("chart: %s prediction: %w", s.Metric, err)
		}
		p.Add(l)
		predLine = l
	}
	lg := newLegendBox(p)
	if limitLine != nil {
		lg.Add("limit", limitLine)
	}
	if predLine != nil {
		lg.Add("predicted", predLine)
	}
	if meanLine != nil {
		lg.Add("mean", meanLine)
	}
	return nil
}

// countTicks marks a count axis at whole numbers: every 1, 2 or 5 times a
// power of ten, at least four labelled ticks where the range allows.
type countTicks struct{}

// Ticks returns the ticks for the range min..max.
func (countTicks) Ticks(min, max float64) []plot.Tick {
	step := 1.0
	for _, s := range []float64{1, 2, 5, 10, 20, 50, 100, 200, 500, 1000, 2000, 5000, 10000, 20000, 50000} {
		step = s
		if (max-min)/s <= 8 {
			break
		}
	}
	for (max-min)/step > 8 {
		step *= 10
	}
	var ticks []plot.Tick
	for v := math.Ceil(min/step) * step; v <= max; v += step {
		ticks = append(ticks, plot.Tick{Value: v, Label: strconv.FormatFloat(v, 'f', 0, 64)})
	}
	return ticks
}
