package xlsxreport

import (
	"fmt"
	"io"
	"sort"
	"strings"
	"unicode/utf8"

	"github.com/xuri/excelize/v2"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/pdfreport"
	"github.com/stepgate/stepgate/metrics"
)

// Sheet names, in workbook order.
const (
	SheetSummary     = "Summary"
	SheetUnits       = "Units"
	SheetLimits      = "Limits"
	SheetPredictions = "Predictions" // only when the batch has a model
)

// maxRows is the number of rows a worksheet holds (ECMA-376 and the
// spreadsheet applications that read it: 1,048,576).
const maxRows = 1 << 20

// Write writes the workbook report of the batch to w. The same batch gives
// the same bytes.
func Write(w io.Writer, b *acceptance.Batch) error {
	if b == nil {
		return fmt.Errorf("xlsxreport: no batch to report")
	}
	date, err := pdfreport.ReportTime(b)
	if err != nil {
		return fmt.Errorf("xlsxreport: %w", err)
	}
	f := excelize.NewFile()
	defer f.Close()
	st, err := newStyles(f)
	if err != nil {
		return fmt.Errorf("xlsxreport: styles: %w", err)
	}
	id := pdfreport.ReportID(b)
	stamp := date.UTC().Format("2006-01-02T15:04:05Z")
	tool := strings.TrimSpace(b.Tool.Name + " " + b.Tool.Version)
	if err := f.SetDocProps(&excelize.DocProperties{
		Created: stamp, Modified: stamp, Creator: tool, LastModifiedBy: tool,
		Title:      pdfreport.ReportTitle + ": " + b.Spec.Title,
		Subject:    fmt.Sprintf("spec %s rev %s", b.Spec.SpecID, b.Spec.Revision),
		Identifier: id, Keywords: "step response; acceptance; " + b.Spec.SpecID,
	}); err != nil {
		return fmt.Errorf("xlsxreport: document properties: %w", err)
	}
	if err := f.SetSheetName("Sheet1", SheetSummary); err != nil {
		return fmt.Errorf("xlsxreport: %w", err)
	}
	if err := summary(f, st, b, id); err != nil {
		return fmt.Errorf("xlsxreport: sheet %s: %w", SheetSummary, err)
	}
	if err := units(f, st, b); err != nil {
		return fmt.Errorf("xlsxreport: sheet %s: %w", SheetUnits, err)
	}
	if err := limits(f, st, b); err != nil {
		return fmt.Errorf("xlsxreport: sheet %s: %w", SheetLimits, err)
	}
	if b.Model != nil {
		if err := predictions(f, st, b); err != nil {
			return fmt.Errorf("xlsxreport: sheet %s: %w", SheetPredictions, err)
		}
	}
	f.SetActiveSheet(0)
	// Only the Units sheet is streamed: excelize writes streamed sheets in
	// map order, so a second stream would make the zip's entry order vary.
	if err := f.Write(w); err != nil {
		return fmt.Errorf("xlsxreport: writing the workbook: %w", err)
	}
	return nil
}

// styles are the cell styles of the workbook.
type styles struct {
	header, title, label, percent, wrap int
	pass, fail, invalid                 int // conditional formats
	passCell, failCell, invalidCell     int // fixed fills for the summary
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

// cellRef returns the A1 reference of column col (1-based) and row.
func cellRef(col, row int) string {
	name, _ := excelize.CoordinatesToCellName(col, row)
	return name
}

func summary(f *excelize.File, st *styles, b *acceptance.Batch, id string) error {
	const sh = SheetSummary
	row := 1
	var err error
	set := func(col int, v interface{}, style int) {
		if err != nil {
			return
		}
		ref := cellRef(col, row)
		switch v := v.(type) {
		case string:
			err = f.SetCellStr(sh, ref, Text(v))
		default:
			err = f.SetCellValue(sh, ref, v)
		}
		if err == nil && style != 0 {
			err = f.SetCellStyle(sh, ref, ref, style)
		}
	}
	pair := func(label string, v interface{}, style int) {
		set(1, label, st.label)
		set(2, v, style)
		row++
	}
	set(1, pdfreport.ReportTitle, st.title)
	row += 2
	pair("report id", id, 0)
	pair("report date", b.ReportDate, 0)
	pair("spec id", b.Spec.SpecID, 0)
	pair("revision", b.Spec.Revision, 0)
	pair("title", b.Spec.Title, 0)
	pair("spec SHA-256", b.Spec.SHA256, 0)
	pair("tool", b.Tool.Name, 0)
	pair("tool version", b.Tool.Version, 0)
	if d := b.SpecDoc; d != nil {
		for _, p := range [][2]string{{"company", d.Report.Company}, {"site", d.Report.Site}, {"customer", d.Report.Customer}} {
			if p[1] != "" {
				pair(p[0], p[1], 0)
			}
		}
	}
	row++
	s := b.Summary
	pair("units", s.Units, 0)
	pair("pass", s.Pass, st.passCell)
	pair("fail", s.Fail, st.failCell)
	pair("invalid", s.Invalid, st.invalidCell)
	if y, ok := pdfreport.Yield(s); ok {
		pair("yield (pass of units)", y, st.percent)
	} else {
		set(1, "yield (pass of units)", st.label)
		set(3, "not defined: the batch has no units", 0)
		row++
	}
	row++
	pair("decision rule", "Simple acceptance (ISO 14253-1:2017; ILAC-G8:09/2019): each measured value is compared with its limit, "+
		"with no guard band. A unit passes only when it has at least one step and every limited metric of every step was measured "+
		"and lies within its limits; a limited metric that could not be measured makes the step invalid unless the record already proves a failure.", st.wrap)
	pair("note", "The results relate only to the items tested. An empty metric cell means the metric could not be measured; "+
		"the Units sheet gives the reason. Measurement uncertainty is not evaluated.", st.wrap)
	if err != nil {
		return err
	}
	if err := f.SetColWidth(sh, "A", "A", 24); err != nil {
		return err
	}
	return f.SetColWidth(sh, "B", "B", 90)
}

func limits(f *excelize.File, st *styles, b *acceptance.Batch) error {
	const sh = SheetLimits
	if _, err := f.NewSheet(sh); err != nil {
		return err
	}
	unit := pdfreport.ResponseUnit(b)
	rows := [][]interface{}{{"metric", "min", "max", "unit"}}
	for _, m := range pdfreport.LimitedMetrics(b) {
		l := b.Limits[m]
		rows = append(rows, []interface{}{m, bound(l.Min), bound(l.Max), pdfreport.MetricUnit(m, unit)})
	}
	return table(f, sh, st, rows, []float64{26, 12, 12, 8})
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

func predictions(f *excelize.File, st *styles, b *acceptance.Batch) error {
	const sh = SheetPredictions
	if _, err := f.NewSheet(sh); err != nil {
		return err
	}
	unit := pdfreport.ResponseUnit(b)
	rows := [][]interface{}{{"from", "to", "prediction", "metric", "unit", "predicted", "batch mean", "lowest", "highest",
		"steps measured", "matching steps", "note"}}
	for _, c := range pdfreport.Compare(b) {
		note := ""
		if !c.Predicted.OK {
			note = "not predicted: " + c.Predicted.Why
		} else if !c.Mean.OK {
			note = c.Mean.Why
		}
		rows = append(rows, []interface{}{c.From, c.To, c.Kind, c.Metric, pdfreport.MetricUnit(c.Metric, unit),
			known(c.Predicted), known(c.Mean), known(c.Min), known(c.Max), c.Measured, c.Steps, note})
	}
	if b.Model.Plant != "" {
		rows = append(rows, nil, []interface{}{"plant", b.Model.Plant})
	}
	for _, w := range b.Model.Warnings {
		rows = append(rows, []interface{}{"model warning", w})
	}
	return table(f, sh, st, rows, []float64{10, 10, 11, 24, 7, 12, 12, 12, 12, 14, 14, 40})
}

// table writes rows from A1 with a styled, frozen first row.
func table(f *excelize.File, sh string, st *styles, rows [][]interface{}, widths []float64) error {
	for r, row := range rows {
		for c, v := range row {
			if v == nil {
				continue
			}
			ref := cellRef(c+1, r+1)
			var err error
			if s, ok := v.(string); ok {
				err = f.SetCellStr(sh, ref, Text(s))
			} else {
				err = f.SetCellValue(sh, ref, v)
			}
			if err != nil {
				return err
			}
		}
	}
	if len(rows) > 0 && len(rows[0]) > 0 {
		if err := f.SetCellStyle(sh, "A1", cellRef(len(rows[0]), 1), st.header); err != nil {
			return err
		}
	}
	for i, w := range widths {
		col, _ := excelize.ColumnNumberToName(i + 1)
		if err := f.SetColWidth(sh, col, col, w); err != nil {
			return err
		}
	}
	return f.SetPanes(sh, &excelize.Panes{Freeze: true, YSplit: 1, TopLeftCell: "A2", ActivePane: "bottomLeft"})
}

// unitColumns describes the Units sheet's columns.
type unitColumns struct {
	metrics   []string // every metric, report order
	predicted []string // limited metrics with predicted and gap columns
	meta      []string // metadata keys, sorted
}

func columnsFor(b *acceptance.Batch) unitColumns {
	var c unitColumns
	for _, n := range metrics.Names {
		c.metrics = append(c.metrics, string(n))
	}
	havePred := false
	keys := map[string]bool{}
	for _, u := range b.Units {
		for _, s := range u.Steps {
			if s.Predicted != nil || s.Gap != nil {
				havePred = true
			}
		}
		for k := range u.Metadata {
			keys[k] = true
		}
	}
	if havePred {
		c.predicted = pdfreport.LimitedMetrics(b)
	}
	for k := range keys {
		c.meta = append(c.meta, k)
	}
	sort.Strings(c.meta)
	return c
}

func withUnit(name, unit string) string {
	if unit == "" {
		return name
	}
	return name + " (" + unit + ")"
}

func units(f *excelize.File, st *styles, b *acceptance.Batch) error {
	const sh = SheetUnits
	if _, err := f.NewSheet(sh); err != nil {
		return err
	}
	unit := pdfreport.ResponseUnit(b)
	cols := columnsFor(b)
	header := []string{"unit", "file", "step", "start_s (s)", withUnit("from", unit), withUnit("to", unit), "step verdict", "unit verdict"}
	const verdictCol = 7 // G: step verdict, H: unit verdict
	for _, m := range cols.metrics {
		header = append(header, withUnit(m, pdfreport.MetricUnit(m, unit)))
	}
	for _, m := range cols.predicted {
		header = append(header, withUnit("predicted "+m, pdfreport.MetricUnit(m, unit)), withUnit("gap "+m, pdfreport.MetricUnit(m, unit)))
	}
	header = append(header, "step reason", "unit reason")
	for _, k := range cols.meta {
		header = append(header, "log: "+Text(k))
	}

	rows := 0
	unitW, fileW, reasonW := 8, 8, 12
	for _, u := range b.Units {
		if n := len(u.Steps); n > 0 {
			rows += n
		} else {
			rows++
		}
		unitW = max(unitW, utf8.RuneCountInString(u.Unit))
		fileW = max(fileW, utf8.RuneCountInString(u.File))
		if r := pdfreport.FirstReason(&u); r != "" {
			reasonW = max(reasonW, utf8.RuneCountInString(r))
		}
	}
	if rows+1 > maxRows {
		return fmt.Errorf("%d unit steps exceed the %d rows a worksheet holds; split the batch", rows, maxRows-1)
	}
	last := rows + 1
	lastCol, _ := excelize.ColumnNumberToName(len(header))
	// Filter and conditional formats belong to the worksheet, which the
	// stream writer takes over: set them first.
	if err := f.AutoFilter(sh, "A1:"+lastCol+fmt.Sprint(last), nil); err != nil {
		return err
	}
	verdicts := fmt.Sprintf("%s2:%s%d", colName(verdictCol), colName(verdictCol+1), max(last, 2))
	if err := f.SetConditionalFormat(sh, verdicts, []excelize.ConditionalFormatOptions{
		{Type: "cell", Criteria: "==", Value: `"pass"`, Format: &st.pass},
		{Type: "cell", Criteria: "==", Value: `"fail"`, Format: &st.fail},
		{Type: "cell", Criteria: "==", Value: `"invalid"`, Format: &st.invalid},
	}); err != nil {
		return err
	}
	sw, err := f.NewStreamWriter(sh)
	if err != nil {
		return err
	}
	widths := map[int]float64{1: clampW(unitW), 2: clampW(fileW), 3: 6, 4: 11, 5: 10, 6: 10, 7: 12, 8: 12}
	for i := 9; i <= len(header); i++ {
		widths[i] = clampW(utf8.RuneCountInString(header[i-1]))
	}
	reasonCol := 9 + len(cols.metrics) + 2*len(cols.predicted)
	widths[reasonCol], widths[reasonCol+1] = clampW(reasonW), clampW(reasonW)
	// The stream writer puts each new column definition first; going from
	// the last column down leaves them in the ascending order ECMA-376
	// requires.
	for i := len(header); i >= 1; i-- {
		if err := sw.SetColWidth(i, i, widths[i]); err != nil {
			return err
		}
	}
	if err := sw.SetPanes(&excelize.Panes{Freeze: true, YSplit: 1, TopLeftCell: "A2", ActivePane: "bottomLeft"}); err != nil {
		return err
	}
	hdr := make([]interface{}, len(header))
	for i, h := range header {
		hdr[i] = excelize.Cell{StyleID: st.header, Value: h}
	}
	if err := sw.SetRow("A1", hdr, excelize.RowOpts{Height: 18}); err != nil {
		return err
	}
	row := 2
	vals := make([]interface{}, len(header))
	for i := range b.Units {
		u := &b.Units[i]
		unitReason := ""
		if len(u.Reasons) > 0 {
			unitReason = u.Reasons[0]
		}
		steps := u.Steps
		if len(steps) == 0 {
			steps = []acceptance.StepResult{{}}
		}
		for k := range steps {
			s := &steps[k]
			for j := range vals {
				vals[j] = nil
			}
			vals[0], vals[1] = Text(u.Unit), Text(u.File)
			vals[7] = string(u.Verdict)
			if len(u.Steps) > 0 {
				vals[2], vals[3], vals[4], vals[5] = s.Index, s.StartS, s.From, s.To
				vals[6] = string(s.Verdict)
				c := 8
				for _, m := range cols.metrics {
					if v, ok := s.Metrics[m]; ok {
						vals[c] = known(v)
					}
					c++
				}
				for _, m := range cols.predicted {
					if s.Predicted != nil {
						if v, ok := s.Predicted.Metrics[m]; ok {
							vals[c] = known(v)
						}
					}
					if g := s.Gap[m]; g != nil {
						vals[c+1] = *g
					}
					c += 2
				}
				if len(s.Reasons) > 0 {
					vals[reasonCol-1] = Text(s.Reasons[0])
				}
			}
			if unitReason != "" {
				vals[reasonCol] = Text(unitReason)
			}
			for j, key := range cols.meta {
				if v, ok := u.Metadata[key]; ok {
					vals[reasonCol+1+j] = Text(v)
				}
			}
			if err := sw.SetRow(cellRef(1, row), vals); err != nil {
				return fmt.Errorf("row %d (unit %q): %w", row, u.Unit, err)
			}
			row++
		}
	}
	return sw.Flush()
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

func colName(n int) string {
	s, _ := excelize.ColumnNumberToName(n)
	return s
}

// clampW turns a text length into a column width between 8 and 60.
func clampW(chars int) float64 {
	return float64(min(max(chars+2, 8), 60))
}
