package pdfreport

import (
	"strings"

	"github.com/jung-kurt/gofpdf"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/internal/pdfenc"
)

// Page geometry, millimetres, A4 portrait.
const (
	pageW    = 210.0
	pageH    = 297.0
	marginL  = 15.0
	marginR  = 15.0
	contentW = pageW - marginL - marginR
	bodyTop  = 24.0
	bodyEnd  = 279.0 // lowest y the body may reach; the footer is below
	lineH    = 4.4   // line height of 8.5 pt table text
)

// rgb is a colour of the page layout.
type rgb struct{ r, g, b int }

var (
	black     = rgb{0, 0, 0}
	grey      = rgb{90, 90, 90}
	lightGrey = rgb{235, 235, 235}
	ruleGrey  = rgb{190, 190, 190}
	linkBlue  = rgb{0, 70, 160}

	passFill    = rgb{212, 237, 218}
	passText    = rgb{21, 87, 36}
	failFill    = rgb{248, 215, 218}
	failText    = rgb{114, 28, 36}
	invalidFill = rgb{255, 232, 179}
	invalidText = rgb{122, 75, 0}
)

// verdictColours returns the fill and text colours of a verdict.
func verdictColours(v acceptance.Verdict) (fill, text rgb) {
	switch v {
	case acceptance.Pass:
		return passFill, passText
	case acceptance.Fail:
		return failFill, failText
	}
	return invalidFill, invalidText
}

// verdictWord spells a verdict for print, so that it reads without colour.
func verdictWord(v acceptance.Verdict) string {
	switch v {
	case acceptance.Pass:
		return "PASS"
	case acceptance.Fail:
		return "FAIL"
	case acceptance.Invalid:
		return "INVALID"
	}
	return strings.ToUpper(string(v))
}

// layout wraps the document with the drawing primitives the report uses.
//
// A font, colour or line width equal to the one in force is not set again,
// so that a table does not write a font selection for every cell. gofpdf
// tells the colours and the line width in force; the font it does not, so
// the layout remembers the one it last selected (see keepFont and
// forgetFont for what else changes it).
type layout struct {
	pdf *gofpdf.Fpdf

	fontKnown bool // fontStyle and fontSize are the font in force
	fontStyle string
	fontSize  float64
}

func (l *layout) font(style string, size float64) {
	if l.fontKnown && style == l.fontStyle && size == l.fontSize {
		return
	}
	l.pdf.SetFont(pdfenc.FontFamily, style, size)
	l.fontKnown, l.fontStyle, l.fontSize = true, style, size
}

// keepFont returns a function that restores what the layout knows of the
// font in force. The page header and footer run inside gofpdf's page break,
// which selects the font of before the break again once they are done.
func (l *layout) keepFont() func() {
	known, style, size := l.fontKnown, l.fontStyle, l.fontSize
	return func() { l.fontKnown, l.fontStyle, l.fontSize = known, style, size }
}

// forgetFont is called after something other than font selected a font.
func (l *layout) forgetFont() { l.fontKnown = false }

func (l *layout) textColour(c rgb) {
	if r, g, b := l.pdf.GetTextColor(); r == c.r && g == c.g && b == c.b {
		return
	}
	l.pdf.SetTextColor(c.r, c.g, c.b)
}

func (l *layout) fillColour(c rgb) {
	if r, g, b := l.pdf.GetFillColor(); r == c.r && g == c.g && b == c.b {
		return
	}
	l.pdf.SetFillColor(c.r, c.g, c.b)
}

func (l *layout) drawColour(c rgb) {
	if r, g, b := l.pdf.GetDrawColor(); r == c.r && g == c.g && b == c.b {
		return
	}
	l.pdf.SetDrawColor(c.r, c.g, c.b)
}

// lineWidth sets the width of ruled lines, in millimetres.
func (l *layout) lineWidth(w float64) {
	if l.pdf.GetLineWidth() == w {
		return
	}
	l.pdf.SetLineWidth(w)
}

// fit cleans s and shortens it with an ellipsis so that it fits in a cell
// of width w in the current font.
func (l *layout) fit(s string, w float64) string {
	s = pdfenc.Clean(s)
	avail := w - 2*l.pdf.GetCellMargin()
	if l.pdf.GetStringWidth(s) <= avail {
		return s
	}
	r := []rune(s)
	lo, hi := 0, len(r)
	for lo < hi {
		mid := (lo + hi + 1) / 2
		if l.pdf.GetStringWidth(string(r[:mid])+"…") <= avail {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	return strings.TrimRight(string(r[:lo]), " ") + "…"
}

// wrap cleans s and splits it into lines of width w in the current font,
// at most maxLines lines (0: no limit); a cut last line ends with an
// ellipsis. Lines break only at plain spaces, so a no-break space keeps a
// number with its unit.
func (l *layout) wrap(s string, w float64, maxLines int) []string {
	s = pdfenc.Clean(s)
	if s == "" {
		return []string{""}
	}
	lines := l.split(s, w-2*l.pdf.GetCellMargin())
	if maxLines > 0 && len(lines) > maxLines {
		rest := strings.Join(lines[maxLines-1:], " ")
		lines = append(lines[:maxLines-1], l.fit(rest+" …", w))
	}
	return lines
}

// split breaks s into lines no wider than avail in the current font,
// greedily at plain spaces; a word wider than a line is cut between
// characters.
func (l *layout) split(s string, avail float64) []string {
	var lines []string
	line := ""
	width := func(t string) float64 { return l.pdf.GetStringWidth(t) }
	for _, word := range strings.Split(s, " ") {
		if word == "" {
			continue
		}
		try := word
		if line != "" {
			try = line + " " + word
		}
		if width(try) <= avail {
			line = try
			continue
		}
		if line != "" {
			lines = append(lines, line)
		}
		line = word
		for width(line) > avail {
			r := []rune(line)
			cut := len(r) - 1
			for cut > 1 && width(string(r[:cut])) > avail {
				cut--
			}
			lines = append(lines, string(r[:cut]))
			line = string(r[cut:])
		}
	}
	if line != "" || len(lines) == 0 {
		lines = append(lines, line)
	}
	return lines
}

// ensure starts a new page when fewer than h millimetres are left.
func (l *layout) ensure(h float64) bool {
	if l.pdf.GetY()+h > bodyEnd {
		l.pdf.AddPage()
		return true
	}
	return false
}

// heading prints a section heading, keeping at least keep millimetres of
// the section on the same page, and enters it in the document outline.
func (l *layout) heading(s string, keep float64) {
	l.ensure(9 + keep)
	l.pdf.Ln(2)
	l.font("B", 12)
	l.textColour(black)
	l.bookmark(s, 0)
	l.headingText(s)
}

// headingMore prints the heading of a section continued on a new page,
// without a second outline entry.
func (l *layout) headingMore(s string, keep float64) {
	l.ensure(9 + keep)
	l.pdf.Ln(2)
	l.font("B", 12)
	l.textColour(black)
	l.headingText(s)
}

// headingText prints a heading line in the font in force.
func (l *layout) headingText(s string) {
	l.pdf.CellFormat(contentW, 7, l.fit(s, contentW), "", 1, "L", false, 0, "")
	l.pdf.Ln(1)
}

// bookmark enters s in the document outline at the given level (0 for a
// section), pointing at the current position. The font must be selected:
// gofpdf encodes the title for the font in force.
func (l *layout) bookmark(s string, level int) {
	l.pdf.Bookmark(pdfenc.Clean(s), level, -1)
}

// subheading prints a smaller heading.
func (l *layout) subheading(s string, keep float64) {
	l.ensure(7 + keep)
	l.pdf.Ln(1)
	l.font("B", 9.5)
	l.textColour(black)
	l.pdf.CellFormat(contentW, 5.5, l.fit(s, contentW), "", 1, "L", false, 0, "")
}

// para prints wrapped text across the body width, breaking pages between
// lines.
func (l *layout) para(s string, size, lh float64, c rgb) {
	l.font("", size)
	l.textColour(c)
	for _, line := range l.wrap(s, contentW, 0) {
		l.ensure(lh)
		l.pdf.SetX(marginL)
		l.pdf.CellFormat(contentW, lh, line, "", 1, "L", false, 0, "")
	}
}

// column is one column of a table.
type column struct {
	title string
	width float64
	align string // "L", "C" or "R"
	wrap  int    // most lines a cell may wrap to; 0 or 1 keeps one line
}

// cell is one table cell.
type cell struct {
	text       string
	bold       bool
	fill, ink  *rgb
	smallerInk bool // grey text for a secondary value
	link       int  // internal link the cell points to (gofpdf AddLink), 0 for none
}

func txt(s string) cell { return cell{text: s} }

func verdictCell(v acceptance.Verdict) cell {
	f, t := verdictColours(v)
	return cell{text: verdictWord(v), bold: true, fill: &f, ink: &t}
}

// table draws a table with a repeated header row on every page it spans.
func (l *layout) table(cols []column, rows [][]cell) {
	l.ensure(6 + lineH + 1.5)
	l.tableHeader(cols)
	for _, row := range rows {
		lines := l.rowLines(cols, row)
		n := 1
		for _, ls := range lines {
			n = max(n, len(ls))
		}
		h := float64(n)*lineH + 1.2
		if l.ensure(h) {
			l.tableHeader(cols)
		}
		y := l.pdf.GetY()
		x := marginL
		for i, c := range cols {
			var ce cell
			if i < len(row) {
				ce = row[i]
			}
			l.tableCell(ce, lines[i], x, y, c, h)
			x += c.width
		}
		l.drawColour(ruleGrey)
		l.lineWidth(0.15)
		l.pdf.Line(marginL, y+h, marginL+contentW, y+h)
		l.pdf.SetXY(marginL, y+h)
	}
	l.textColour(black)
}

// tableHeader draws the column titles on a grey band.
func (l *layout) tableHeader(cols []column) {
	l.font("B", 8.5)
	l.textColour(black)
	l.fillColour(lightGrey)
	x := marginL
	y := l.pdf.GetY()
	for _, c := range cols {
		l.pdf.SetXY(x, y)
		l.pdf.CellFormat(c.width, 6, l.fit(c.title, c.width), "", 0, c.align, true, 0, "")
		x += c.width
	}
	l.pdf.SetXY(marginL, y+6)
}

// rowLines breaks the cells of a row into the lines they print on: wrapped
// in a column that wraps, else fitted to one line.
func (l *layout) rowLines(cols []column, row []cell) [][]string {
	lines := make([][]string, len(cols))
	for i, c := range cols {
		if i >= len(row) {
			lines[i] = []string{""}
			continue
		}
		if row[i].bold {
			l.font("B", 8.5)
		} else {
			l.font("", 8.5)
		}
		if c.wrap > 1 {
			lines[i] = l.wrap(row[i].text, c.width, c.wrap)
		} else {
			lines[i] = []string{l.fit(row[i].text, c.width)}
		}
	}
	return lines
}

// tableCell draws one cell of height h at (x, y): its fill, then its lines
// in its weight and ink.
func (l *layout) tableCell(ce cell, lines []string, x, y float64, c column, h float64) {
	if ce.fill != nil {
		l.fillColour(*ce.fill)
		l.pdf.Rect(x, y, c.width, h, "F")
	}
	style := ""
	if ce.bold {
		style = "B"
	}
	l.font(style, 8.5)
	ink := black
	if ce.smallerInk {
		ink = grey
	}
	if ce.link != 0 {
		ink = linkBlue
	}
	if ce.ink != nil {
		ink = *ce.ink
	}
	l.textColour(ink)
	for k, line := range lines {
		if line == "" {
			// An empty cell without border or fill draws nothing; the row
			// has room, so it cannot break the page.
			continue
		}
		l.pdf.SetXY(x, y+0.6+float64(k)*lineH)
		l.pdf.CellFormat(c.width, lineH, line, "", 0, c.align, false, 0, "")
	}
	if ce.link != 0 {
		l.pdf.Link(x, y, c.width, h, ce.link)
	}
}

// keyValues draws a two-column list of labels and values.
func (l *layout) keyValues(labelW float64, kv [][2]string) {
	for _, p := range kv {
		l.font("", 9)
		lines := l.wrap(p[1], contentW-labelW, 4)
		h := float64(len(lines))*4.6 + 0.6
		l.ensure(h)
		y := l.pdf.GetY()
		l.font("B", 9)
		l.textColour(grey)
		l.pdf.SetXY(marginL, y)
		l.pdf.CellFormat(labelW, 4.6, l.fit(p[0], labelW), "", 0, "L", false, 0, "")
		l.font("", 9)
		l.textColour(black)
		for k, line := range lines {
			l.pdf.SetXY(marginL+labelW, y+float64(k)*4.6)
			l.pdf.CellFormat(contentW-labelW, 4.6, line, "", 0, "L", false, 0, "")
		}
		l.pdf.SetXY(marginL, y+h)
	}
}
