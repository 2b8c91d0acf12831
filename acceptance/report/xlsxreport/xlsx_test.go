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

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

func ptr(v float64) *float64 { return &v }

// overshootPct is the closed-form overshoot of a second-order loop,
// 100·exp(−πζ/√(1−ζ²)) (K. Ogata, Modern Control Engineering, 5th ed.,
// §5-3); ζ = 0.6 gives 9.48 % (Ogata Example 5-1, from memory).
func overshootPct(zeta float64) float64 {
	return 100 * math.Exp(-math.Pi*zeta/math.Sqrt(1-zeta*zeta))
}

// stepMetrics returns a full metric set for an up-step 0 → 10 of a loop
// with damping zeta and natural frequency wn (Ogata, §5-3: peak time π/ωd,
// settling time 4/σ); the metric named unknown is left unmeasured.
func stepMetrics(zeta, wn float64, unknown metrics.Name) (map[metrics.Name]metrics.Value, map[metrics.Name]string) {
	wd := wn * math.Sqrt(1-zeta*zeta)
	mp := overshootPct(zeta)
	m := map[metrics.Name]metrics.Value{
		"step_size": metrics.Known(10), "initial_value": metrics.Known(0), "final_value": metrics.Known(10),
		"dead_time_s": metrics.Known(0.004), "rise_time_s": metrics.Known((math.Pi - math.Atan2(wd, zeta*wn)) / wd),
		"peak_value": metrics.Known(10 + mp/10), "peak_time_s": metrics.Known(math.Pi / wd),
		"overshoot_pct": metrics.Known(mp), "settling_time_s": metrics.Known(4 / (zeta * wn)),
		"steady_state_error": metrics.Known(0.01), "steady_state_error_pct": metrics.Known(0.1),
	}
	unm := map[metrics.Name]string{}
	if unknown != "" {
		m[unknown] = metrics.Unknown("the record ends before the response stays in the band")
		unm[unknown] = m[unknown].Why
	}
	return m, unm
}

const (
	formulaSerial = "=1+1"
	ddeSerial     = "+cmd|' /C calc'!A0"
	formulaFile   = "@SUM(A1:A9).csv"
	formulaMeta   = `=HYPERLINK("http://example.invalid","x")`
)

// judge applies the limits to a step the way acceptance.JudgeStep
// reports it, in limit-name order, so the fixture carries its checks.
func judge(limits map[metrics.Name]spec.Limit, m map[metrics.Name]metrics.Value) []acceptance.Check {
	var out []acceptance.Check
	for _, name := range digest.LimitedMetrics(&acceptance.Batch{Limits: limits}) {
		l := limits[name]
		c := acceptance.Check{Metric: name, Min: l.Min, Max: l.Max, Verdict: acceptance.Pass}
		v := m[name]
		switch {
		case !v.OK:
			c.Verdict, c.Reason = acceptance.Invalid, string(name)+" not measured at step 1: "+v.Why
		case l.Max != nil && v.V > *l.Max:
			c.Value, c.Verdict, c.Reason = ptr(v.V), acceptance.Fail, fmt.Sprintf("%s %.4g > %g at step 1", name, v.V, *l.Max)
		case l.Min != nil && v.V < *l.Min:
			c.Value, c.Verdict, c.Reason = ptr(v.V), acceptance.Fail, fmt.Sprintf("%s %.4g < %g at step 1", name, v.V, *l.Min)
		default:
			c.Value = ptr(v.V)
		}
		out = append(out, c)
	}
	return out
}

// testBatch: a passing unit, a failing one with a formula-like serial, an
// unreadable file, and a unit with an unmeasured settling time.
func testBatch() *acceptance.Batch {
	limits := map[metrics.Name]spec.Limit{
		"overshoot_pct":   {Max: ptr(15)},
		"settling_time_s": {Max: ptr(1.6)},
		"final_value":     {Min: ptr(9.9), Max: ptr(10.1)},
	}
	pred, _ := stepMetrics(0.6, 5, "")
	b := &acceptance.Batch{
		Tool:       acceptance.ToolInfo{Name: "stepgate", Version: "0.1.0"},
		Spec:       acceptance.SpecInfo{SpecID: "ACT-25", Revision: "C", SHA256: strings.Repeat("ab", 32), Title: "Linear actuator VD-25"},
		Limits:     limits,
		ReportDate: "2024-05-17",
		SpecDoc:    &spec.Spec{SpecID: "ACT-25", Revision: "C", ResponseUnit: "mm", Limits: limits},
		Model: &acceptance.ModelSummary{
			Config: model.Config{Plant: &model.TransferFunc{Numerator: []float64{25}, Denominator: []float64{1, 6, 0}}, Controller: model.Controller{Kp: 1}},
			Plant:  "25/(s² + 6 s)",
			Nominal: []acceptance.NominalPrediction{{
				From: 0, To: 10, Ideal: acceptance.Prediction{Kind: "ideal", Metrics: acceptance.MetricsOf(pred)}, Realised: acceptance.Prediction{Kind: "realised", Metrics: acceptance.MetricsOf(pred)},
			}},
			Designs: []acceptance.GainDesign{{Target: "overshoot_pct", Value: 15, KpIdeal: ptr(1.9)}, {Target: "damping", Value: 1, KpIdeal: ptr(0.36), Why: "realised: not designed"}},
		},
		TestDates: acceptance.DateRange{First: "2024-05-15", Last: "2024-05-16"},
	}
	mk := func(serial, file string, zeta, wn float64, unknown metrics.Name, v acceptance.Verdict, reasons []acceptance.Reason) acceptance.UnitResult {
		m, _ := stepMetrics(zeta, wn, unknown)
		gap := map[metrics.Name]*float64{}
		for k, pv := range pred {
			if mv := m[k]; mv.OK {
				gap[k] = ptr(mv.V - pv.V)
			}
		}
		return acceptance.UnitResult{
			Unit: serial, File: file, SHA256: strings.Repeat("cd", 32), Verdict: v, Reasons: reasons, Samples: 3001,
			Metadata: map[string]string{"operator": "B. Tech", "rig": formulaMeta},
			Steps: []acceptance.StepResult{{
				Index: 1, StartS: 0.5, From: 0, To: 10, Verdict: v, Reasons: reasons, Metrics: acceptance.MetricsOf(m),
				Checks:    judge(limits, m),
				Predicted: &acceptance.Prediction{Kind: "ideal", Metrics: acceptance.MetricsOf(pred)}, Gap: acceptance.GapsOf(gap),
			}},
		}
	}
	b.Units = []acceptance.UnitResult{
		mk("SN-1001", "logs/SN-1001.csv", 0.6, 5, "", acceptance.Pass, nil),
		mk(formulaSerial, formulaFile, 0.25, 6, "", acceptance.Fail, acceptance.TextReasons("overshoot_pct 44.43 above max 15", "settling_time_s 2.667 above max 1.6")),
		{Unit: ddeSerial, File: "logs/broken.csv", Verdict: acceptance.Invalid,
			Reasons: []acceptance.Reason{{Kind: acceptance.Unreadable, Text: `log cannot be read: logs/broken.csv:12:3: cannot read "1,2.3" as a number in column "position"`}}},
		mk("SN-1005\x07", "logs/SN-1005.csv", 0.55, 5, "settling_time_s", acceptance.Invalid, acceptance.TextReasons("settling_time_s not measured: the record ends before the response stays in the band")),
	}
	b.Summary = acceptance.Summary{Units: 4, Pass: 1, Fail: 1, Invalid: 2}
	return b
}

func writeBook(t *testing.T, b *acceptance.Batch) []byte {
	t.Helper()
	var buf bytes.Buffer
	if err := writeBatch(&buf, b); err != nil {
		t.Fatalf("Write: %v", err)
	}
	return buf.Bytes()
}

func open(t *testing.T, data []byte) *excelize.File {
	t.Helper()
	f, err := excelize.OpenReader(bytes.NewReader(data))
	if err != nil {
		t.Fatalf("reading the workbook back: %v", err)
	}
	t.Cleanup(func() { f.Close() })
	return f
}

// colOf returns the 1-based column whose header is h on the Units sheet.
func colOf(t *testing.T, f *excelize.File, h string) int {
	t.Helper()
	rows, err := f.GetRows(SheetUnits)
	if err != nil {
		t.Fatal(err)
	}
	for i, v := range rows[0] {
		if v == h {
			return i + 1
		}
	}
	t.Fatalf("no column %q in %q", h, rows[0])
	return 0
}

func ref(c, r int) string { s, _ := excelize.CoordinatesToCellName(c, r); return s }

func TestWorkbookLayout(t *testing.T) {
	f := open(t, writeBook(t, testBatch()))
	if got, want := strings.Join(f.GetSheetList(), ","), "Summary,Units,Checks,Gaps,Retests,Limits,Model,Safety"; got != want {
		t.Errorf("sheets %s, want %s", got, want)
	}
	rows, err := f.GetRows(SheetUnits)
	if err != nil {
		t.Fatal(err)
	}
	header := strings.Join(rows[0], "|")
	want := "unit|file|step|start_s (s)|from (mm)|to (mm)|step verdict|unit verdict|" +
		"step_size (mm)|initial_value (mm)|final_value (mm)|dead_time_s (s)|rise_time_s (s)|peak_value (mm)|peak_time_s (s)|" +
		"overshoot_pct (%)|settling_time_s (s)|steady_state_error (mm)|steady_state_error_pct (%)|" +
		"predicted final_value (mm)|gap final_value (mm)|predicted overshoot_pct (%)|gap overshoot_pct (%)|" +
		"predicted settling_time_s (s)|gap settling_time_s (s)|step reason|unit reason|log: operator|log: rig|file SHA-256|attempt|attempts|lot|shift"
	if header != want {
		t.Errorf("Units header\n got %s\nwant %s", header, want)
	}
	// One row per unit step; the unreadable file still has its row.
	if len(rows) != 1+4 {
		t.Errorf("%d rows, want header + 4", len(rows))
	}
	if rows[3][0] != ddeSerial || rows[3][7] != "invalid" || rows[3][2] != "" {
		t.Errorf("unreadable file row %q", rows[3])
	}
	if got := rows[3][colOf(t, f, "unit reason")-1]; !strings.HasPrefix(got, "log cannot be read: logs/broken.csv:12:3:") {
		t.Errorf("unit reason %q", got)
	}

	// Frozen header, filter over the whole table, verdict colours.
	panes, err := f.GetPanes(SheetUnits)
	if err != nil || !panes.Freeze || panes.YSplit != 1 {
		t.Errorf("Units panes %+v, %v: want the header row frozen", panes, err)
	}
	cf, err := f.GetConditionalFormats(SheetUnits)
	if err != nil {
		t.Fatal(err)
	}
	rules := cf["G2:H5"]
	var vals []string
	for _, r := range rules {
		vals = append(vals, r.Value)
	}
	if strings.Join(vals, ",") != `"pass","fail","invalid"` {
		t.Errorf("conditional formats %v, want pass/fail/invalid over G2:H5", cf)
	}
}

// TestSummarySheet: the identification, the counts and the yield as a
// number formatted as a percentage.
func TestSummarySheet(t *testing.T) {
	f := open(t, writeBook(t, testBatch()))
	sum, _ := f.GetRows(SheetSummary)
	values := map[string]string{}
	for _, r := range sum {
		if len(r) >= 2 {
			values[r[0]] = r[1]
		}
	}
	for k, v := range map[string]string{
		"spec id": "ACT-25", "revision": "C", "title": "Linear actuator VD-25", "spec SHA-256": strings.Repeat("ab", 32),
		"tool": "stepgate", "tool version": "0.1.0", "report date": "2024-05-17", "report id": digest.ReportID(testBatch()),
		"test dates": "2024-05-15 to 2024-05-16", "first test date": "2024-05-15", "last test date": "2024-05-16",
		"units": "4", "pass": "1", "fail": "1", "invalid": "2", "yield (pass of units)": "25.0%",
	} {
		if values[k] != v {
			t.Errorf("Summary %q = %q, want %q", k, values[k], v)
		}
	}
	for r, row := range sum {
		if len(row) > 0 && row[0] == "yield (pass of units)" {
			raw, _ := f.GetCellValue(SheetSummary, ref(2, r+1), excelize.Options{RawCellValue: true})
			if y, err := strconv.ParseFloat(raw, 64); err != nil || y != 0.25 {
				t.Errorf("yield raw value %q, want the number 0.25", raw)
			}
		}
	}

}

// TestLimitsSheet: metric, min, max, unit, empty where a side is
// unbounded, and the definition with its reference.
func TestLimitsSheet(t *testing.T) {
	f := open(t, writeBook(t, testBatch()))
	lim, _ := f.GetRows(SheetLimits)
	var four []string
	for _, r := range lim {
		if len(r) >= 4 && r[0] != "" {
			four = append(four, fmt.Sprint(r[:4]))
		}
	}
	if got := strings.Join(four, " "); got != "[metric min max unit] [final_value 9.9 10.1 mm] [overshoot_pct  15 %] [settling_time_s  1.6 s]" {
		t.Errorf("Limits %s", got)
	}
	if len(lim[3]) < 6 || !strings.Contains(lim[3][5], "ANSI/ISA-51.1") || !strings.Contains(lim[3][4], "±2 % band") {
		t.Errorf("settling-time definition %q", lim[3])
	}
}

// TestNumbersAndNulls reads cells back: a measured metric is a number cell
// (no type attribute, which ECMA-376 Part 1 §18.3.1.4 defines as number), an
// unmeasured one is an empty cell, never 0.
func TestNumbersAndNulls(t *testing.T) {
	b := testBatch()
	f := open(t, writeBook(t, b))
	over := colOf(t, f, "overshoot_pct (%)")
	cell := ref(over, 3) // the failing unit
	typ, err := f.GetCellType(SheetUnits, cell)
	if err != nil || (typ != excelize.CellTypeNumber && typ != excelize.CellTypeUnset) {
		t.Errorf("%s type %v, want a number", cell, typ)
	}
	raw, _ := f.GetCellValue(SheetUnits, cell, excelize.Options{RawCellValue: true})
	got, err := strconv.ParseFloat(raw, 64)
	if want := overshootPct(0.25); err != nil || math.Abs(got-want) > 1e-9 {
		t.Errorf("%s = %q, want %v (44.43 %%, closed form)", cell, raw, want)
	}
	sett := colOf(t, f, "settling_time_s (s)")
	if v, _ := f.GetCellValue(SheetUnits, ref(sett, 5)); v != "" {
		t.Errorf("unmeasured settling time shows %q, want an empty cell", v)
	}
	if v, _ := f.GetCellValue(SheetUnits, ref(sett, 4)); v != "" {
		t.Errorf("unreadable file's settling time shows %q, want an empty cell", v)
	}
	gap := colOf(t, f, "gap overshoot_pct (%)")
	raw, _ = f.GetCellValue(SheetUnits, ref(gap, 3), excelize.Options{RawCellValue: true})
	if g, err := strconv.ParseFloat(raw, 64); err != nil || math.Abs(g-(overshootPct(0.25)-overshootPct(0.6))) > 1e-9 {
		t.Errorf("gap %q, want measured − predicted", raw)
	}
	if v, _ := f.GetCellValue(SheetUnits, ref(colOf(t, f, "step"), 2)); v != "1" {
		t.Errorf("step index %q", v)
	}
}

// TestTextStaysText checks that texts from logs that a spreadsheet would
// otherwise evaluate (a leading =, + or @, the usual formula-injection
// forms) are stored as strings and never as formulas.
func TestTextStaysText(t *testing.T) {
	f := open(t, writeBook(t, testBatch()))
	tests := []struct {
		sheet, cell, want string
	}{
		{SheetUnits, "A3", formulaSerial},
		{SheetUnits, "A4", ddeSerial},
		{SheetUnits, "B3", formulaFile},
		{SheetUnits, ref(colOf(t, f, "log: rig"), 2), formulaMeta},
		// A control character, which XML 1.0 (§2.2) cannot carry, is marked
		// with U+FFFD rather than dropped.
		{SheetUnits, "A5", "SN-1005\uFFFD"},
	}
	for _, tc := range tests {
		if fm, err := f.GetCellFormula(tc.sheet, tc.cell); err != nil || fm != "" {
			t.Errorf("%s!%s has formula %q (%v)", tc.sheet, tc.cell, fm, err)
		}
		if v, _ := f.GetCellValue(tc.sheet, tc.cell); v != tc.want {
			t.Errorf("%s!%s = %q, want %q", tc.sheet, tc.cell, v, tc.want)
		}
		typ, _ := f.GetCellType(tc.sheet, tc.cell)
		if typ != excelize.CellTypeInlineString && typ != excelize.CellTypeSharedString {
			t.Errorf("%s!%s type %v, want a string", tc.sheet, tc.cell, typ)
		}
	}
	// The same texts on the Summary sheet (a spec title from the user).
	b := testBatch()
	b.Spec.Title = formulaSerial
	f = open(t, writeBook(t, b))
	rows, _ := f.GetRows(SheetSummary)
	for r, row := range rows {
		if len(row) > 1 && row[0] == "title" {
			c := ref(2, r+1)
			fm, _ := f.GetCellFormula(SheetSummary, c)
			typ, _ := f.GetCellType(SheetSummary, c)
			if fm != "" || row[1] != formulaSerial || typ != excelize.CellTypeSharedString {
				t.Errorf("Summary title: formula %q value %q type %v", fm, row[1], typ)
			}
		}
	}
}

// TestDeterministic writes the same batch several times: the workbook has
// three streamed sheets, which excelize writes in map order, so a single
// repeat could agree by chance.
func TestDeterministic(t *testing.T) {
	a := writeBook(t, testBatch())
	for i := 0; i < 6; i++ {
		if b := writeBook(t, testBatch()); !bytes.Equal(a, b) {
			t.Fatalf("write %d of the same batch differs (%d and %d bytes)", i+2, len(a), len(b))
		}
	}
	// No clock time in the zip entries or the document properties.
	zr, err := zip.NewReader(bytes.NewReader(a), int64(len(a)))
	if err != nil {
		t.Fatal(err)
	}
	for i, e := range zr.File {
		if e.ModifiedDate != 0 || e.ModifiedTime != 0 {
			t.Errorf("zip entry %s carries a date %d/%d", e.Name, e.ModifiedDate, e.ModifiedTime)
		}
		if i > 0 && e.Name < zr.File[i-1].Name && zr.File[i-1].Name != "[Content_Types].xml" {
			t.Errorf("zip entry %s after %s: entries not in name order", e.Name, zr.File[i-1].Name)
		}
		if e.Name == "docProps/core.xml" {
			rc, _ := e.Open()
			core, _ := io.ReadAll(rc)
			rc.Close()
			if n := bytes.Count(core, []byte("2024-05-17T00:00:00Z")); n != 2 {
				t.Errorf("core properties carry the report date %d times, want created and modified: %s", n, core)
			}
		}
	}
}

func TestWriteErrors(t *testing.T) {
	b := testBatch()
	b.ReportDate = "May 17"
	if err := writeBatch(io.Discard, b); err == nil || !strings.Contains(err.Error(), `report date "May 17": want YYYY-MM-DD`) {
		t.Errorf("bad date: %v", err)
	}
	if err := writeBatch(io.Discard, nil); err == nil {
		t.Errorf("nil batch: no error")
	}
}

func TestEmptyBatch(t *testing.T) {
	b := testBatch()
	b.Units, b.Summary, b.Model = nil, acceptance.Summary{}, nil
	f := open(t, writeBook(t, b))
	if got := strings.Join(f.GetSheetList(), ","); got != "Summary,Units,Checks,Retests,Limits,Safety" {
		t.Errorf("sheets %s", got)
	}
	rows, _ := f.GetRows(SheetSummary)
	found := false
	for _, r := range rows {
		if len(r) == 3 && r[0] == "yield (pass of units)" && r[1] == "" && strings.HasPrefix(r[2], "not defined") {
			found = true
		}
	}
	if !found {
		t.Errorf("yield of an empty batch should be an empty cell with a note: %q", rows)
	}
}

func TestText(t *testing.T) {
	tests := []struct{ in, want string }{
		{"SN-1001", "SN-1001"},
		{"=1+1", "=1+1"},
		{"ζ ± µ → 测试 \U0001F600", "ζ ± µ → 测试 \U0001F600"},
		{"a\tb\nc\rd", "a\tb\nc\rd"},
		{"SN\x07-\x1b1", "SN\uFFFD-\uFFFD1"},
		{"bad \xff byte", "bad \uFFFD byte"},
		{"\uFFFE", "\uFFFD"},
	}
	for _, tc := range tests {
		if got := cellText(tc.in); got != tc.want {
			t.Errorf("Text(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}

// rowsOf returns a sheet's rows, failing the test on an error.
func rowsOf(t *testing.T, f *excelize.File, sh string) [][]string {
	t.Helper()
	rows, err := f.GetRows(sh)
	if err != nil {
		t.Fatalf("sheet %s: %v", sh, err)
	}
	return rows
}

// The workbook carries the safety cautions like every report, and each
// unit row its file's SHA-256, which the Summary's statement refers to.
func TestWorkbookSafetyAndDigests(t *testing.T) {
	b := testBatch()
	f := open(t, writeBook(t, b))
	rows := rowsOf(t, f, SheetSafety)
	text := ""
	for _, r := range rows {
		text += strings.Join(r, " ") + "\n"
	}
	for _, want := range []string{"ISO 12100", "IEC 60204-1", "no safety certification", "competent, licensed practice"} {
		if !strings.Contains(text, want) {
			t.Errorf("Safety sheet lacks %q", want)
		}
	}
	col := colOf(t, f, "file SHA-256")
	got, _ := f.GetCellValue(SheetUnits, ref(col, 2))
	if got != b.Units[0].SHA256 {
		t.Errorf("Units file SHA-256 = %q, want %q", got, b.Units[0].SHA256)
	}
}

// writeBatch digests b and writes its workbook to w.
func writeBatch(w io.Writer, b *acceptance.Batch) error {
	d, err := digest.New(b)
	if err != nil {
		return err
	}
	return Write(w, d)
}

// The Retests sheet lists every attempt of a retested serial with its
// disposition; the Summary gives both yields over serials.
func TestRetestsSheet(t *testing.T) {
	b := testBatch()
	fp, fy := 50.0, 100.0
	b.Summary.Serials, b.Summary.Retested, b.Summary.FirstPassYieldPct, b.Summary.FinalYieldPct = 2, 1, &fp, &fy
	b.Retests = []acceptance.Retest{{Serial: "S-1", Attempts: []acceptance.RetestAttempt{
		{Attempt: 1, File: "old/S-1.csv", Verdict: acceptance.Fail, Earlier: true},
		{Attempt: 2, File: "S-1b.csv", Verdict: acceptance.Pass},
	}}}
	f := open(t, writeBook(t, b))
	rows, err := f.GetRows(SheetRetests)
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 3 || rows[1][0] != "S-1" || rows[1][1] != "1" || rows[1][6] != "an earlier run" || rows[2][3] != "S-1b.csv" || rows[2][7] != "pass" {
		t.Errorf("Retests rows %q", rows)
	}
	sum, _ := f.GetRows(SheetSummary)
	found := 0
	for _, r := range sum {
		if len(r) > 1 && (r[0] == "first-pass yield (of serials)" && r[1] == "50.0%" || r[0] == "final yield (of serials)" && r[1] == "100.0%") {
			found++
		}
	}
	if found != 2 {
		t.Errorf("Summary lacks the yields: %q", sum)
	}
}
