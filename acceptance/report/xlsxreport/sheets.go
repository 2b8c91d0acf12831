package xlsxreport

import (
	"fmt"
	"sort"
	"unicode/utf8"

	"github.com/xuri/excelize/v2"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/internal/xlsxenc"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/metrics"
)

// unitColumns describes the Units sheet's columns.
type unitColumns struct {
	metrics   []metrics.Name // every metric shown (digest.Shown), report order
	predicted []metrics.Name // limited metrics with predicted and gap columns
	meta      []string       // metadata keys, sorted
}

func columnsFor(d *digest.Digest) unitColumns {
	b := d.Batch
	var c unitColumns
	c.metrics = append(c.metrics, d.Shown...)
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
		c.predicted = d.Limited
	}
	for k := range keys {
		c.meta = append(c.meta, k)
	}
	sort.Strings(c.meta)
	return c
}

// Units sheet column numbers (1-based) that other parts refer to.
const (
	unitsVerdictCol = 7 // G: step verdict, H: unit verdict
	unitsFirstValue = 9 // I: the first metric
)

// unitsMetricCol returns the Units sheet column of a metric.
func unitsMetricCol(m metrics.Name) int {
	if i := metrics.Index(m); i >= 0 {
		return unitsFirstValue + i
	}
	return 0
}

// unitRows is the number of rows a unit takes on the Units sheet: one per
// step, one for a unit without steps.
func unitRows(b *acceptance.Batch) int {
	rows := 0
	for _, u := range b.Units {
		rows += max(len(u.Steps), 1)
	}
	return rows
}

func units(f *excelize.File, st *styles, d *digest.Digest, bodies map[string]*xlsxenc.Body) error {
	const sh = SheetUnits
	b := d.Batch
	if _, err := f.NewSheet(sh); err != nil {
		return err
	}
	lay := newUnitsLayout(d)
	rows := unitRows(b)
	if rows+1 > maxRows {
		return fmt.Errorf("%d unit steps exceed the %d rows a worksheet holds; split the batch", rows, maxRows-1)
	}
	last := rows + 1
	// Filter and conditional formats belong to the worksheet, which the
	// stream writer takes over: set them first.
	if err := f.AutoFilter(sh, "A1:"+cellRef(len(lay.header), last), nil); err != nil {
		return err
	}
	if err := verdictColours(f, sh, fmt.Sprintf("%s2:%s%d", colName(unitsVerdictCol), colName(unitsVerdictCol+1), max(last, 2)), st); err != nil {
		return err
	}
	sw, err := f.NewStreamWriter(sh)
	if err != nil {
		return err
	}
	if err := streamHead(sw, st, lay.header, lay.widths(b)); err != nil {
		return err
	}
	if err := sw.Flush(); err != nil {
		return err
	}
	bodies[sh] = &xlsxenc.Body{Rows: rows, Cols: len(lay.header), Write: func(rw *xlsxenc.RowWriter) error {
		for i := range b.Units {
			if err := lay.unit(rw, &b.Units[i]); err != nil {
				return err
			}
		}
		return nil
	}}
	return nil
}

// unitsLayout is the columns of the Units sheet: the step's fields, every
// metric, predicted and gap of the limited ones, the reasons, the log's
// metadata and the file's SHA-256.
type unitsLayout struct {
	cols      unitColumns
	header    []string
	metricIdx []int // index into metrics.Names of each metric column
	predIdx   []int // of each predicted-and-gap column pair
	reasonCol int   // the step reason; the unit reason follows it
	shaCol    int
	lineCol   int // the attempt, then attempts, lot and shift
	axisCol   int // the step's axis, after the SHA-256; 0 when the batch has one axis
}

// hasAxes reports whether the batch was judged under a spec with several
// axes. The sheets then carry each step's axis in a last column, which a
// single-axis batch does not have.
func hasAxes(b *acceptance.Batch) bool {
	for i := range b.Units {
		if len(b.Units[i].Axes) > 0 {
			return true
		}
	}
	return false
}

func newUnitsLayout(d *digest.Digest) *unitsLayout {
	unit := d.ResponseUnit
	l := &unitsLayout{cols: columnsFor(d)}
	l.header = []string{"unit", "file", "step", "start_s (s)", withUnit("from", unit), withUnit("to", unit), "step verdict", "unit verdict"}
	for _, m := range l.cols.metrics {
		l.header = append(l.header, withUnit(string(m), digest.MetricUnit(m, unit)))
		l.metricIdx = append(l.metricIdx, metrics.Index(m))
	}
	for _, m := range l.cols.predicted {
		l.header = append(l.header, withUnit("predicted "+string(m), digest.MetricUnit(m, unit)), withUnit("gap "+string(m), digest.MetricUnit(m, unit)))
		l.predIdx = append(l.predIdx, metrics.Index(m))
	}
	l.header = append(l.header, "step reason", "unit reason")
	for _, k := range l.cols.meta {
		l.header = append(l.header, "log: "+cellText(k))
	}
	l.header = append(l.header, "file SHA-256")
	l.shaCol = len(l.header)
	if hasAxes(d.Batch) {
		l.header = append(l.header, "axis")
		l.axisCol = len(l.header)
	}
	l.header = append(l.header, "attempt", "attempts", "lot", "shift")
	l.lineCol = len(l.header) - 3
	l.reasonCol = unitsFirstValue + len(l.cols.metrics) + 2*len(l.cols.predicted)
	return l
}

// widths are the column widths: the unit, file and reason columns as wide
// as their longest text (within bounds), the values as their headers.
func (l *unitsLayout) widths(b *acceptance.Batch) map[int]float64 {
	unitW, fileW, reasonW := 8, 8, 12
	for i := range b.Units {
		u := &b.Units[i]
		unitW = max(unitW, utf8.RuneCountInString(u.Unit))
		fileW = max(fileW, utf8.RuneCountInString(u.File))
		if r := digest.FirstReason(u); r != "" {
			reasonW = max(reasonW, utf8.RuneCountInString(r))
		}
	}
	w := map[int]float64{1: clampW(unitW), 2: clampW(fileW), 3: 6, 4: 11, 5: 10, 6: 10, 7: 12, 8: 12}
	for i := unitsFirstValue; i <= len(l.header); i++ {
		w[i] = clampW(utf8.RuneCountInString(l.header[i-1]))
	}
	w[l.reasonCol], w[l.reasonCol+1] = clampW(reasonW), clampW(reasonW)
	return w
}

// unit writes the rows of u: one per step, one for a unit without steps.
func (l *unitsLayout) unit(rw *xlsxenc.RowWriter, u *acceptance.UnitResult) error {
	unitReason := ""
	if len(u.Reasons) > 0 {
		unitReason = cellText(u.Reasons[0].Text)
	}
	unitText, fileText := cellText(u.Unit), cellText(u.File)
	meta := make([]string, len(l.cols.meta))
	for j, key := range l.cols.meta {
		meta[j] = cellText(u.Metadata[key])
	}
	n := max(len(u.Steps), 1)
	for k := 0; k < n; k++ {
		rw.Start()
		rw.Str(1, unitText)
		rw.Str(2, fileText)
		if len(u.Steps) > 0 {
			l.step(rw, &u.Steps[k], u.Verdict)
		} else {
			rw.Str(8, string(u.Verdict))
		}
		rw.Str(l.reasonCol+1, unitReason)
		for j := range meta {
			rw.Str(l.reasonCol+2+j, meta[j])
		}
		rw.Str(l.shaCol, u.SHA256)
		if l.axisCol > 0 && len(u.Steps) > 0 {
			rw.Str(l.axisCol, cellText(u.Steps[k].Axis))
		}
		rw.Int(l.lineCol, u.Attempt)
		rw.Int(l.lineCol+1, u.Attempts)
		rw.Str(l.lineCol+2, cellText(u.Lot))
		rw.Str(l.lineCol+3, cellText(u.Shift))
		if err := rw.End(); err != nil {
			return fmt.Errorf("row %d (unit %q): %w", rw.Row(), u.Unit, err)
		}
	}
	return nil
}

// step writes the step's cells of a row, from the step index to the step
// reason.
func (l *unitsLayout) step(rw *xlsxenc.RowWriter, s *acceptance.StepResult, unitVerdict acceptance.Verdict) {
	rw.Int(3, s.Index)
	rw.Num(4, s.StartS)
	rw.Num(5, s.From)
	rw.Num(6, s.To)
	rw.Str(7, string(s.Verdict))
	rw.Str(8, string(unitVerdict))
	c := unitsFirstValue
	for _, mi := range l.metricIdx {
		if mi >= 0 {
			if v := s.Metrics.At(mi); v.OK {
				rw.Num(c, v.V)
			}
		}
		c++
	}
	for _, mi := range l.predIdx {
		if mi >= 0 {
			if s.Predicted != nil {
				if v := s.Predicted.Metrics.At(mi); v.OK {
					rw.Num(c, v.V)
				}
			}
			if g, ok := s.Gap.At(mi); ok {
				rw.Num(c+1, g)
			}
		}
		c += 2
	}
	if len(s.Reasons) > 0 {
		rw.Str(l.reasonCol, cellText(s.Reasons[0].Text))
	}
}

// streamHead sets a streamed sheet's column widths, frozen header row and
// header cells.
func streamHead(sw *excelize.StreamWriter, st *styles, header []string, w map[int]float64) error {
	// The stream writer puts each new column definition first; going from
	// the last column down leaves them in the ascending order ECMA-376
	// requires.
	for i := len(header); i >= 1; i-- {
		width, ok := w[i]
		if !ok {
			width = clampW(utf8.RuneCountInString(header[i-1]))
		}
		if err := sw.SetColWidth(i, i, width); err != nil {
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
	return sw.SetRow("A1", hdr, excelize.RowOpts{Height: 18})
}

// checkRows counts the rows of the Checks sheet: one per limit check of
// every step of every unit.
func checkRows(b *acceptance.Batch) int {
	n := 0
	for i := range b.Units {
		for k := range b.Units[i].Steps {
			n += len(b.Units[i].Steps[k].Checks)
		}
	}
	return n
}

// checks writes one row per limit check.
func checks(f *excelize.File, st *styles, d *digest.Digest, bodies map[string]*xlsxenc.Body) error {
	const sh = SheetChecks
	b := d.Batch
	header := []string{"unit", "file", "step", "metric", "value", "unit of value", "min", "max", "verdict", "reason", "unit verdict"}
	axes := hasAxes(b)
	if axes {
		header = append(header, "axis")
	}
	rows := checkRows(b)
	if err := openTable(f, st, sh, header, rows, "checks", []string{"I", "K"},
		map[int]float64{1: 16, 2: 24, 3: 6, 4: 22, 5: 12, 6: 8, 7: 10, 8: 10, 9: 10, 10: 50, 11: 12}); err != nil {
		return err
	}
	units := map[metrics.Name]string{}
	bodies[sh] = &xlsxenc.Body{Rows: rows, Cols: len(header), Write: func(rw *xlsxenc.RowWriter) error {
		for i := range b.Units {
			u := &b.Units[i]
			unitText, fileText := cellText(u.Unit), cellText(u.File)
			for k := range u.Steps {
				s := &u.Steps[k]
				for _, c := range s.Checks {
					rw.Start()
					rw.Str(1, unitText)
					rw.Str(2, fileText)
					rw.Int(3, s.Index)
					rw.Str(4, cellText(string(c.Metric)))
					rw.NumPtr(5, c.Value)
					mu, ok := units[c.Metric]
					if !ok {
						mu = cellText(digest.MetricUnit(c.Metric, d.ResponseUnit))
						units[c.Metric] = mu
					}
					rw.Str(6, mu)
					rw.NumPtr(7, c.Min)
					rw.NumPtr(8, c.Max)
					rw.Str(9, string(c.Verdict))
					rw.Str(10, cellText(c.Reason))
					rw.Str(11, string(u.Verdict))
					if axes {
						rw.Str(12, cellText(s.Axis))
					}
					if err := rw.End(); err != nil {
						return fmt.Errorf("row %d (unit %q, step %d, %s): %w", rw.Row(), u.Unit, s.Index, c.Metric, err)
					}
				}
			}
		}
		return nil
	}}
	return nil
}

// gapRows counts the rows of the Gaps sheet: one per limited metric of
// every step that has a prediction.
func gapRows(b *acceptance.Batch, limited []metrics.Name) int {
	n := 0
	for i := range b.Units {
		for k := range b.Units[i].Steps {
			if b.Units[i].Steps[k].Predicted != nil {
				n += len(limited)
			}
		}
	}
	return n
}

// gaps writes, for every step with a prediction and every limited metric,
// the measured and predicted value and their gap: a long table a test
// engineer filters by metric and sorts by gap.
func gaps(f *excelize.File, st *styles, d *digest.Digest, bodies map[string]*xlsxenc.Body) error {
	const sh = SheetGaps
	b := d.Batch
	header := []string{"unit", "file", "step", withUnit("from", d.ResponseUnit), withUnit("to", d.ResponseUnit), "metric", "unit of value",
		"measured", "predicted", "gap (measured − predicted)", "gap (% of predicted)", "prediction", "check", "note"}
	axes := hasAxes(b)
	if axes {
		header = append(header, "axis")
	}
	rows := gapRows(b, d.Limited)
	if err := openTable(f, st, sh, header, rows, "step metrics", []string{"M"},
		map[int]float64{1: 16, 2: 24, 3: 6, 6: 22, 8: 12, 9: 12, 10: 14, 11: 14, 12: 11, 13: 10, 14: 50}); err != nil {
		return err
	}
	type column struct {
		name       metrics.Name
		text, unit string
		idx        int
	}
	limited := make([]column, 0, len(d.Limited))
	for _, m := range d.Limited {
		i := metrics.Index(m)
		if i < 0 {
			return fmt.Errorf("limited metric %q is not a metric", m)
		}
		limited = append(limited, column{name: m, text: cellText(string(m)), unit: cellText(digest.MetricUnit(m, d.ResponseUnit)), idx: i})
	}
	bodies[sh] = &xlsxenc.Body{Rows: rows, Cols: len(header), Write: func(rw *xlsxenc.RowWriter) error {
		for i := range b.Units {
			u := &b.Units[i]
			unitText, fileText := cellText(u.Unit), cellText(u.File)
			for k := range u.Steps {
				s := &u.Steps[k]
				if s.Predicted == nil {
					continue
				}
				kind := cellText(s.Predicted.Kind)
				for _, m := range limited {
					rw.Start()
					rw.Str(1, unitText)
					rw.Str(2, fileText)
					rw.Int(3, s.Index)
					rw.Num(4, s.From)
					rw.Num(5, s.To)
					rw.Str(6, m.text)
					rw.Str(7, m.unit)
					meas, pred := s.Metrics.At(m.idx), s.Predicted.Metrics.At(m.idx)
					if meas.OK {
						rw.Num(8, meas.V)
					}
					if pred.OK {
						rw.Num(9, pred.V)
					}
					if g, ok := s.Gap.At(m.idx); ok {
						rw.Num(10, g)
						if pred.OK && pred.V != 0 {
							rw.Num(11, 100*g/pred.V)
						}
					}
					rw.Str(12, kind)
					for _, c := range s.Checks {
						if c.Metric == m.name {
							rw.Str(13, string(c.Verdict))
							break
						}
					}
					switch {
					case !meas.OK:
						rw.Str(14, cellText("not measured: "+orWhy(meas.Why, s.Metrics.Reason(m.name))))
					case !pred.OK:
						rw.Str(14, cellText("not predicted: "+orWhy(pred.Why, s.Predicted.Metrics.Reason(m.name))))
					}
					if axes {
						rw.Str(15, cellText(s.Axis))
					}
					if err := rw.End(); err != nil {
						return fmt.Errorf("row %d (unit %q, step %d, %s): %w", rw.Row(), u.Unit, s.Index, m.name, err)
					}
				}
			}
		}
		return nil
	}}
	return nil
}

func orWhy(a, b string) string {
	if a != "" {
		return a
	}
	if b != "" {
		return b
	}
	return "no reason recorded"
}

// openTable starts a long table sheet: the sheet, an autofilter over the
// header and rows data rows, verdict colours on the given columns, and the
// header row with the column widths. Its data rows are written later, as a
// xlsxenc.Body.
func openTable(f *excelize.File, st *styles, sh string, header []string, rows int, what string, verdictCols []string, widths map[int]float64) error {
	if _, err := f.NewSheet(sh); err != nil {
		return err
	}
	if rows+1 > maxRows {
		return fmt.Errorf("%d %s exceed the %d rows a worksheet holds; split the batch", rows, what, maxRows-1)
	}
	last := max(rows+1, 2)
	if err := f.AutoFilter(sh, "A1:"+cellRef(len(header), last), nil); err != nil {
		return err
	}
	for _, col := range verdictCols {
		if err := verdictColours(f, sh, fmt.Sprintf("%s2:%s%d", col, col, last), st); err != nil {
			return err
		}
	}
	sw, err := f.NewStreamWriter(sh)
	if err != nil {
		return err
	}
	if err := streamHead(sw, st, header, widths); err != nil {
		return err
	}
	return sw.Flush()
}
