package xlsxreport

import (
	"fmt"
	"sort"
	"unicode/utf8"

	"github.com/xuri/excelize/v2"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/metrics"
)

// unitColumns describes the Units sheet's columns.
type unitColumns struct {
	metrics   []string // every metric, report order
	predicted []string // limited metrics with predicted and gap columns
	meta      []string // metadata keys, sorted
}

func columnsFor(d *digest.Digest) unitColumns {
	b := d.Batch
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
func unitsMetricCol(m string) int {
	for i, n := range metrics.Names {
		if string(n) == m {
			return unitsFirstValue + i
		}
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

func units(f *excelize.File, st *styles, d *digest.Digest) error {
	const sh = SheetUnits
	b := d.Batch
	if _, err := f.NewSheet(sh); err != nil {
		return err
	}
	unit := d.ResponseUnit
	cols := columnsFor(d)
	header := []string{"unit", "file", "step", "start_s (s)", withUnit("from", unit), withUnit("to", unit), "step verdict", "unit verdict"}
	for _, m := range cols.metrics {
		header = append(header, withUnit(m, digest.MetricUnit(m, unit)))
	}
	for _, m := range cols.predicted {
		header = append(header, withUnit("predicted "+m, digest.MetricUnit(m, unit)), withUnit("gap "+m, digest.MetricUnit(m, unit)))
	}
	header = append(header, "step reason", "unit reason")
	for _, k := range cols.meta {
		header = append(header, "log: "+Text(k))
	}
	header = append(header, "file SHA-256")
	shaCol := len(header) - 1

	rows := unitRows(b)
	unitW, fileW, reasonW := 8, 8, 12
	for i := range b.Units {
		u := &b.Units[i]
		unitW = max(unitW, utf8.RuneCountInString(u.Unit))
		fileW = max(fileW, utf8.RuneCountInString(u.File))
		if r := digest.FirstReason(u); r != "" {
			reasonW = max(reasonW, utf8.RuneCountInString(r))
		}
	}
	if rows+1 > maxRows {
		return fmt.Errorf("%d unit steps exceed the %d rows a worksheet holds; split the batch", rows, maxRows-1)
	}
	last := rows + 1
	// Filter and conditional formats belong to the worksheet, which the
	// stream writer takes over: set them first.
	if err := f.AutoFilter(sh, "A1:"+cellRef(len(header), last), nil); err != nil {
		return err
	}
	if err := verdictColours(f, sh, fmt.Sprintf("%s2:%s%d", colName(unitsVerdictCol), colName(unitsVerdictCol+1), max(last, 2)), st); err != nil {
		return err
	}
	sw, err := f.NewStreamWriter(sh)
	if err != nil {
		return err
	}
	w := map[int]float64{1: clampW(unitW), 2: clampW(fileW), 3: 6, 4: 11, 5: 10, 6: 10, 7: 12, 8: 12}
	for i := unitsFirstValue; i <= len(header); i++ {
		w[i] = clampW(utf8.RuneCountInString(header[i-1]))
	}
	reasonCol := unitsFirstValue + len(cols.metrics) + 2*len(cols.predicted)
	w[reasonCol], w[reasonCol+1] = clampW(reasonW), clampW(reasonW)
	if err := streamHead(sw, st, header, w); err != nil {
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
				c := unitsFirstValue - 1
				for _, m := range cols.metrics {
					if v, ok := s.Metrics.Lookup(m); ok {
						vals[c] = known(v)
					}
					c++
				}
				for _, m := range cols.predicted {
					if s.Predicted != nil {
						if v, ok := s.Predicted.Metrics.Lookup(m); ok {
							vals[c] = known(v)
						}
					}
					if g := s.Gap.Get(m); g != nil {
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
			if u.SHA256 != "" {
				vals[shaCol] = u.SHA256
			}
			if err := sw.SetRow(cellRef(1, row), vals); err != nil {
				return fmt.Errorf("row %d (unit %q): %w", row, u.Unit, err)
			}
			row++
		}
	}
	return sw.Flush()
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

// CheckRows counts the rows of the Checks sheet: one per limit check of
// every step of every unit.
func CheckRows(b *acceptance.Batch) int {
	n := 0
	for i := range b.Units {
		for k := range b.Units[i].Steps {
			n += len(b.Units[i].Steps[k].Checks)
		}
	}
	return n
}

// checks writes one row per limit check.
func checks(f *excelize.File, st *styles, d *digest.Digest) error {
	const sh = SheetChecks
	b := d.Batch
	header := []string{"unit", "file", "step", "metric", "value", "unit of value", "min", "max", "verdict", "reason", "unit verdict"}
	sw, err := openTable(f, st, sh, header, CheckRows(b), "checks", []string{"I", "K"},
		map[int]float64{1: 16, 2: 24, 3: 6, 4: 22, 5: 12, 6: 8, 7: 10, 8: 10, 9: 10, 10: 50, 11: 12})
	if err != nil {
		return err
	}
	row := 2
	vals := make([]interface{}, len(header))
	for i := range b.Units {
		u := &b.Units[i]
		for k := range u.Steps {
			s := &u.Steps[k]
			for _, c := range s.Checks {
				for j := range vals {
					vals[j] = nil
				}
				vals[0], vals[1], vals[2], vals[3] = Text(u.Unit), Text(u.File), s.Index, Text(c.Metric)
				if c.Value != nil {
					vals[4] = *c.Value
				}
				if mu := digest.MetricUnit(c.Metric, d.ResponseUnit); mu != "" {
					vals[5] = Text(mu)
				}
				vals[6], vals[7] = bound(c.Min), bound(c.Max)
				vals[8] = string(c.Verdict)
				if c.Reason != "" {
					vals[9] = Text(c.Reason)
				}
				vals[10] = string(u.Verdict)
				if err := sw.SetRow(cellRef(1, row), vals); err != nil {
					return fmt.Errorf("row %d (unit %q, step %d, %s): %w", row, u.Unit, s.Index, c.Metric, err)
				}
				row++
			}
		}
	}
	return sw.Flush()
}

// GapRows counts the rows of the Gaps sheet: one per limited metric of
// every step that has a prediction.
func GapRows(b *acceptance.Batch, limited []string) int {
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
func gaps(f *excelize.File, st *styles, d *digest.Digest) error {
	const sh = SheetGaps
	b := d.Batch
	header := []string{"unit", "file", "step", withUnit("from", d.ResponseUnit), withUnit("to", d.ResponseUnit), "metric", "unit of value",
		"measured", "predicted", "gap (measured − predicted)", "gap (% of predicted)", "prediction", "check", "note"}
	sw, err := openTable(f, st, sh, header, GapRows(b, d.Limited), "step metrics", []string{"M"},
		map[int]float64{1: 16, 2: 24, 3: 6, 6: 22, 8: 12, 9: 12, 10: 14, 11: 14, 12: 11, 13: 10, 14: 50})
	if err != nil {
		return err
	}
	row := 2
	vals := make([]interface{}, len(header))
	for i := range b.Units {
		u := &b.Units[i]
		for k := range u.Steps {
			s := &u.Steps[k]
			if s.Predicted == nil {
				continue
			}
			verdicts := map[string]acceptance.Verdict{}
			for _, c := range s.Checks {
				verdicts[c.Metric] = c.Verdict
			}
			for _, m := range d.Limited {
				for j := range vals {
					vals[j] = nil
				}
				vals[0], vals[1], vals[2], vals[3], vals[4], vals[5] = Text(u.Unit), Text(u.File), s.Index, s.From, s.To, Text(m)
				if mu := digest.MetricUnit(m, d.ResponseUnit); mu != "" {
					vals[6] = Text(mu)
				}
				meas, pred := s.Metrics.Get(m), s.Predicted.Metrics.Get(m)
				vals[7], vals[8] = known(meas), known(pred)
				if g := s.Gap.Get(m); g != nil {
					vals[9] = *g
					if pred.OK && pred.V != 0 {
						vals[10] = 100 * *g / pred.V
					}
				}
				vals[11] = Text(s.Predicted.Kind)
				if v, ok := verdicts[m]; ok {
					vals[12] = string(v)
				}
				switch {
				case !meas.OK:
					vals[13] = Text("not measured: " + orWhy(meas.Why, s.Metrics.Reason(m)))
				case !pred.OK:
					vals[13] = Text("not predicted: " + orWhy(pred.Why, s.Predicted.Metrics.Reason(m)))
				}
				if err := sw.SetRow(cellRef(1, row), vals); err != nil {
					return fmt.Errorf("row %d (unit %q, step %d, %s): %w", row, u.Unit, s.Index, m, err)
				}
				row++
			}
		}
	}
	return sw.Flush()
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

// openTable starts a streamed table sheet: the sheet, an autofilter over
// the header and rows data rows, verdict colours on the given columns, and
// the header row with the column widths.
func openTable(f *excelize.File, st *styles, sh string, header []string, rows int, what string, verdictCols []string, widths map[int]float64) (*excelize.StreamWriter, error) {
	if _, err := f.NewSheet(sh); err != nil {
		return nil, err
	}
	if rows+1 > maxRows {
		return nil, fmt.Errorf("%d %s exceed the %d rows a worksheet holds; split the batch", rows, what, maxRows-1)
	}
	last := max(rows+1, 2)
	if err := f.AutoFilter(sh, "A1:"+cellRef(len(header), last), nil); err != nil {
		return nil, err
	}
	for _, col := range verdictCols {
		if err := verdictColours(f, sh, fmt.Sprintf("%s2:%s%d", col, col, last), st); err != nil {
			return nil, err
		}
	}
	sw, err := f.NewStreamWriter(sh)
	if err != nil {
		return nil, err
	}
	if err := streamHead(sw, st, header, widths); err != nil {
		return nil, err
	}
	return sw, nil
}
