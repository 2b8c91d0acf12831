package pdfreport

import (
	"bytes"
	"fmt"
	"math"
	"strings"
	"testing"

	"codeberg.org/go-fonts/liberation/liberationsansregular"
	"github.com/jung-kurt/gofpdf"
	"gonum.org/v1/plot/vg"

	"github.com/stepgate/stepgate/templates"
)

func TestClean(t *testing.T) {
	tests := []struct {
		name, in, want string
	}{
		{"plain ASCII kept", "SN-1001", "SN-1001"},
		{"Greek, signs and arrows kept", "ζ ωn ± µ → Ω", "ζ ωn ± µ → Ω"},
		{"Latin accents kept", "Prüfstand Müller-Øre", "Prüfstand Müller-Øre"},
		{"bell and escape removed", "SN\x07-10\x1b05", "SN-1005"},
		{"tab and line breaks become spaces", "a\tb\r\nc", "a b  c"},
		{"DEL and C1 controls removed", "a\x7fb\u0085c", "abc"},
		{"bidirectional override removed", "SN-\u202e1001", "SN-1001"},
		{"zero-width space removed", "SN\u200b-1001", "SN-1001"},
		{"invalid UTF-8 marked", "SN-\xff1001", "SN-?1001"},
		{"outside the BMP marked", "SN-\U0001F600", "SN-?"},
		{"not in the font marked", "SN-\u4e2d", "SN-?"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if got := Clean(tc.in); got != tc.want {
				t.Errorf("Clean(%q) = %q, want %q", tc.in, got, tc.want)
			}
		})
	}
}

// TestGlyphs checks that the embedded font draws every non-ASCII character
// the report's own wording uses.
func TestGlyphs(t *testing.T) {
	for _, r := range "ζωσ±µμ→…—–•·“”²√≤≥−ΩÄÖÜäöüß" {
		if !HasGlyph(r) {
			t.Errorf("font lacks %q (U+%04X)", r, r)
		}
	}
	for _, r := range "\U0001F600\u4e2d" {
		if HasGlyph(r) {
			t.Errorf("HasGlyph(%q) = true for a character Liberation Sans does not cover", r)
		}
	}
}

func TestBlocks(t *testing.T) {
	in := "# Title\n\nFirst line\nsecond line.\n\n- one\n- two\n  continued\n# Next\ntext"
	got := Blocks(in)
	want := []Block{
		{BlockHeading, []string{"Title"}},
		{BlockParagraph, []string{"First line", "second line."}},
		{BlockList, []string{"one", "two continued"}},
		{BlockHeading, []string{"Next"}},
		{BlockParagraph, []string{"text"}},
	}
	if fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("Blocks = %v\nwant %v", got, want)
	}
}

// TestCautions checks that the safety text names the machinery-safety
// standards to defer to (ISO 12100:2010 risk assessment; IEC 60204-1 with
// its stop categories 0, 1 and 2; ISO 13850 emergency stop; ISO 14118
// unexpected start-up; ISO 14120 guards; ISO 13849-1 safety-related control
// parts; IEC 61800-5-2 drive safety functions; OSHA 29 CFR 1910.147
// lockout/tagout) and marks the gain rule of thumb as one.
func TestCautions(t *testing.T) {
	text := strings.Join(strings.Fields(templates.Cautions), " ")
	for _, w := range []string{
		"ISO 12100:2010", "IEC 60204-1", "stop categories 0, 1 and 2", "ISO 13850", "ISO 14118",
		"ISO 14120", "ISO 13849-1", "IEC 61800-5-2", "OSHA 29 CFR 1910.147", "lockout/tagout",
		"emergency stop", "guard", "stored energy", "hot", "no safety certification",
		"half to two thirds", "(common practice, no source)", "competent, licensed practice prevail",
	} {
		if !strings.Contains(text, w) {
			t.Errorf("cautions lack %q", w)
		}
	}
	blocks := Blocks(templates.Cautions)
	if len(blocks) == 0 || blocks[0].Kind != BlockHeading {
		t.Fatalf("cautions should open with a heading, got %v", blocks)
	}
	for _, b := range blocks {
		for _, l := range b.Lines {
			if c := Clean(l); c != l {
				t.Errorf("cautions line prints differently from its text: %q → %q", l, c)
			}
		}
	}
}

// TestCanvasGeometry checks the canvas's coordinate mapping against plane
// geometry: vg's origin is the bottom-left corner of the canvas, y up, in
// points (1/72 in); the page is in millimetres, y down; PDF content is in
// points, y up from the page's bottom edge (ISO 32000-1:2008, §8.3.2.3).
func TestCanvasGeometry(t *testing.T) {
	pdf := gofpdf.New("P", "mm", "A4", "")
	pdf.SetCompression(false)
	pdf.AddPage()
	const x0, y0, w, h = 20.0, 30.0, 100.0, 50.0 // canvas rectangle on the page, mm
	c := NewCanvas(pdf, x0, y0, w, h, fontFamily)
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

// TestWrap checks the line breaking of the layout: lines break at plain
// spaces only, so a no-break space (U+00A0) keeps a number with its unit,
// and a word longer than a line is cut.
func TestWrap(t *testing.T) {
	pdf := gofpdf.New("P", "mm", "A4", "")
	pdf.AddUTF8FontFromBytes(fontFamily, "", liberationsansregular.TTF)
	pdf.SetFont(fontFamily, "", 10)
	l := &layout{pdf: pdf}
	w := pdf.GetStringWidth("coefficient of variation 7.05")*1.02 + 2*pdf.GetCellMargin()
	tests := []struct {
		in   string
		want []string
	}{
		{"coefficient of variation 7.05 %, above", []string{"coefficient of variation 7.05", "%, above"}},
		{"coefficient of variation 7.05\u00a0%, above", []string{"coefficient of variation", "7.05\u00a0%, above"}},
		{"", []string{""}},
	}
	for _, tc := range tests {
		if got := l.wrap(tc.in, w, 0); strings.Join(got, "|") != strings.Join(tc.want, "|") {
			t.Errorf("wrap(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
	long := strings.Repeat("x", 200)
	lines := l.wrap(long, w, 0)
	if len(lines) < 2 || strings.Join(lines, "") != long {
		t.Errorf("a long word should be cut into lines that join to it: %q", lines)
	}
	for _, line := range lines {
		if pdf.GetStringWidth(line) > w-2*pdf.GetCellMargin()+1e-9 {
			t.Errorf("line %q wider than the cell", line)
		}
	}
	if cut := l.wrap("one two three four five six seven eight nine ten eleven twelve", w, 2); len(cut) != 2 || !strings.HasSuffix(cut[1], "…") {
		t.Errorf("two lines at most: %q", cut)
	}
}

// TestFigurePanicIsAnError: a figure that cannot be prepared (here a unit
// index past the batch) gives an error for its page, not a crash of the
// goroutine that prepares figures ahead of the layout.
func TestFigurePanicIsAnError(t *testing.T) {
	b := testBatch()
	next, stop := figures(b, keptTraces{}, []int{0, len(b.Units) + 5})
	defer stop()
	if fig := next(); fig == nil || fig.err != nil {
		t.Fatalf("unit 0: %+v", fig)
	}
	fig := next()
	if fig == nil || fig.err == nil || !strings.Contains(fig.err.Error(), "internal error preparing the figure") {
		t.Fatalf("unit past the batch: figure %+v, want an internal error", fig)
	}
}
