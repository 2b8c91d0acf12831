package chart

import (
	"fmt"
	"image/color"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
)

// Colours of the curve kinds: blue, red and orange from P. Tol's colour
// schemes for colour-blind readers (SRON/EPS/TN/09-002, from memory), the
// prediction black and heavier so that it also stands out in a greyscale
// print. Verdicts are also spelt out in every table.
var (
	colourPass       = color.RGBA{R: 0x44, G: 0x77, B: 0xAA, A: 0xFF}
	colourFail       = color.RGBA{R: 0xCC, G: 0x33, B: 0x11, A: 0xFF}
	colourInvalid    = color.RGBA{R: 0xEE, G: 0x77, B: 0x33, A: 0xFF}
	colourPrediction = color.RGBA{A: 0xFF}
	colourBand       = color.RGBA{R: 0xDD, G: 0xEE, B: 0xDD, A: 0xFF}
	colourBandEdge   = color.RGBA{R: 0x55, G: 0x88, B: 0x55, A: 0xFF}
	colourGrid       = color.RGBA{R: 0xDD, G: 0xDD, B: 0xDD, A: 0xFF}
)

// Font is the face every text of the chart uses. The PDF report embeds the
// same TrueType font, so the widths gonum measures are the widths drawn.
var Font = font.Font{Typeface: "Liberation", Variant: "Sans"}

// Plot lays the overlay out as a gonum plot: the settling band 1 ± Band,
// the recorded steps coloured by their verdict, the predictions on top, and
// a legend with the number of curves of each kind.
func (o *Overlay) Plot() (*plot.Plot, error) {
	p := plot.New()
	setFonts(p)
	p.X.Label.Text = "time from the step instant (s)"
	p.Y.Label.Text = "normalised response"
	p.X.Tick.Marker = niceTicks{}
	p.Y.Tick.Marker = niceTicks{}
	p.BackgroundColor = color.White

	grid := plotter.NewGrid()
	grid.Vertical.Color = colourGrid
	grid.Horizontal.Color = colourGrid
	grid.Vertical.Width = vg.Points(0.4)
	grid.Horizontal.Width = vg.Points(0.4)
	p.Add(grid)

	band, err := plotter.NewPolygon(plotter.XYs{
		{X: 0, Y: 1 - o.Band}, {X: o.Window, Y: 1 - o.Band},
		{X: o.Window, Y: 1 + o.Band}, {X: 0, Y: 1 + o.Band},
	})
	if err != nil {
		return nil, fmt.Errorf("chart: settling band: %w", err)
	}
	band.Color = colourBand
	band.LineStyle.Color = colourBandEdge
	band.LineStyle.Width = vg.Points(0.5)
	band.LineStyle.Dashes = []vg.Length{vg.Points(2), vg.Points(2)}
	p.Add(band)

	counts := map[Kind]int{}
	first := map[Kind]line{}
	for _, c := range o.Curves {
		l, err := newLine(c.T, c.Y)
		if err != nil {
			return nil, fmt.Errorf("chart: curve %s: %w", c.Label, err)
		}
		styleLine(l.Line, c.Kind)
		p.Add(l)
		counts[c.Kind]++
		if _, ok := first[c.Kind]; !ok {
			first[c.Kind] = l
		}
	}

	lg := newLegendBox(p)
	lg.Add("settling band ±"+pct(o.Band), band)
	names := []struct {
		k    Kind
		name string
	}{
		{StepPass, "steps passed"},
		{StepFail, "steps failed"},
		{StepInvalid, "steps invalid"},
		{Prediction, "prediction (" + o.PredictionKind + ")"},
	}
	for _, n := range names {
		if l, ok := first[n.k]; ok {
			label := n.name
			if n.k != Prediction {
				label += " (" + strconv.Itoa(counts[n.k]) + ")"
			}
			lg.Add(label, l)
		}
	}
	p.Legend.Top = false
	p.Legend.Left = false
	p.Legend.XOffs = -vg.Points(6)
	p.Legend.YOffs = vg.Points(6)
	p.Legend.ThumbnailWidth = vg.Points(22)
	p.Legend.Padding = vg.Points(2.5)

	p.X.Min, p.X.Max = 0, o.Window
	p.Y.Min, p.Y.Max = o.YMin, o.YMax
	return p, nil
}

func styleLine(l *plotter.Line, k Kind) {
	switch k {
	case StepPass:
		l.Color, l.Width = colourPass, vg.Points(0.6)
	case StepInvalid:
		l.Color, l.Width = colourInvalid, vg.Points(0.9)
		l.Dashes = []vg.Length{vg.Points(3), vg.Points(1.5)}
	case StepFail:
		l.Color, l.Width = colourFail, vg.Points(0.9)
	case Prediction:
		l.Color, l.Width = colourPrediction, vg.Points(1.6)
	}
}

func setFonts(p *plot.Plot) {
	useChartText(p)
	p.Title.TextStyle.Font = font.From(Font, 11)
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = font.From(Font, 9)
		a.Tick.Label.Font = font.From(Font, 8)
		a.Padding = vg.Points(2)
	}
	p.Legend.TextStyle.Font = font.From(Font, 8)
	p.Legend.TextStyle.Color = color.Black
}

// pct formats a fraction as a percentage for a label, e.g. 0.02 → "2 %".
func pct(f float64) string {
	return strconv.FormatFloat(f*100, 'g', 4, 64) + " %"
}

// niceTicks marks an axis every 1, 2 or 5 times a power of ten: the widest
// such spacing that still gives at least five labelled ticks, with an
// unlabelled tick halfway between labels.
type niceTicks struct{}

// Ticks returns the ticks for the range min..max.
func (niceTicks) Ticks(min, max float64) []plot.Tick {
	if !(max > min) {
		return []plot.Tick{{Value: min, Label: strconv.FormatFloat(min, 'g', 4, 64)}}
	}
	count := func(step float64) int {
		return int(math.Floor(max/step+1e-9) - math.Ceil(min/step-1e-9) + 1)
	}
	mag := math.Pow(10, math.Floor(math.Log10(max-min)))
	step := mag / 100
	for _, e := range []float64{0.01, 0.1, 1} {
		for _, m := range []float64{1, 2, 5} {
			if s := m * e * mag; count(s) >= 5 {
				step = s
			}
		}
	}
	decimals := 0
	if step < 1 {
		decimals = int(math.Ceil(-math.Log10(step) - 1e-9))
	}
	var ticks []plot.Tick
	first := math.Ceil(min/step-1e-9) * step
	if first-step/2 >= min {
		ticks = append(ticks, plot.Tick{Value: first - step/2})
	}
	for k := 0; ; k++ {
		v := first + float64(k)*step
		if v > max+step*1e-9 {
			break
		}
		if math.Abs(v) < step*1e-9 {
			v = 0
		}
		ticks = append(ticks, plot.Tick{Value: v, Label: strconv.FormatFloat(v, 'f', decimals, 64)})
		if h := v + step/2; h <= max {
			ticks = append(ticks, plot.Tick{Value: h})
		}
	}
	return ticks
}

// fontOf is the chart face at a size in points.
func fontOf(size vg.Length) font.Font { return font.From(Font, size) }
