package pdfreport

import (
	"bytes"
	"fmt"
	"math"
	"regexp"
	"strings"
	"testing"

	"github.com/jung-kurt/gofpdf"
	"gonum.org/v1/plot/vg"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/metrics"
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

func TestNum(t *testing.T) {
	tests := []struct {
		in   float64
		want string
	}{
		{0, "0"}, {10, "10"}, {9.478, "9.478"}, {0.55362, "0.5536"}, {1.33333, "1.333"},
		{-0.9478, "-0.9478"}, {12345.6, "12346"}, {0.0001234, "1.234e-04"}, {2.5e6, "2.500e+06"},
	}
	for _, tc := range tests {
		if got := Num(tc.in); got != tc.want {
			t.Errorf("Num(%v) = %q, want %q", tc.in, got, tc.want)
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

func TestReportID(t *testing.T) {
	b := testBatch()
	id := ReportID(b)
	if !regexp.MustCompile(`^ACT-25-C-[0-9a-f]{8}$`).MatchString(id) {
		t.Fatalf("ReportID = %q, want ACT-25-C- and 8 hex digits", id)
	}
	if again := ReportID(testBatch()); again != id {
		t.Errorf("same inputs gave %q and %q", id, again)
	}
	tests := []struct {
		name string
		edit func(b *acceptance.Batch)
	}{
		{"unit file changed", func(b *acceptance.Batch) { b.Units[0].SHA256 = digest("other") }},
		{"unit renamed", func(b *acceptance.Batch) { b.Units[0].Unit = "SN-9001" }},
		{"units reordered", func(b *acceptance.Batch) { b.Units[0], b.Units[1] = b.Units[1], b.Units[0] }},
		{"unit dropped", func(b *acceptance.Batch) { b.Units = b.Units[1:] }},
		{"spec changed", func(b *acceptance.Batch) { b.Spec.SHA256 = digest("other spec") }},
		{"date changed", func(b *acceptance.Batch) { b.ReportDate = "2024-05-18" }},
		{"tool changed", func(b *acceptance.Batch) { b.Tool.Version = "0.2.0" }},
	}
	for _, tc := range tests {
		b := testBatch()
		tc.edit(b)
		if got := ReportID(b); got == id {
			t.Errorf("%s: report id unchanged (%s)", tc.name, got)
		}
	}
	// The same files in another folder are the same inputs.
	b = testBatch()
	for i := range b.Units {
		b.Units[i].File = "/elsewhere/" + b.Units[i].File
	}
	if got := ReportID(b); got != id {
		t.Errorf("moving the logs changed the id: %s, was %s", got, id)
	}
	b = testBatch()
	b.Spec.SpecID, b.Spec.Revision = "", ""
	if got := ReportID(b); !regexp.MustCompile(`^[0-9a-f]{8}$`).MatchString(got) {
		t.Errorf("without spec id and revision: %q, want 8 hex digits", got)
	}
}

func TestLimitedMetricsAndUnits(t *testing.T) {
	b := testBatch()
	b.Limits["zz_custom"] = acceptance.Limit{}
	got := strings.Join(LimitedMetrics(b), ",")
	// metrics.Names order, then others alphabetically
	want := "final_value,rise_time_s,overshoot_pct,settling_time_s,zz_custom"
	if got != want {
		t.Errorf("LimitedMetrics = %s, want %s", got, want)
	}
	for _, tc := range []struct{ name, want string }{
		{"overshoot_pct", "%"}, {"rise_time_s", "s"}, {"final_value", "mm"}, {"steady_state_error", "mm"},
		{"steady_state_error_pct", "%"}, {"zz_custom", ""},
	} {
		if u := MetricUnit(tc.name, "mm"); u != tc.want {
			t.Errorf("MetricUnit(%s) = %q, want %q", tc.name, u, tc.want)
		}
	}
}

func TestCompare(t *testing.T) {
	b := testBatch()
	cmp := Compare(b)
	if len(cmp) != len(LimitedMetrics(b)) {
		t.Fatalf("%d comparisons, want one per limited metric (%d)", len(cmp), len(LimitedMetrics(b)))
	}
	// Overshoot of the up-steps: the four recorded units, closed form
	// 100·exp(−πζ/√(1−ζ²)) (Ogata, 5th ed., §5-3).
	var sum, lo, hi float64 = 0, math.Inf(1), math.Inf(-1)
	for _, u := range b.Units {
		for _, s := range u.Steps {
			if s.From == 0 && s.To == 10 {
				v := s.Metrics[string(metrics.Overshoot)].V
				sum += v
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
	}
	for _, c := range cmp {
		if c.Metric != string(metrics.Overshoot) {
			continue
		}
		wantPred := 100 * math.Exp(-math.Pi*0.6/math.Sqrt(1-0.36)) // 9.48 % for ζ = 0.6 (Ogata Example 5-1, from memory)
		if !c.Predicted.OK || math.Abs(c.Predicted.V-wantPred) > 1e-9 {
			t.Errorf("predicted overshoot %+v, want %.4f", c.Predicted, wantPred)
		}
		if c.Kind != "ideal" || c.Steps != 4 || c.Measured != 4 {
			t.Errorf("kind %s, %d of %d steps: want ideal, 4 of 4", c.Kind, c.Measured, c.Steps)
		}
		if math.Abs(c.Mean.V-sum/4) > 1e-12 || c.Min.V != lo || c.Max.V != hi {
			t.Errorf("mean/min/max %v %v %v, want %v %v %v", c.Mean.V, c.Min.V, c.Max.V, sum/4, lo, hi)
		}
	}
	// A nominal step that no unit made has unknown statistics, not zeros.
	b.Model.Nominal[0].From, b.Model.Nominal[0].To = 0, 5
	for _, c := range Compare(b) {
		if c.Mean.OK || c.Min.OK || c.Max.OK || c.Mean.Why == "" || c.Steps != 0 {
			t.Errorf("%s: unmatched nominal step gave %+v", c.Metric, c)
		}
	}
	b.Model = nil
	if Compare(b) != nil {
		t.Errorf("Compare without a model should be nil")
	}
}

func TestYield(t *testing.T) {
	if _, ok := Yield(acceptance.Summary{}); ok {
		t.Errorf("yield of no units should be undefined")
	}
	if y, ok := Yield(acceptance.Summary{Units: 8, Pass: 6, Fail: 2}); !ok || y != 0.75 {
		t.Errorf("yield 6 of 8 = %v, want 0.75", y)
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
