package chart

import (
	"math"
	"strings"
	"sync"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// line is a gonum line that lays itself out and draws at a cost that does
// not grow with allocations per point, drawing exactly what plotter.Line
// draws:
//
//   - GlyphBoxes returns only the boxes the plot's padding can use. The plot
//     pads its data area by the outermost glyph box on each side; every point
//     of a line has a box of the same size, so the boxes of the leftmost,
//     rightmost, lowest and highest points that the plot keeps give the same
//     padding as one box per point.
//   - Plot strokes a line that lies wholly inside the data area as one path
//     without clipping it, which is what clipping would have left of it; a
//     line that leaves the area, a filled one or a step style other than
//     none and post-step is drawn by plotter.Line.
type line struct{ *plotter.Line }

// newLine returns a line through the points (t[i], y[i]).
func newLine(t, y []float64) (line, error) {
	xys := make(plotter.XYs, len(t))
	for i := range t {
		xys[i] = plotter.XY{X: t[i], Y: y[i]}
	}
	l, err := plotter.NewLine(xys)
	return line{l}, err
}

// GlyphBoxes implements plot.GlyphBoxer.
func (l line) GlyphBoxes(plt *plot.Plot) []plot.GlyphBox {
	r := 0.5 * l.LineStyle.Width
	if r <= 0 {
		// Boxes without a size pad nothing.
		return nil
	}
	// The plot drops the boxes of points outside its axes' ranges.
	const (
		left = iota
		right
		bottom
		top
	)
	var best [4]plot.GlyphBox
	found := false
	normX, normY := norm(&plt.X), norm(&plt.Y)
	for i := range l.XYs {
		x, y := normX(l.XYs[i].X), normY(l.XYs[i].Y)
		if !(x >= 0 && x <= 1 && y >= 0 && y <= 1) {
			continue
		}
		b := plot.GlyphBox{X: x, Y: y}
		if !found {
			best = [4]plot.GlyphBox{b, b, b, b}
			found = true
			continue
		}
		if x < best[left].X {
			best[left] = b
		}
		if x > best[right].X {
			best[right] = b
		}
		if y < best[bottom].Y {
			best[bottom] = b
		}
		if y > best[top].Y {
			best[top] = b
		}
	}
	if !found {
		return nil
	}
	rect := vg.Rectangle{Min: vg.Point{X: -r, Y: -r}, Max: vg.Point{X: r, Y: r}}
	for i := range best {
		best[i].Rectangle = rect
	}
	return best[:]
}

// Plot implements plot.Plotter.
func (l line) Plot(c draw.Canvas, plt *plot.Plot) {
	n := len(l.XYs)
	post := l.StepStyle == plotter.PostStep
	if l.FillColor != nil || l.LineStyle.Width == 0 || n < 2 || !(post || l.StepStyle == plotter.NoStep) {
		l.Line.Plot(c, plt)
		return
	}
	normX, normY := norm(&plt.X), norm(&plt.Y)
	trX := func(x float64) vg.Length { return c.X(normX(x)) }
	trY := func(y float64) vg.Length { return c.Y(normY(y)) }
	size := n
	if post {
		size = 2*n - 1
	}
	path := make(vg.Path, 0, size)
	var prev vg.Point
	for i := range l.XYs {
		pt := vg.Point{X: trX(l.XYs[i].X), Y: trY(l.XYs[i].Y)}
		if !(pt.X >= c.Min.X && pt.X <= c.Max.X && pt.Y >= c.Min.Y && pt.Y <= c.Max.Y) {
			l.Line.Plot(c, plt)
			return
		}
		switch {
		case i == 0:
			path.Move(pt)
		case post:
			path.Line(vg.Point{X: pt.X, Y: prev.Y})
			path.Line(pt)
		default:
			path.Line(pt)
		}
		prev = pt
	}
	c.SetLineStyle(l.LineStyle)
	c.Stroke(path)
}

// norm returns the axis's normalisation, the same as its Norm method,
// without copying the whole axis at every call as Norm does.
func norm(a *plot.Axis) func(float64) float64 {
	lo, hi := a.Min, a.Max
	if _, ok := a.Scale.(plot.LinearScale); ok {
		return func(x float64) float64 { return (x - lo) / (hi - lo) }
	}
	s := a.Scale
	return func(x float64) float64 { return s.Normalize(lo, hi, x) }
}

// measuredText is the text handler of every chart: gonum's plain handler,
// which it draws with, with the measurements remembered. Laying out one
// figure measures each tick label, title and legend entry several times,
// and a report draws hundreds of figures with the same texts; measuring a
// text walks the font's glyph and kerning tables every time.
type measuredText struct {
	plain text.Plain

	mu      sync.Mutex
	extents map[font.Font]font.Extents
	widths  map[textKey]vg.Length
	// recent holds the extents of the fonts asked for last, to spare the
	// map lookup: a figure uses a handful of fonts.
	recent [4]fontExtents
	next   int
}

type fontExtents struct {
	ok   bool
	font font.Font
	ext  font.Extents
}

type textKey struct {
	font font.Font
	text string
}

// maxMeasured bounds the remembered widths; past it they are forgotten.
const maxMeasured = 1 << 14

var chartText = &measuredText{plain: text.Plain{Fonts: font.DefaultCache}}

// Cache implements text.Handler.
func (h *measuredText) Cache() *font.Cache { return h.plain.Fonts }

// Extents implements text.Handler.
func (h *measuredText) Extents(fnt font.Font) font.Extents {
	h.mu.Lock()
	defer h.mu.Unlock()
	for i := range h.recent {
		if r := &h.recent[i]; r.ok && r.font == fnt {
			return r.ext
		}
	}
	e, ok := h.extents[fnt]
	if !ok {
		e = h.plain.Extents(fnt)
		if h.extents == nil {
			h.extents = map[font.Font]font.Extents{}
		}
		h.extents[fnt] = e
	}
	h.recent[h.next] = fontExtents{ok: true, font: fnt, ext: e}
	h.next = (h.next + 1) % len(h.recent)
	return e
}

// Lines implements text.Handler.
func (h *measuredText) Lines(txt string) []string { return h.plain.Lines(txt) }

// width is the width of one line of text in the font.
func (h *measuredText) width(txt string, fnt font.Font) vg.Length {
	k := textKey{fnt, txt}
	h.mu.Lock()
	w, ok := h.widths[k]
	h.mu.Unlock()
	if ok {
		return w
	}
	face := h.plain.Fonts.Lookup(fnt, fnt.Size)
	w = face.Width(txt)
	h.mu.Lock()
	if h.widths == nil || len(h.widths) >= maxMeasured {
		h.widths = map[textKey]vg.Length{}
	}
	h.widths[k] = w
	h.mu.Unlock()
	return w
}

// Box implements text.Handler, as text.Plain measures.
func (h *measuredText) Box(txt string, fnt font.Font) (width, height, depth vg.Length) {
	e := h.Extents(fnt)
	return h.width(txt, fnt), e.Ascent, e.Descent
}

// Draw implements text.Handler: text.Plain's Draw with the widths
// remembered.
func (h *measuredText) Draw(c vg.Canvas, txt string, sty text.Style, pt vg.Point) {
	txt = strings.TrimRight(txt, "\n")
	if len(txt) == 0 {
		return
	}
	fnt := h.plain.Fonts.Lookup(sty.Font, sty.Font.Size)
	c.SetColor(sty.Color)
	if sty.Rotation != 0 {
		c.Push()
		c.Rotate(sty.Rotation)
	}
	sin64, cos64 := math.Sincos(sty.Rotation)
	sin, cos := vg.Length(sin64), vg.Length(cos64)
	pt.X, pt.Y = pt.Y*sin+pt.X*cos, pt.Y*cos-pt.X*sin
	lines := h.Lines(txt)
	ht := sty.Height(txt)
	pt.Y += ht*vg.Length(sty.YAlign) - h.Extents(sty.Font).Ascent
	for i, ln := range lines {
		xoffs := vg.Length(sty.XAlign) * h.width(ln, sty.Font)
		n := vg.Length(len(lines) - i)
		c.FillString(fnt, pt.Add(vg.Point{X: xoffs, Y: n * sty.Font.Size}), ln)
	}
	if sty.Rotation != 0 {
		c.Pop()
	}
}

// useChartText makes every text of the plot measured by chartText.
func useChartText(p *plot.Plot) {
	p.TextHandler = chartText
	p.Title.TextStyle.Handler = chartText
	p.X.Label.TextStyle.Handler = chartText
	p.Y.Label.TextStyle.Handler = chartText
	p.X.Tick.Label.Handler = chartText
	p.Y.Tick.Label.Handler = chartText
	p.Legend.TextStyle.Handler = chartText
}
