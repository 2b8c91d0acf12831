package pdfreport

import (
	"fmt"
	"strings"
	"testing"

	"codeberg.org/go-fonts/liberation/liberationsansregular"
	"github.com/jung-kurt/gofpdf"

	"github.com/stepgate/stepgate/acceptance/internal/pdfenc"
	"github.com/stepgate/stepgate/templates"
)

func TestBlocks(t *testing.T) {
	in := "# Title\n\nFirst line\nsecond line.\n\n- one\n- two\n  continued\n# Next\ntext"
	got := textBlocks(in)
	want := []textBlock{
		{blockHeading, []string{"Title"}},
		{blockParagraph, []string{"First line", "second line."}},
		{blockList, []string{"one", "two continued"}},
		{blockHeading, []string{"Next"}},
		{blockParagraph, []string{"text"}},
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
// lockout/tagout) and gives the reason a computed gain is optimistic
// (friction, loop delay) without an unsourced ratio.
func TestCautions(t *testing.T) {
	text := strings.Join(strings.Fields(templates.Cautions), " ")
	for _, w := range []string{
		"ISO 12100:2010", "IEC 60204-1", "stop categories 0, 1 and 2", "ISO 13850", "ISO 14118",
		"ISO 14120", "ISO 13849-1", "IEC 61800-5-2", "OSHA 29 CFR 1910.147", "lockout/tagout",
		"emergency stop", "guard", "stored energy", "hot", "no safety certification",
		"clearly lower gain", "friction near zero speed", "competent, licensed practice prevail",
	} {
		if !strings.Contains(text, w) {
			t.Errorf("cautions lack %q", w)
		}
	}
	blocks := textBlocks(templates.Cautions)
	if len(blocks) == 0 || blocks[0].Kind != blockHeading {
		t.Fatalf("cautions should open with a heading, got %v", blocks)
	}
	for _, b := range blocks {
		for _, l := range b.Lines {
			if c := pdfenc.Clean(l); c != l {
				t.Errorf("cautions line prints differently from its text: %q → %q", l, c)
			}
		}
	}
}

// TestWrap checks the line breaking of the layout: lines break at plain
// spaces only, so a no-break space (U+00A0) keeps a number with its unit,
// and a word longer than a line is cut.
func TestWrap(t *testing.T) {
	pdf := gofpdf.New("P", "mm", "A4", "")
	pdf.AddUTF8FontFromBytes(pdfenc.FontFamily, "", liberationsansregular.TTF)
	pdf.SetFont(pdfenc.FontFamily, "", 10)
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
