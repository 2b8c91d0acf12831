package chart

import (
	"image/color"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// legendBox adds the entries of a plot's legend over an opaque white box
// with a thin frame, so that no curve, band or limit line shows through
// the legend's text. The box is drawn as the first thumbnail of the first
// entry: gonum draws the legend after the data, entry by entry, so the
// box lies over the data and under every entry.
type legendBox struct {
	p     *plot.Plot
	names []string
}

// newLegendBox returns the legend of p, to be filled with Add.
func newLegendBox(p *plot.Plot) *legendBox { return &legendBox{p: p} }

// Add adds a legend entry, as plot.Legend.Add does.
func (b *legendBox) Add(name string, thumbs ...plot.Thumbnailer) {
	if len(b.names) == 0 {
		thumbs = append([]plot.Thumbnailer{b}, thumbs...)
	}
	b.names = append(b.names, name)
	b.p.Legend.Add(name, thumbs...)
}

// legendMargin is the room between the legend's entries and its frame.
var legendMargin = vg.Points(2)

// Thumbnail draws the box behind the whole legend. c is the first entry's
// thumbnail cell: the legend's other entries lie below it, each one entry
// height (the cell's height) and the legend's padding lower, and the texts
// beside the thumbnails, a space away.
func (b *legendBox) Thumbnail(c *draw.Canvas) {
	l := &b.p.Legend
	sty := l.TextStyle
	space := sty.Rectangle(" ").Max.X
	var textW vg.Length
	for _, n := range b.names {
		textW = max(textW, sty.Rectangle(n).Max.X)
	}
	n := vg.Length(len(b.names))
	h := (c.Max.Y-c.Min.Y)*n + l.Padding*(n-1)
	r := vg.Rectangle{Min: vg.Point{X: c.Min.X, Y: c.Max.Y - h}, Max: c.Max}
	if l.Left {
		r.Max.X = c.Max.X + space + textW
	} else {
		r.Min.X = c.Min.X - space - textW
	}
	r.Min.X -= legendMargin
	r.Min.Y -= legendMargin
	r.Max.X += legendMargin
	r.Max.Y += legendMargin
	c.SetColor(color.White)
	c.Fill(r.Path())
	c.SetLineStyle(draw.LineStyle{Color: colourLegendFrame, Width: vg.Points(0.4)})
	c.Stroke(r.Path())
}

// colourLegendFrame frames the legend box.
var colourLegendFrame = color.Gray{Y: 150}
