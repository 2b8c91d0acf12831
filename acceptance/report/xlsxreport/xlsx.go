package xlsxreport

import (
	"archive/zip"
	"bytes"
	"encoding/xml"
	"fmt"
	"io"
	"sort"
	"strings"
	"sync"
	"unicode/utf8"

	"github.com/xuri/excelize/v2"

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
		Created: stamp, Modified: stamp, Creator: Text(tool), LastModifiedBy: Text(tool),
		Title:      Text(digest.Title + ": " + b.Spec.Title),
		Subject:    Text(fmt.Sprintf("spec %s rev %s", b.Spec.SpecID, b.Spec.Revision)),
		Identifier: Text(d.ID), Keywords: Text("step response; acceptance; " + b.Spec.SpecID),
	}); err != nil {
		return fmt.Errorf("xlsxreport: document properties: %w", err)
	}
	if err := f.SetSheetName("Sheet1", SheetSummary); err != nil {
		return fmt.Errorf("xlsxreport: %w", err)
	}
	// The long sheets' rows are written when the package is assembled.
	bodies := map[string]*sheetBody{}
	sheets := []struct {
		name  string
		write func() error
	}{
		{SheetSummary, func() error { return summary(f, st, d) }},
		{SheetUnits, func() error { return units(f, st, d, bodies) }},
		{SheetChecks, func() error { return checks(f, st, d, bodies) }},
		{SheetGaps, func() error { return gaps(f, st, d, bodies) }},
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
	if err := canonicalZip(w, buf.Bytes(), bodies); err != nil {
		return fmt.Errorf("xlsxreport: writing the workbook: %w", err)
	}
	return nil
}

// canonicalZip copies the workbook's zip entries to w sorted by name, with
// their compressed data untouched, except that the sheets named in bodies
// get their data rows. excelize writes streamed sheets in map order;
// sorting makes the same workbook the same bytes. The order of the parts of
// an Open Packaging Conventions package carries no meaning (ECMA-376
// Part 2).
func canonicalZip(w io.Writer, data []byte, bodies map[string]*sheetBody) error {
	zr, err := zip.NewReader(bytes.NewReader(data), int64(len(data)))
	if err != nil {
		return err
	}
	parts, err := sheetParts(zr)
	if err != nil {
		return err
	}
	byPart := map[string]*zip.File{}
	for _, zf := range zr.File {
		byPart[zf.Name] = zf
	}
	// Pack the long sheets concurrently while the rest is copied; every
	// packing is waited for, and its temporary file removed, before
	// canonicalZip returns.
	type packing struct {
		p   *packedSheet
		err error
	}
	targets := map[string]*sheetBody{}
	for name, body := range bodies {
		part, ok := parts[name]
		if !ok || byPart[part] == nil {
			return fmt.Errorf("sheet %s is not in the workbook", name)
		}
		targets[part] = body
	}
	fill := map[string]chan packing{}
	var wg sync.WaitGroup
	defer func() {
		// Free whatever was packed but not taken (after an error).
		wg.Wait()
		for _, ch := range fill {
			select {
			case r := <-ch:
				r.p.close()
			default:
			}
		}
	}()
	for part, body := range targets {
		ch := make(chan packing, 1)
		fill[part] = ch
		wg.Add(1)
		go func(zf *zip.File, body *sheetBody) {
			defer wg.Done()
			defer func() {
				// A panic here would end the program past the report
				// writer's own recovery; it fails this workbook instead.
				if r := recover(); r != nil {
					ch <- packing{err: fmt.Errorf("internal error packing the sheet: %v", r)}
				}
			}()
			p, err := packSheet(zf, body)
			ch <- packing{p, err}
		}(byPart[part], body)
	}
	files := append([]*zip.File(nil), zr.File...)
	sort.SliceStable(files, func(i, j int) bool {
		// [Content_Types].xml first, as writers conventionally put it.
		a, b := files[i].Name, files[j].Name
		if (a == "[Content_Types].xml") != (b == "[Content_Types].xml") {
			return a == "[Content_Types].xml"
		}
		return a < b
	})
	zw := zip.NewWriter(w)
	for _, zf := range files {
		if zf.Name == "[Content_Types].xml" {
			if err := canonicalTypes(zw, zf); err != nil {
				return fmt.Errorf("%s: %w", zf.Name, err)
			}
			continue
		}
		if ch := fill[zf.Name]; ch != nil {
			r := <-ch
			if r.err != nil {
				return fmt.Errorf("%s: %w", zf.Name, r.err)
			}
			err := copyPacked(zw, zf.Name, r.p)
			r.p.close()
			if err != nil {
				return fmt.Errorf("%s: %w", zf.Name, err)
			}
			continue
		}
		h := zf.FileHeader
		rc, err := zf.OpenRaw()
		if err != nil {
			return fmt.Errorf("%s: %w", zf.Name, err)
		}
		out, err := zw.CreateRaw(&h)
		if err != nil {
			return fmt.Errorf("%s: %w", zf.Name, err)
		}
		if _, err := io.Copy(out, rc); err != nil {
			return fmt.Errorf("%s: %w", zf.Name, err)
		}
	}
	return zw.Close()
}

// contentTypes is the content-types part of an Open Packaging Conventions
// package (ECMA-376 Part 2).
type contentTypes struct {
	XMLName   xml.Name     `xml:"http://schemas.openxmlformats.org/package/2006/content-types Types"`
	Defaults  []ctDefault  `xml:"Default"`
	Overrides []ctOverride `xml:"Override"`
}

type ctDefault struct {
	Extension   string `xml:"Extension,attr"`
	ContentType string `xml:"ContentType,attr"`
}

type ctOverride struct {
	PartName    string `xml:"PartName,attr"`
	ContentType string `xml:"ContentType,attr"`
}

// canonicalTypes rewrites the content-types part with its entries sorted:
// excelize lists the image types of a chart in map order.
func canonicalTypes(zw *zip.Writer, zf *zip.File) error {
	rc, err := zf.Open()
	if err != nil {
		return err
	}
	data, err := io.ReadAll(rc)
	rc.Close()
	if err != nil {
		return err
	}
	var ct contentTypes
	if err := xml.Unmarshal(data, &ct); err != nil {
		return err
	}
	sort.Slice(ct.Defaults, func(i, j int) bool { return ct.Defaults[i].Extension < ct.Defaults[j].Extension })
	sort.Slice(ct.Overrides, func(i, j int) bool { return ct.Overrides[i].PartName < ct.Overrides[j].PartName })
	out, err := xml.Marshal(ct)
	if err != nil {
		return err
	}
	h := zip.FileHeader{Name: zf.Name, Method: zip.Deflate}
	w, err := zw.CreateHeader(&h)
	if err != nil {
		return err
	}
	if _, err := io.WriteString(w, xml.Header); err != nil {
		return err
	}
	_, err = w.Write(out)
	return err
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

// Text returns s as a workbook can hold it: characters that XML 1.0 does not
// allow in a document (control characters other than tab, line feed and
// carriage return, and bytes that are not UTF-8) become U+FFFD, so that a
// damaged serial stays visibly damaged instead of silently shortened.
func Text(s string) string {
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
				err = f.SetCellStr(sh, ref, Text(s))
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
