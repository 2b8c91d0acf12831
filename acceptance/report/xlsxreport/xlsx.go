package xlsxreport

import (
	"fmt"
	"io"
	"strings"
	"unicode/utf8"

	"github.com/xuri/excelize/v2"

	"github.com/stepgate/stepgate/acceptance/internal/xlsxenc"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/metrics"
)

// Sheet names, in workbook order.
const (
	SheetSummary = "Summary"
	SheetUnits   = "Units"
	SheetChecks  = "Checks"
	SheetGaps    = "Gaps" // only when the batch has a model
	SheetLimits  = "Limits"
	SheetModel   = "Model" // only when the batch has a model
)

// maxRows is the number of rows a worksheet holds (ECMA-376 and the
// spreadsheet applications that read it: 1,048,576).
const maxRows = 1 << 20

// Write writes the workbook report of a digested batch to w. The same
// digest gives the same bytes.
func Write(w io.Writer, d *digest.Digest) error {
	if d == nil || d.Batch == nil {
		return fmt.Errorf("xlsxreport: no batch to report")
	}
	b := d.Batch
	f := excelize.NewFile()
	defer f.Close()
	st, err := newStyles(f)
	if err != nil {
		return fmt.Errorf("xlsxreport: styles: %w", err)
	}
	stamp := d.Date.UTC().Format("2006-01-02T15:04:05Z")
	tool := strings.TrimSpace(b.Tool.Name + " " + b.Tool.Version)
	if err := f.SetDocProps(&excelize.DocProperties{
		Created: stamp, Modified: stamp, Creator: cellText(tool), LastModifiedBy: cellText(tool),
		Title:      cellText(digest.Title + ": " + b.Spec.Title),
		Subject:    cellText(fmt.Sprintf("spec %s rev %s", b.Spec.SpecID, b.Spec.Revision)),
		Identifier: cellText(d.ID), Keywords: cellText("step response; acceptance; " + b.Spec.SpecID),
	}); err != nil {
		return fmt.Errorf("xlsxreport: document properties: %w", err)
	}
	if err := f.SetSheetName("Sheet1", SheetSummary); err != nil {
		return fmt.Errorf("xlsxreport: %w", err)
	}
	// The long sheets' rows are written when the package is assembled.
	bodies := map[string]*xlsxenc.Body{}
	sheets := []struct {
		name  string
		write func() error
	}{
		{SheetSummary, func() error { return summary(f, st, d) }},
		{SheetUnits, func() error { return units(f, st, d, bodies) }},
		{SheetChecks, func() error { return checks(f, st, d, bodies) }},
		{SheetGaps, func() error { return gaps(f, st, d, bodies) }},
		{SheetRetests, func() error { return retests(f, st, d) }},
		{SheetLimits, func() error { return limits(f, st, d) }},
		{SheetModel, func() error { return modelSheet(f, st, d) }},
		{SheetSafety, func() error { return safety(f, st, d) }},
		{SheetSummary + " chart", func() error { return scatter(f, d) }},
	}
	for _, s := range sheets {
		if (s.name == SheetGaps || s.name == SheetModel) && b.Model == nil {
			continue
		}
		if err := s.write(); err != nil {
			return fmt.Errorf("xlsxreport: sheet %s: %w", s.name, err)
		}
	}
	// Summary is the renamed first sheet of a new workbook and so already
	// the active one. (SetActiveSheet would parse every streamed sheet back
	// into memory.)
	// WriteToBuffer hands over excelize's own buffer: one copy of the
	// packed workbook in memory, not two.
	buf, err := f.WriteToBuffer()
	if err != nil {
		return fmt.Errorf("xlsxreport: writing the workbook: %w", err)
	}
	if err := xlsxenc.Pack(w, buf.Bytes(), bodies); err != nil {
		return fmt.Errorf("xlsxreport: writing the workbook: %w", err)
	}
	return nil
}

// styles are the cell styles of the workbook.
type styles struct {
	header, title, label, percent, wrap, bold, note int
	number, index                                   int // the capability table's numbers
	pass, fail, invalid                             int // conditional formats
	passCell, failCell, invalidCell                 int // fixed fills for the summary
}

func newStyles(f *excelize.File) (*styles, error) {
	var s styles
	var err error
	mk := func(dst *int, st *excelize.Style) {
		if err == nil {
			*dst, err = f.NewStyle(st)
		}
	}
	cond := func(dst *int, fill, font string) {
		if err == nil {
			*dst, err = f.NewConditionalStyle(&excelize.Style{
				Font: &excelize.Font{Color: font, Bold: true},
				Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{fill}},
			})
		}
	}
	mk(&s.header, &excelize.Style{
		Font:      &excelize.Font{Bold: true},
		Fill:      excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"E6E6E6"}},
		Border:    []excelize.Border{{Type: "bottom", Color: "808080", Style: 1}},
		Alignment: &excelize.Alignment{Vertical: "center"},
	})
	mk(&s.title, &excelize.Style{Font: &excelize.Font{Bold: true, Size: 14}})
	mk(&s.label, &excelize.Style{Font: &excelize.Font{Bold: true, Color: "505050"}, Alignment: &excelize.Alignment{Vertical: "top"}})
	fmtPct := "0.0%"
	mk(&s.percent, &excelize.Style{CustomNumFmt: &fmtPct, Font: &excelize.Font{Bold: true}, Alignment: &excelize.Alignment{Horizontal: "left"}})
	mk(&s.wrap, &excelize.Style{Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"}})
	fmtNum, fmtIndex := "0.0#####", "0.00"
	mk(&s.number, &excelize.Style{CustomNumFmt: &fmtNum})
	mk(&s.index, &excelize.Style{CustomNumFmt: &fmtIndex})
	mk(&s.bold, &excelize.Style{Font: &excelize.Font{Bold: true, Size: 12}})
	mk(&s.note, &excelize.Style{Font: &excelize.Font{Italic: true, Color: "505050"}, Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"}})
	fill := func(dst *int, bg, fg string) {
		mk(dst, &excelize.Style{
			Font: &excelize.Font{Bold: true, Color: fg},
			Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{bg}},
		})
	}
	fill(&s.passCell, "D4EDDA", "155724")
	fill(&s.failCell, "F8D7DA", "721C24")
	fill(&s.invalidCell, "FFE8B3", "7A4B00")
	cond(&s.pass, "D4EDDA", "155724")
	cond(&s.fail, "F8D7DA", "721C24")
	cond(&s.invalid, "FFE8B3", "7A4B00")
	return &s, err
}

// verdictColours colours the verdict cells of a streamed sheet's column
// range (e.g. "G2:H100") by conditional formatting.
func verdictColours(f *excelize.File, sh, ref string, st *styles) error {
	return f.SetConditionalFormat(sh, ref, []excelize.ConditionalFormatOptions{
		{Type: "cell", Criteria: "==", Value: `"pass"`, Format: &st.pass},
		{Type: "cell", Criteria: "==", Value: `"fail"`, Format: &st.fail},
		{Type: "cell", Criteria: "==", Value: `"invalid"`, Format: &st.invalid},
	})
}

// cellRef returns the A1 reference of column col (1-based) and row.
func cellRef(col, row int) string {
	name, _ := excelize.CoordinatesToCellName(col, row)
	return name
}

func colName(n int) string {
	s, _ := excelize.ColumnNumberToName(n)
	return s
}

// bound returns a limit as a number, or nil (an empty cell) when unset.
func bound(v *float64) interface{} {
	if v == nil {
		return nil
	}
	return *v
}

// known returns a value as a number, or nil (an empty cell) when unknown.
func known(v metrics.Value) interface{} {
	if !v.OK {
		return nil
	}
	return v.V
}

// why returns the reason a value is unknown, "" when it is known.
func why(v metrics.Value) string {
	if v.OK {
		return ""
	}
	return v.Why
}

func withUnit(name, unit string) string {
	if unit == "" {
		return name
	}
	return name + " (" + unit + ")"
}

// cellText returns s as a workbook can hold it: characters that XML 1.0 does not
// allow in a document (control characters other than tab, line feed and
// carriage return, and bytes that are not UTF-8) become U+FFFD, so that a
// damaged serial stays visibly damaged instead of silently shortened.
func cellText(s string) string {
	ok := true
	for _, r := range s {
		if !xmlChar(r) {
			ok = false
			break
		}
	}
	if ok {
		return s
	}
	return strings.Map(func(r rune) rune {
		if !xmlChar(r) {
			return utf8.RuneError
		}
		return r
	}, s)
}

// xmlChar reports whether r is a Char of XML 1.0 (§2.2); U+FFFD from a
// byte that is not UTF-8 counts as not one, so it is marked the same way.
func xmlChar(r rune) bool {
	switch {
	case r == utf8.RuneError:
		return false
	case r == '\t' || r == '\n' || r == '\r':
		return true
	case r < 0x20:
		return false
	case r >= 0xD800 && r <= 0xDFFF, r == 0xFFFE, r == 0xFFFF:
		return false
	}
	return r <= 0x10FFFF
}

// clampW turns a text length into a column width between 8 and 60.
func clampW(chars int) float64 {
	return float64(min(max(chars+2, 8), 60))
}

// table writes rows from the given first row with a styled header row and
// returns the next free row. Strings are stored as text.
func table(f *excelize.File, sh string, st *styles, first int, rows [][]interface{}) (int, error) {
	for r, row := range rows {
		for c, v := range row {
			if v == nil {
				continue
			}
			ref := cellRef(c+1, first+r)
			var err error
			if s, ok := v.(string); ok {
				err = f.SetCellStr(sh, ref, cellText(s))
			} else {
				err = f.SetCellValue(sh, ref, v)
			}
			if err != nil {
				return 0, err
			}
		}
	}
	if len(rows) > 0 && len(rows[0]) > 0 {
		if err := f.SetCellStyle(sh, cellRef(1, first), cellRef(len(rows[0]), first), st.header); err != nil {
			return 0, err
		}
	}
	return first + len(rows), nil
}

// widths sets column widths from A.
func widths(f *excelize.File, sh string, w []float64) error {
	for i, v := range w {
		col := colName(i + 1)
		if err := f.SetColWidth(sh, col, col, v); err != nil {
			return err
		}
	}
	return nil
}

// freeze freezes the first row of a sheet.
func freeze(f *excelize.File, sh string) error {
	return f.SetPanes(sh, &excelize.Panes{Freeze: true, YSplit: 1, TopLeftCell: "A2", ActivePane: "bottomLeft"})
}
