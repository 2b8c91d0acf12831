package xlsxreport

import (
	"math"
	"strings"
	"unicode/utf8"

	"github.com/xuri/excelize/v2"

	"github.com/stepgate/stepgate/acceptance/report/digest"
)

// Summary sheet geometry: labels in A, values in B, long texts merged over
// B:L; the chart sits to the right from column N.
const (
	summaryTextLast = 12 // L
	summaryChartCol = 14 // N
)

// summaryWidths are the column widths of the Summary sheet, A to Q.
var summaryWidths = []float64{28, 22, 12, 12, 12, 12, 12, 12, 12, 12, 12, 12, 12, 12, 12, 12, 40}

// sheetWriter writes cells row by row, remembering the first error.
type sheetWriter struct {
	f   *excelize.File
	sh  string
	st  *styles
	row int
	err error
}

func (w *sheetWriter) set(col int, v interface{}, style int) {
	if w.err != nil || v == nil || v == "" {
		return
	}
	ref := cellRef(col, w.row)
	switch v := v.(type) {
	case string:
		w.err = w.f.SetCellStr(w.sh, ref, cellText(v))
	default:
		w.err = w.f.SetCellValue(w.sh, ref, v)
	}
	if w.err == nil && style != 0 {
		w.err = w.f.SetCellStyle(w.sh, ref, ref, style)
	}
}

// pair writes a label and a value and moves to the next row.
func (w *sheetWriter) pair(label string, v interface{}, style int) {
	w.set(1, label, w.st.label)
	w.set(2, v, style)
	w.row++
}

// header writes a row of column headings and moves to the next row.
func (w *sheetWriter) header(names ...string) {
	for i, h := range names {
		w.set(i+1, h, w.st.header)
	}
	w.row++
}

// values writes a row of values from column A on, unstyled, and moves to
// the next row.
func (w *sheetWriter) values(vals ...interface{}) {
	for i, v := range vals {
		w.set(i+1, v, 0)
	}
	w.row++
}

// text writes a label and a long text merged over B:L, wrapped, with a row
// height that shows all of it.
func (w *sheetWriter) text(label, s string, style int) {
	w.set(1, label, w.st.label)
	w.set(2, s, style)
	if w.err == nil {
		w.err = w.f.MergeCell(w.sh, cellRef(2, w.row), cellRef(summaryTextLast, w.row))
	}
	chars := 0.0
	for _, c := range summaryWidths[1:summaryTextLast] {
		chars += c
	}
	lines := math.Ceil(float64(utf8.RuneCountInString(s)) * 1.1 / chars)
	if w.err == nil && lines > 1 {
		w.err = w.f.SetRowHeight(w.sh, w.row, 15*lines)
	}
	w.row++
}

// head writes a section heading.
func (w *sheetWriter) head(s string) {
	w.row++
	w.set(1, s, w.st.bold)
	w.row++
}

func summary(f *excelize.File, st *styles, d *digest.Digest) error {
	w := &sheetWriter{f: f, sh: SheetSummary, st: st, row: 1}
	w.set(1, digest.Title, st.title)
	w.row += 2
	summaryIdentification(w, d)
	summaryResult(w, d)
	summaryStats(w, d)
	summaryCauses(w, d)
	summaryNotes(w, d)
	if w.err != nil {
		return w.err
	}
	return widths(f, SheetSummary, summaryWidths)
}

// summaryIdentification writes what identifies the report: ids, dates,
// the issuer, the spec, the tool and the decision rule.
func summaryIdentification(w *sheetWriter, d *digest.Digest) {
	b := d.Batch
	dates, _ := digest.TestDates(b)
	w.pair("report id", d.ID, 0)
	w.pair("report date", b.ReportDate, 0)
	w.pair("test dates", dates, 0)
	w.pair("first test date", orNil(b.TestDates.First), 0)
	w.pair("last test date", orNil(b.TestDates.Last), 0)
	if sd := b.SpecDoc; sd != nil {
		for _, p := range [][2]string{{"company", sd.Report.Company}, {"address", sd.Report.Address}, {"site", sd.Report.Site}, {"customer", sd.Report.Customer}} {
			if strings.TrimSpace(p[1]) != "" {
				w.pair(p[0], p[1], 0)
			}
		}
	}
	w.pair("spec id", b.Spec.SpecID, 0)
	w.pair("revision", b.Spec.Revision, 0)
	w.pair("title", b.Spec.Title, 0)
	w.pair("spec SHA-256", b.Spec.SHA256, 0)
	w.pair("tool", b.Tool.Name, 0)
	w.pair("tool version", b.Tool.Version, 0)
	w.text("decision rule", digest.DecisionRuleOf(b), w.st.wrap)
	w.text("note", digest.Phrase("results-relate")+" "+digest.Phrase("xlsx-empty-cell"), w.st.wrap)
}

// summaryResult writes the counts by verdict and the yield.
func summaryResult(w *sheetWriter, d *digest.Digest) {
	st := w.st
	w.head("Result")
	s := d.Batch.Summary
	w.pair("units", s.Units, 0)
	w.pair("pass", s.Pass, st.passCell)
	w.pair("fail", s.Fail, st.failCell)
	w.pair("invalid", s.Invalid, st.invalidCell)
	if d.Yield.OK {
		w.pair("yield (pass of units)", d.Yield.V, st.percent)
	} else {
		w.set(1, "yield (pass of units)", st.label)
		w.set(3, "not defined: "+d.Yield.Why, 0)
		w.row++
	}
	w.pair("serials", s.Serials, 0)
	w.pair("serials retested", s.Retested, 0)
	for _, y := range []struct {
		label string
		pct   *float64
	}{{"first-pass yield (of serials)", s.FirstPassYieldPct}, {"final yield (of serials)", s.FinalYieldPct}} {
		if y.pct != nil {
			w.pair(y.label, *y.pct/100, st.percent)
		} else {
			w.set(1, y.label, st.label)
			w.set(3, "not defined: the batch has no units", 0)
			w.row++
		}
	}
}

// summaryStats writes the capability table: the statistics of every
// limited metric over the measured steps.
func summaryStats(w *sheetWriter, d *digest.Digest) {
	st := w.st
	w.head("Limited metrics over the measured steps")
	hdr := []string{"metric", "unit", "n (measured steps)", "steps", "mean", "sd (n − 1)", "min", "max", "limit min", "limit max",
		"predicted", "gap (mean − predicted)", "Cp", "index", "index value", "n < 30", "note"}
	w.header(hdr...)
	for _, m := range d.Stats {
		c := m.Capability
		var notes []string
		if !c.Value.OK && c.Index != "" {
			notes = append(notes, c.Index+" not computed: "+c.Value.Why)
		}
		if !m.Predicted.OK {
			notes = append(notes, "predicted: "+m.Predicted.Why)
		}
		if !m.Mean.OK {
			notes = append(notes, m.Mean.Why)
		}
		flag := ""
		if c.Indicative && c.Value.OK {
			flag = "indicative only, n < 30"
		}
		vals := []interface{}{m.Metric, orNil(m.Unit), m.N, m.Steps, known(m.Mean), known(m.SD), known(m.Lowest), known(m.Highest),
			bound(m.Min), bound(m.Max), known(m.Predicted), known(m.Gap), known(c.Cp), orNil(c.Index), known(c.Value), orNil(flag),
			orNil(strings.Join(notes, "; "))}
		for i, v := range vals {
			style := 0
			switch {
			case i >= 4 && i <= 11:
				style = st.number
			case i == 12 || i == 14:
				style = st.index
			}
			w.set(i+1, v, style)
		}
		w.row++
	}
	w.set(1, digest.Phrase("capability"), st.note)
	if w.err == nil {
		w.err = w.f.MergeCell(SheetSummary, cellRef(1, w.row), cellRef(len(hdr), w.row))
	}
	if w.err == nil {
		w.err = w.f.SetRowHeight(SheetSummary, w.row, 62)
	}
	w.row++
}

// summaryCauses writes the failure-reason Pareto.
func summaryCauses(w *sheetWriter, d *digest.Digest) {
	w.head("Why units did not pass")
	w.header("reason", "verdict", "units", "share of units", "metric", "key")
	if len(d.Causes) == 0 {
		w.set(1, "no unit failed or was invalid", 0)
		w.row++
	}
	units := d.Batch.Summary.Units
	for _, c := range d.Causes {
		var share interface{}
		if units > 0 {
			share = float64(c.Units) / float64(units)
		}
		w.set(1, c.Label, 0)
		w.set(2, string(c.Verdict), 0)
		w.set(3, c.Units, 0)
		w.set(4, share, w.st.percent)
		w.set(5, orNil(string(c.Metric)), 0)
		w.set(6, c.Key, 0)
		w.row++
	}
}

// summaryNotes writes the notes on likely causes and the advice that
// closes them.
func summaryNotes(w *sheetWriter, d *digest.Digest) {
	w.head("Likely causes (indications, not proof)")
	w.text("", digest.Phrase("causes-intro"), w.st.note)
	if len(d.Notes) == 0 {
		w.text("", digest.Phrase("causes-none"), w.st.wrap)
	}
	for _, n := range d.Notes {
		w.text(n.Title, n.Evidence+" "+n.Meaning, w.st.wrap)
	}
	w.text("advice", d.Advice, w.st.wrap)
}

// orNil returns s, or nil (an empty cell) when s is empty.
func orNil(s string) interface{} {
	if s == "" {
		return nil
	}
	return s
}

// summaryChartCell is where the scatter chart sits on the Summary sheet.
func summaryChartCell() string { return cellRef(summaryChartCol, 2) }
