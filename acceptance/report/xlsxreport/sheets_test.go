package xlsxreport

import (
	"archive/zip"
	"bytes"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"github.com/stepgate/stepgate/acceptance/report/digest"
)

// TestChecksSheet: one row per limit check in the batch, counted here from
// the batch itself, with the value as a number and the reason as text.
func TestChecksSheet(t *testing.T) {
	b := testBatch()
	want := 0
	for _, u := range b.Units {
		for _, s := range u.Steps {
			want += len(s.Checks)
		}
	}
	if want == 0 {
		t.Fatal("the fixture has no checks: the count proves nothing")
	}
	f := open(t, writeBook(t, b))
	rows := rowsOf(t, f, SheetChecks)
	if got := len(rows) - 1; got != want || checkRows(b) != want {
		t.Errorf("Checks has %d rows (checkRows %d), want one per check: %d", got, checkRows(b), want)
	}
	if h := strings.Join(rows[0], "|"); h != "unit|file|step|metric|value|unit of value|min|max|verdict|reason|unit verdict" {
		t.Errorf("Checks header %s", h)
	}
	// The failing unit's overshoot check: row of "=1+1" and overshoot_pct.
	found := false
	for r, row := range rows {
		if len(row) > 9 && row[0] == formulaSerial && row[3] == "overshoot_pct" {
			found = true
			raw, _ := f.GetCellValue(SheetChecks, ref(5, r+1), excelize.Options{RawCellValue: true})
			if v, err := strconv.ParseFloat(raw, 64); err != nil || math.Abs(v-overshootPct(0.25)) > 1e-9 {
				t.Errorf("check value %q, want %v", raw, overshootPct(0.25))
			}
			if row[7] != "15" || row[8] != "fail" || !strings.HasPrefix(row[9], "overshoot_pct 44.43 > 15") {
				t.Errorf("check row %q", row)
			}
			if typ, _ := f.GetCellType(SheetChecks, ref(1, r+1)); typ != excelize.CellTypeInlineString && typ != excelize.CellTypeSharedString {
				t.Errorf("serial stored as %v, want text", typ)
			}
			if fm, _ := f.GetCellFormula(SheetChecks, ref(1, r+1)); fm != "" {
				t.Errorf("serial stored as formula %q", fm)
			}
		}
		// An unmeasured value is an empty cell, never 0.
		if len(row) > 8 && row[8] == "invalid" && row[4] != "" {
			t.Errorf("invalid check shows value %q", row[4])
		}
	}
	if !found {
		t.Errorf("no overshoot check row for the failing unit")
	}
	panes, err := f.GetPanes(SheetChecks)
	if err != nil || !panes.Freeze || panes.YSplit != 1 {
		t.Errorf("Checks panes %+v, %v", panes, err)
	}
	cf, _ := f.GetConditionalFormats(SheetChecks)
	if _, ok := cf[fmt.Sprintf("I2:I%d", want+1)]; !ok {
		t.Errorf("Checks verdicts not coloured: %v", cf)
	}
}

// TestGapsSheet: per step with a prediction and limited metric, measured,
// predicted and their gap, the gap equal to measured − predicted.
func TestGapsSheet(t *testing.T) {
	b := testBatch()
	f := open(t, writeBook(t, b))
	rows := rowsOf(t, f, SheetGaps)
	limited := digest.LimitedMetrics(b)
	steps := 0
	for _, u := range b.Units {
		for _, s := range u.Steps {
			if s.Predicted != nil {
				steps++
			}
		}
	}
	if len(rows)-1 != steps*len(limited) || gapRows(b, limited) != steps*len(limited) {
		t.Errorf("Gaps has %d rows, want %d steps × %d metrics", len(rows)-1, steps, len(limited))
	}
	for r, row := range rows[1:] {
		if row[0] != formulaSerial || row[5] != "overshoot_pct" {
			continue
		}
		num := func(c int) float64 {
			raw, _ := f.GetCellValue(SheetGaps, ref(c, r+2), excelize.Options{RawCellValue: true})
			v, err := strconv.ParseFloat(raw, 64)
			if err != nil {
				t.Fatalf("Gaps %s = %q, want a number", ref(c, r+2), raw)
			}
			return v
		}
		meas, pred, gap, rel := num(8), num(9), num(10), num(11)
		// ζ = 0.25 against the predicted ζ = 0.6 (Ogata, 5th ed., §5-3).
		// Cells keep 15 significant digits, as spreadsheets do.
		close := func(a, b float64) bool { return math.Abs(a-b) <= 1e-12*math.Max(1, math.Abs(b)) }
		if !close(meas, overshootPct(0.25)) || !close(pred, overshootPct(0.6)) || !close(gap, meas-pred) || !close(rel, 100*gap/pred) {
			t.Errorf("gap row measured %v predicted %v gap %v rel %v", meas, pred, gap, rel)
		}
		if row[12] != "fail" || row[11] != "ideal" {
			t.Errorf("gap row %q", row)
		}
	}
}

// TestSummaryCapability reads the capability table back: the overshoot row
// carries the mean and sample standard deviation of the three measured
// overshoots (closed form 100·exp(−πζ/√(1−ζ²)), Ogata 5th ed. §5-3) and
// Cpu = (USL − μ)/(3σ) (ISO 22514-2; AIAG SPC manual; references §6),
// flagged n < 30.
func TestSummaryCapability(t *testing.T) {
	f := open(t, writeBook(t, testBatch()))
	rows := rowsOf(t, f, SheetSummary)
	var vals []float64
	for _, z := range []float64{0.6, 0.25, 0.55} {
		vals = append(vals, overshootPct(z))
	}
	mu := (vals[0] + vals[1] + vals[2]) / 3
	ss := 0.0
	for _, v := range vals {
		ss += (v - mu) * (v - mu)
	}
	sigma := math.Sqrt(ss / 2)
	found := false
	for r, row := range rows {
		if len(row) < 16 || row[0] != "overshoot_pct" {
			continue
		}
		found = true
		num := func(c int) float64 {
			raw, _ := f.GetCellValue(SheetSummary, ref(c, r+1), excelize.Options{RawCellValue: true})
			v, err := strconv.ParseFloat(raw, 64)
			if err != nil {
				t.Fatalf("Summary %s = %q, want a number", ref(c, r+1), raw)
			}
			return v
		}
		if n := num(3); n != 3 {
			t.Errorf("n = %v, want 3", n)
		}
		if math.Abs(num(5)-mu) > 1e-9 || math.Abs(num(6)-sigma) > 1e-9 {
			t.Errorf("mean %v sd %v, want %v %v", num(5), num(6), mu, sigma)
		}
		if row[13] != "Cpu" || math.Abs(num(15)-(15-mu)/(3*sigma)) > 1e-9 || row[15] != "indicative only, n < 30" {
			t.Errorf("capability %q, want Cpu %v flagged", row[13:16], (15-mu)/(3*sigma))
		}
	}
	if !found {
		t.Fatalf("no capability row for overshoot_pct in %q", rows)
	}
	text := fmt.Sprint(rows)
	for _, w := range []string{"Why units did not pass", "overshoot above its max", "log cannot be read", "Likely causes", "decision rule", "ISO 14253-1:2017"} {
		if !strings.Contains(text, w) {
			t.Errorf("Summary lacks %q", w)
		}
	}
}

// TestModelSheet: parameters, nominal predictions and designed gains.
func TestModelSheet(t *testing.T) {
	f := open(t, writeBook(t, testBatch()))
	rows := rowsOf(t, f, SheetModel)
	got := map[string]string{}
	for _, r := range rows {
		if len(r) >= 2 {
			got[r[0]] = r[1]
		}
	}
	for k, v := range map[string]string{"plant": "25/(s² + 6 s)", "controller kp": "1", "plant denominator": "[1, 6, 0]",
		"loop": "not given: the ideal loop is used", "prediction compared": "ideal"} {
		if got[k] != v {
			t.Errorf("Model %q = %q, want %q", k, got[k], v)
		}
	}
	text := fmt.Sprint(rows)
	for _, w := range []string{"Nominal predictions", "Identified loop against the model", "Gains the model gives", "overshoot_pct", "realised: not designed", "CAUTION"} {
		if !strings.Contains(text, w) {
			t.Errorf("Model sheet lacks %q", w)
		}
	}
	// ζ and ωn of 25/(s(s + 6)) under kp = 1: ωn = 5, ζ = 0.6 (references
	// §4, coefficient matching).
	for r, row := range rows {
		if len(row) > 2 && row[0] == "damping ratio ζ" {
			raw, _ := f.GetCellValue(SheetModel, ref(3, r+1), excelize.Options{RawCellValue: true})
			if v, err := strconv.ParseFloat(raw, 64); err != nil || math.Abs(v-0.6) > 1e-12 {
				t.Errorf("model ζ %q, want 0.6", raw)
			}
		}
	}
}

// TestChart: the workbook carries a native scatter chart (a chart part in
// the zip, ECMA-376 Part 1 DrawingML charts) drawn from the Units sheet's
// overshoot and settling-time columns, with the limit lines.
func TestChart(t *testing.T) {
	data := writeBook(t, testBatch())
	zr, err := zip.NewReader(bytes.NewReader(data), int64(len(data)))
	if err != nil {
		t.Fatal(err)
	}
	var chart []byte
	for _, e := range zr.File {
		if e.Name == "xl/charts/chart1.xml" {
			rc, _ := e.Open()
			chart, _ = io.ReadAll(rc)
			rc.Close()
		}
	}
	if chart == nil {
		t.Fatalf("no xl/charts/chart1.xml in the workbook")
	}
	// Units, Checks and Gaps each carry an autofilter over their table.
	filters := 0
	for _, e := range zr.File {
		if strings.HasPrefix(e.Name, "xl/worksheets/sheet") {
			rc, _ := e.Open()
			x, _ := io.ReadAll(rc)
			rc.Close()
			filters += bytes.Count(x, []byte("<autoFilter "))
		}
	}
	if filters != 3 {
		t.Errorf("%d sheets with an autofilter, want Units, Checks and Gaps", filters)
	}
	f := open(t, data)
	ost, sett := colOf(t, f, "overshoot_pct (%)"), colOf(t, f, "settling_time_s (s)")
	// The references sit in <f> elements, their quotes escaped as XML
	// character references.
	chart = bytes.ReplaceAll(chart, []byte("&#39;"), []byte("'"))
	for _, w := range []string{
		"scatterChart",
		fmt.Sprintf("<f>'Units'!$%s$2:$%s$5</f>", colName(sett), colName(sett)),
		fmt.Sprintf("<f>'Units'!$%s$2:$%s$5</f>", colName(ost), colName(ost)),
		"<f>'Limits'!$H$2</f>",
	} {
		if !bytes.Contains(chart, []byte(w)) {
			t.Errorf("chart part lacks %q", w)
		}
	}
	lim := rowsOf(t, f, SheetLimits)
	var names []string
	for _, r := range lim {
		if len(r) >= 8 && r[7] != "" {
			names = append(names, r[7])
		}
	}
	if got := strings.Join(names, "|"); got != "chart series|unit steps|settling-time limit 1.6 s|settling-time limit 1.6 s|overshoot limit 15 %|overshoot limit 15 %" {
		t.Errorf("chart series names %s", got)
	}
}
