package pdfenc

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"image"
	"image/color"
	"image/png"
	"math"
	"strconv"

	"github.com/jung-kurt/gofpdf"
	stdfont "golang.org/x/image/font"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
)

// mmPerPoint converts the vg package's lengths (points, 1/72 inch) to the
// millimetres the document is laid out in.
const mmPerPoint = 25.4 / 72

// Canvas is a vg.Canvas that draws straight into a gofpdf page as vector
// graphics: paths become PDF path operators, text is set in the embedded
// Unicode font. It covers the rectangle of W × H millimetres whose top-left
// corner is at (X, Y) millimetres on the current page; vg's origin is the
// rectangle's bottom-left corner, as the vg package expects.
//
// Transforms (Translate, Rotate, Scale) are kept as a matrix on the Go side
// and applied to every point, so the page's own coordinate system is never
// changed and Push/Pop need no PDF graphics-state operators.
//
// Paths are written as the same operators, with the same number formats,
// as gofpdf's MoveTo, LineTo, CurveBezierCubicTo, ClosePath and DrawPath
// write, but assembled in one buffer and handed to the page at once; a
// path therefore leaves the document's current position where it was.
// Line width, dash pattern, colours and font are sent only when they
// differ from what the canvas last sent.
type Canvas struct {
	pdf        *gofpdf.Fpdf
	x, y, w, h float64 // placement on the page, mm
	family     string  // gofpdf family of the embedded font
	k          float64 // points per millimetre, as gofpdf scales
	pageH      float64 // page height, mm

	st    canvasState
	stack []canvasState

	// The last values sent to gofpdf, so that unchanged ones are not
	// written again.
	sentWidth float64
	dashSent  bool      // sentDash and sentPhase hold what was sent
	sentDash  []float64 // in millimetres; empty for a solid line
	sentPhase float64
	sentAlpha float64
	stroke    sentColour
	fill      sentColour
	text      sentColour
	fontSent  bool
	fontStyle string
	fontSize  float64

	ops []byte // the path being assembled
}

// sentColour is a colour last sent to gofpdf.
type sentColour struct {
	ok      bool
	r, g, b int
}

// same reports whether r, g, b is the colour last sent, and records it.
func (s *sentColour) same(r, g, b int) bool {
	if s.ok && s.r == r && s.g == g && s.b == b {
		return true
	}
	*s = sentColour{ok: true, r: r, g: g, b: b}
	return false
}

type canvasState struct {
	m      affine
	width  vg.Length
	dashes []vg.Length
	offset vg.Length
	colour color.Color
}

// affine maps (x, y) to (a·x + c·y + e, b·x + d·y + f).
type affine struct{ a, b, c, d, e, f float64 }

func identity() affine { return affine{a: 1, d: 1} }

// then returns the transform that applies n first and m after it.
func (m affine) then(n affine) affine {
	return affine{
		a: m.a*n.a + m.c*n.b,
		b: m.b*n.a + m.d*n.b,
		c: m.a*n.c + m.c*n.d,
		d: m.b*n.c + m.d*n.d,
		e: m.a*n.e + m.c*n.f + m.e,
		f: m.b*n.e + m.d*n.f + m.f,
	}
}

func (m affine) apply(p vg.Point) (float64, float64) {
	x, y := float64(p.X), float64(p.Y)
	return m.a*x + m.c*y + m.e, m.b*x + m.d*y + m.f
}

// NewCanvas returns a canvas over the W × H millimetre rectangle at (X, Y)
// on the current page of pdf, drawing text in the given font family, which
// must have been added to pdf with regular and bold styles.
func NewCanvas(pdf *gofpdf.Fpdf, x, y, w, h float64, family string) *Canvas {
	c := &Canvas{pdf: pdf, x: x, y: y, w: w, h: h, family: family, sentWidth: -1, sentAlpha: 1}
	c.k = pdf.GetConversionRatio()
	_, c.pageH = pdf.GetPageSize()
	c.st = canvasState{m: identity(), width: vg.Points(1), colour: color.Black}
	return c
}

// Size returns the canvas size in vg lengths.
func (c *Canvas) Size() (vg.Length, vg.Length) {
	return vg.Length(c.w / mmPerPoint), vg.Length(c.h / mmPerPoint)
}

// SetLineWidth sets the width of stroked paths.
func (c *Canvas) SetLineWidth(w vg.Length) { c.st.width = w }

// SetLineDash sets the dash pattern of stroked paths.
func (c *Canvas) SetLineDash(pattern []vg.Length, offset vg.Length) {
	c.st.dashes = append([]vg.Length(nil), pattern...)
	c.st.offset = offset
}

// SetColor sets the colour of strokes, fills and text; nil is black.
func (c *Canvas) SetColor(col color.Color) {
	if col == nil {
		col = color.Black
	}
	c.st.colour = col
}

// Rotate rotates later drawing by rad radians, counter-clockwise.
func (c *Canvas) Rotate(rad float64) {
	s, co := math.Sin(rad), math.Cos(rad)
	c.st.m = c.st.m.then(affine{a: co, b: s, c: -s, d: co})
}

// Translate moves the origin of later drawing to pt.
func (c *Canvas) Translate(pt vg.Point) {
	c.st.m = c.st.m.then(affine{a: 1, d: 1, e: float64(pt.X), f: float64(pt.Y)})
}

// Scale scales later drawing.
func (c *Canvas) Scale(x, y float64) {
	c.st.m = c.st.m.then(affine{a: x, d: y})
}

// Push saves the line width, dash pattern, transform and colour.
func (c *Canvas) Push() {
	s := c.st
	s.dashes = append([]vg.Length(nil), c.st.dashes...)
	c.stack = append(c.stack, s)
}

// Pop restores the state saved by the matching Push.
func (c *Canvas) Pop() {
	if n := len(c.stack); n > 0 {
		c.st = c.stack[n-1]
		c.stack = c.stack[:n-1]
	}
}

// scale is the factor by which the current transform stretches lengths.
func (c *Canvas) scale() float64 {
	m := c.st.m
	return math.Sqrt(math.Abs(m.a*m.d - m.b*m.c))
}

// page maps a vg point to page millimetres.
func (c *Canvas) page(p vg.Point) (float64, float64) {
	x, y := c.st.m.apply(p)
	return c.x + x*mmPerPoint, c.y + c.h - y*mmPerPoint
}

// Stroke strokes the path with the current width, dashes and colour.
func (c *Canvas) Stroke(p vg.Path) {
	if c.st.width <= 0 || len(p) == 0 {
		return
	}
	if !c.useColour(false) {
		return
	}
	w := float64(c.st.width) * mmPerPoint * c.scale()
	if w != c.sentWidth {
		c.pdf.SetLineWidth(w)
		c.sentWidth = w
	}
	c.useDash()
	if c.trace(p) {
		c.paint('S')
	}
	c.endAlpha()
}

// Fill fills the path with the current colour (non-zero winding rule).
func (c *Canvas) Fill(p vg.Path) {
	if len(p) == 0 || !c.useColour(true) {
		return
	}
	if c.trace(p) {
		c.paint('f')
	}
	c.endAlpha()
}

// trace assembles the path operators in c.ops; it reports whether anything
// was assembled.
func (c *Canvas) trace(p vg.Path) bool {
	c.ops = c.ops[:0]
	open := false
	var cur vg.Point
	for _, comp := range p {
		switch comp.Type {
		case vg.MoveComp:
			c.point(comp.Pos, 'm')
			cur, open = comp.Pos, true
		case vg.LineComp:
			if !open {
				c.point(comp.Pos, 'm')
				open = true
			} else {
				c.point(comp.Pos, 'l')
			}
			cur = comp.Pos
		case vg.ArcComp:
			cur = c.arc(comp, open)
			open = true
		case vg.CurveComp:
			if !open {
				c.point(cur, 'm')
				open = true
			}
			var c1, c2 vg.Point
			switch len(comp.Control) {
			case 1: // quadratic: raise to the equivalent cubic
				q := comp.Control[0]
				c1 = cur.Add(q.Sub(cur).Scale(2.0 / 3))
				c2 = comp.Pos.Add(q.Sub(comp.Pos).Scale(2.0 / 3))
			case 2:
				c1, c2 = comp.Control[0], comp.Control[1]
			default:
				c.point(comp.Pos, 'l')
				cur = comp.Pos
				continue
			}
			c.curve(c1, c2, comp.Pos)
			cur = comp.Pos
		case vg.CloseComp:
			if open {
				c.ops = append(c.ops, 'h', '\n')
			}
		}
	}
	return len(c.ops) > 0
}

// paint ends the assembled path with the painting operator op ('S' to
// stroke, 'f' to fill) and writes it to the page, one operator a line as
// gofpdf writes them.
func (c *Canvas) paint(op byte) {
	c.ops = append(c.ops, op)
	c.pdf.RawWriteStr(string(c.ops))
}

// point appends "x y op" for a vg point, in PDF points with two decimals
// (gofpdf's MoveTo and LineTo format).
func (c *Canvas) point(p vg.Point, op byte) {
	x, y := c.page(p)
	c.ops = appendNum(c.ops, x*c.k, 2)
	c.ops = append(c.ops, ' ')
	c.ops = appendNum(c.ops, (c.pageH-y)*c.k, 2)
	c.ops = append(c.ops, ' ', op, '\n')
}

// curve appends a cubic Bézier segment "x1 y1 x2 y2 x y c" with five
// decimals (gofpdf's CurveBezierCubicTo format).
func (c *Canvas) curve(c1, c2, to vg.Point) {
	for _, p := range [3]vg.Point{c1, c2, to} {
		x, y := c.page(p)
		c.ops = appendNum(c.ops, x*c.k, 5)
		c.ops = append(c.ops, ' ')
		c.ops = appendNum(c.ops, (c.pageH-y)*c.k, 5)
		c.ops = append(c.ops, ' ')
	}
	c.ops = append(c.ops, 'c', '\n')
}

// appendNum appends v with prec decimals as fmt's %.Nf prints it.
func appendNum(b []byte, v float64, prec int) []byte {
	if math.IsInf(v, 1) {
		return append(b, "Inf"...) // fmt drops the plus sign
	}
	return strconv.AppendFloat(b, v, 'f', prec, 64)
}

// arc approximates an arc by straight segments of at most 5 degrees, fine
// enough that no facet shows at the sizes a chart uses. It joins the arc to
// the current point with a line, as the vg back ends do.
func (c *Canvas) arc(comp vg.PathComp, open bool) vg.Point {
	n := int(math.Ceil(math.Abs(comp.Angle) / (5 * math.Pi / 180)))
	if n < 1 {
		n = 1
	}
	var last vg.Point
	for i := 0; i <= n; i++ {
		a := comp.Start + comp.Angle*float64(i)/float64(n)
		pt := vg.Point{
			X: comp.Pos.X + comp.Radius*vg.Length(math.Cos(a)),
			Y: comp.Pos.Y + comp.Radius*vg.Length(math.Sin(a)),
		}
		if i == 0 && !open {
			c.point(pt, 'm')
		} else {
			c.point(pt, 'l')
		}
		last = pt
	}
	return last
}

// useColour sends the current colour for a stroke or a fill; it reports
// false when the colour is fully transparent and nothing should be drawn.
func (c *Canvas) useColour(fill bool) bool {
	r, g, b, a := c.st.colour.RGBA()
	if a == 0 {
		return false
	}
	// Undo the premultiplication of color.Color.
	rgb := color.RGBA{
		R: uint8(r * 0xFFFF / a >> 8), G: uint8(g * 0xFFFF / a >> 8), B: uint8(b * 0xFFFF / a >> 8), A: 0xFF,
	}
	if fill {
		if !c.fill.same(int(rgb.R), int(rgb.G), int(rgb.B)) {
			c.pdf.SetFillColor(int(rgb.R), int(rgb.G), int(rgb.B))
		}
	} else if !c.stroke.same(int(rgb.R), int(rgb.G), int(rgb.B)) {
		c.pdf.SetDrawColor(int(rgb.R), int(rgb.G), int(rgb.B))
	}
	alpha := float64(a) / 0xFFFF
	if alpha != c.sentAlpha {
		c.pdf.SetAlpha(alpha, "Normal")
		c.sentAlpha = alpha
	}
	return true
}

func (c *Canvas) endAlpha() {
	if c.sentAlpha != 1 {
		c.pdf.SetAlpha(1, "Normal")
		c.sentAlpha = 1
	}
}

// useDash sends the current dash pattern, scaled to millimetres, unless it
// is the one last sent. A pattern without a positive dash is solid.
func (c *Canvas) useDash() {
	k := mmPerPoint * c.scale()
	solid := true
	for _, d := range c.st.dashes {
		if d > 0 {
			solid = false
			break
		}
	}
	phase := 0.0
	n := 0
	if !solid {
		phase = float64(c.st.offset) * k
		n = len(c.st.dashes)
	}
	if c.dashSent && len(c.sentDash) == n && (solid || phase == c.sentPhase) {
		same := true
		for i := 0; i < n; i++ {
			if c.sentDash[i] != float64(c.st.dashes[i])*k {
				same = false
				break
			}
		}
		if same {
			return
		}
	}
	c.sentDash = c.sentDash[:0]
	for i := 0; i < n; i++ {
		c.sentDash = append(c.sentDash, float64(c.st.dashes[i])*k)
	}
	c.sentPhase, c.dashSent = phase, true
	if solid {
		c.pdf.SetDashPattern([]float64{}, 0)
	} else {
		c.pdf.SetDashPattern(c.sentDash, phase)
	}
}

// FillString sets text with its baseline starting at pt, in the embedded
// font (bold when the face asks for a bold weight), rotated with the
// current transform.
func (c *Canvas) FillString(f font.Face, pt vg.Point, text string) {
	size := float64(f.Font.Size) * c.scale()
	if size <= 0 || text == "" || !c.useColour(true) {
		return
	}
	style := ""
	if f.Font.Weight >= stdfont.WeightSemiBold {
		style = "B"
	}
	if !c.fontSent || style != c.fontStyle || size != c.fontSize {
		c.pdf.SetFont(c.family, style, size)
		c.fontSent, c.fontStyle, c.fontSize = true, style, size
	}
	r, g, b, _ := c.st.colour.RGBA()
	if !c.text.same(int(r>>8), int(g>>8), int(b>>8)) {
		c.pdf.SetTextColor(int(r>>8), int(g>>8), int(b>>8))
	}
	x, y := c.page(pt)
	m := c.st.m
	angle := math.Atan2(m.b, m.a) * 180 / math.Pi
	if math.Abs(angle) > 1e-9 {
		c.pdf.TransformBegin()
		c.pdf.TransformRotate(angle, x, y)
		c.pdf.Text(x, y, Clean(text))
		c.pdf.TransformEnd()
	} else {
		c.pdf.Text(x, y, Clean(text))
	}
	c.endAlpha()
}

// DrawImage draws a raster image scaled to the rectangle. The image is
// embedded as PNG under a name derived from its bytes, so the same image
// gives the same document.
func (c *Canvas) DrawImage(rect vg.Rectangle, img image.Image) {
	var buf bytes.Buffer
	if err := png.Encode(&buf, img); err != nil {
		c.pdf.SetError(err)
		return
	}
	sum := sha256.Sum256(buf.Bytes())
	name := "vgimage-" + hex.EncodeToString(sum[:8])
	opt := gofpdf.ImageOptions{ImageType: "PNG"}
	c.pdf.RegisterImageOptionsReader(name, opt, &buf)
	x0, y0 := c.page(rect.Min)
	x1, y1 := c.page(rect.Max)
	c.pdf.ImageOptions(name, math.Min(x0, x1), math.Min(y0, y1), math.Abs(x1-x0), math.Abs(y1-y0), false, opt, 0, "")
}
