package pdfenc

import (
	"bytes"
	"fmt"
	"math"
	"testing"

	"github.com/jung-kurt/gofpdf"
	"gonum.org/v1/plot/vg"
)

// TestCanvasGeometry checks the canvas's coordinate mapping against plane
// geometry: vg's origin is the bottom-left corner of the canvas, y up, in
// points (1/72 in); the page is in millimetres, y down; PDF content is in
// points, y up from the page's bottom edge (ISO 32000-1:2008, §8.3.2.3).
func TestCanvasGeometry(t *testing.T) {
	pdf := gofpdf.New("P", "mm", "A4", "")
	pdf.SetCompression(false)
	pdf.AddPage()
	const x0, y0, w, h = 20.0, 30.0, 100.0, 50.0 // canvas rectangle on the page, mm
	c := NewCanvas(pdf, x0, y0, w, h, FontFamily)
	if cw, ch := c.Size(); math.Abs(float64(cw)-w*72/25.4) > 1e-9 || math.Abs(float64(ch)-h*72/25.4) > 1e-9 {
		t.Errorf("Size = %v × %v pt, want %v × %v", cw, ch, w*72/25.4, h*72/25.4)
	}
	tests := []struct {
		name   string
		setup  func()
		pt     vg.Point
		px, py float64 // expected page position, mm
	}{
		{"origin is the bottom-left corner", func() {}, vg.Point{}, x0, y0 + h},
		{"72 pt is 25.4 mm", func() {}, vg.Point{X: 72, Y: 72}, x0 + 25.4, y0 + h - 25.4},
		{"translate", func() { c.Translate(vg.Point{X: 72, Y: 0}) }, vg.Point{}, x0 + 25.4, y0 + h},
		{"rotate a quarter turn counter-clockwise", func() { c.Rotate(math.Pi / 2) }, vg.Point{X: 72}, x0, y0 + h - 25.4},
		{"translate then rotate", func() { c.Translate(vg.Point{X: 72}); c.Rotate(math.Pi / 2) }, vg.Point{X: 72}, x0 + 25.4, y0 + h - 25.4},
		{"scale", func() { c.Scale(2, 0.5) }, vg.Point{X: 36, Y: 144}, x0 + 25.4, y0 + h - 25.4},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c.Push()
			defer c.Pop()
			tc.setup()
			px, py := c.page(tc.pt)
			if math.Abs(px-tc.px) > 1e-9 || math.Abs(py-tc.py) > 1e-9 {
				t.Errorf("page(%v) = (%.6f, %.6f) mm, want (%.6f, %.6f)", tc.pt, px, py, tc.px, tc.py)
			}
		})
	}
	// Pop restored the identity: a stroked line lands where the mapping says,
	// written as PDF points from the bottom edge.
	var p vg.Path
	p.Move(vg.Point{})
	p.Line(vg.Point{X: 72, Y: 72})
	c.SetLineWidth(1)
	c.Stroke(p)
	var buf bytes.Buffer
	if err := pdf.Output(&buf); err != nil {
		t.Fatal(err)
	}
	k := 72 / 25.4
	move := fmt.Sprintf("%.2f %.2f m", x0*k, (297-(y0+h))*k)
	line := fmt.Sprintf("%.2f %.2f l", (x0+25.4)*k, (297-(y0+h-25.4))*k)
	if !bytes.Contains(buf.Bytes(), []byte(move)) || !bytes.Contains(buf.Bytes(), []byte(line)) {
		t.Errorf("content lacks %q then %q", move, line)
	}
}
