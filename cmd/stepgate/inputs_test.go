package main

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"sort"
	"strconv"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"github.com/stepgate/stepgate/acceptance/report"
)

// TestInputsNeverModified runs the corpus and the end-to-end logs and
// checks that every input file keeps its bytes and modification time.
func TestInputsNeverModified(t *testing.T) {
	for _, c := range []struct{ spec, dir string }{
		{"../../testdata/bad/specs/corpus.yaml", "../../testdata/bad"},
		{"../../testdata/e2e/spec.yaml", "../../testdata/e2e"},
	} {
		before := snapshot(t, c.dir)
		code, _, stderr := captureRun(t, "run", "--quiet", "--spec", c.spec, "--out", filepath.Join(t.TempDir(), "out"), "--report-date", "2026-12-01", c.dir)
		if code != 1 {
			t.Errorf("%s: exit %d: %s", c.dir, code, stderr)
		}
		sameTree(t, c.dir, before, snapshot(t, c.dir))
	}
}

// TestOutputInsideInput runs with the output directory inside the logs'
// directory, holding a previous results.json and a stray log: the search
// skips it, so neither is read as a log. An output directory that is the
// input directory itself is refused; one that holds the input directory
// (`--out . logs`) is fine.
func TestOutputInsideInput(t *testing.T) {
	root := t.TempDir()
	logs := filepath.Join(root, "logs")
	out := filepath.Join(logs, "out")
	os.MkdirAll(out, 0o755)
	ents, _ := os.ReadDir("../../testdata/e2e")
	n := 0
	for _, e := range ents {
		if strings.HasSuffix(e.Name(), ".csv") {
			data, _ := os.ReadFile(filepath.Join("../../testdata/e2e", e.Name()))
			os.WriteFile(filepath.Join(logs, e.Name()), data, 0o644)
			n++
		}
	}
	good, _ := os.ReadFile("../../testdata/e2e/VD25-261101.csv")
	os.WriteFile(filepath.Join(out, "stray.csv"), bytes.Replace(good, []byte("VD25-261101"), []byte("STRAY-1"), 1), 0o644)
	os.WriteFile(filepath.Join(out, "results.json"), []byte(`{"previous": true}`), 0o644)

	code, _, stderr := captureRun(t, "run", "--quiet", "--force", "--spec", "../../testdata/e2e/spec.yaml", "--out", out, "--report-date", "2026-12-01", logs)
	if code != 1 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	res := readResults(t, filepath.Join(out, "results.json"))
	if res.Summary.Units != n {
		t.Errorf("%d units, want the %d logs outside the output directory", res.Summary.Units, n)
	}
	for _, u := range res.Units {
		if u.Unit == "STRAY-1" || strings.HasPrefix(u.File, out) {
			t.Errorf("a file of the output directory was judged: %s %s", u.Unit, u.File)
		}
	}
	if got := strings.Join(dirNames(t, out), " "); got != "report.pdf report.xlsx results.json steps.csv stray.csv units.jsonl" {
		t.Errorf("output directory holds %q", got)
	}

	code, _, stderr = captureRun(t, "run", "--quiet", "--spec", "../../testdata/e2e/spec.yaml", "--out", logs, logs)
	if code != 2 || !strings.Contains(stderr, "--out "+logs+" is the input directory "+logs) {
		t.Errorf("--out equal to the input: exit %d, %q", code, stderr)
	}
	if _, err := os.Stat(filepath.Join(logs, report.JSONName)); !os.IsNotExist(err) {
		t.Errorf("a refused run wrote into the input directory: %v", err)
	}

	// A fresh tree: the reports go to the folder that holds the logs.
	os.RemoveAll(out)
	spec, _ := filepath.Abs("../../testdata/e2e/spec.yaml")
	t.Chdir(root)
	code, _, stderr = captureRun(t, "run", "--quiet", "--spec", spec, "--out", ".", "--report-date", "2026-12-01", "logs")
	if code != 1 {
		t.Fatalf("--out . logs: exit %d: %s", code, stderr)
	}
	if res := readResults(t, filepath.Join(root, "results.json")); res.Summary.Units != n {
		t.Errorf("--out . logs: %d units, want %d", res.Summary.Units, n)
	}
}

// TestLogTextIsData runs logs whose serials and metadata hold spreadsheet
// formulas (OWASP, CSV injection: cells starting with =, +, -, @), control
// characters, bytes that are not UTF-8 and a relative path, and whose file
// name holds control characters. Everything must stay text: the workbook's
// cells hold strings, not formulas; no control character reaches the PDF's
// text or the terminal; results.json is valid JSON that keeps the serials;
// and the run writes its reports and nothing else, anywhere.
func TestLogTextIsData(t *testing.T) {
	root := t.TempDir()
	logs := filepath.Join(root, "logs")
	out := filepath.Join(root, "out")
	writeTextLogs(t, logs)
	before := snapshot(t, root)

	code, stdout, stderr := captureRun(t, "run", "--spec", "../../testdata/bad/specs/corpus.yaml", "--out", out, "--report-date", "2026-12-01", logs)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if strings.ContainsAny(stdout, "\x07\x1b") || strings.ContainsAny(stderr, "\x07\x1b") {
		t.Errorf("control characters reached the terminal: %q", stdout)
	}
	// Nothing but the reports was created, anywhere under the test's
	// root (the logs' serials name no file).
	if got := strings.Join(made(before, snapshot(t, root)), " "); got != "out out/report.pdf out/report.xlsx out/results.json out/steps.csv out/units.jsonl" {
		t.Errorf("the run created %q", got)
	}
	if _, err := os.Stat(filepath.Join(root, "..", "etc", "x")); !os.IsNotExist(err) {
		t.Errorf("a file was made from the serial ../../etc/x: %v", err)
	}
	res := readResults(t, filepath.Join(out, report.JSONName))
	found := map[string]bool{}
	for _, u := range res.Units {
		found[u.Unit] = true
	}
	for _, s := range textSerials {
		if !found[s] {
			t.Errorf("results.json lost serial %q", s)
		}
	}
	checkWorkbookText(t, filepath.Join(out, report.XLSXName))
	checkPDFText(t, filepath.Join(out, report.PDFName))
}

// textSerials are the serials of TestLogTextIsData's logs: four formulas
// first, then a relative path and a serial whose log holds ISO 8859-1.
var textSerials = []string{
	`=HYPERLINK("http://x","y")`,
	`+cmd|' /C calc'!A0`,
	`-2+3+cmd|' /C calc'!A0`,
	`@SUM(1+1)*cmd|' /C calc'!A0`,
	`../../etc/x`,
	"LATIN1-1",
}

// writeTextLogs writes into dir one good log per serial of textSerials,
// with the serial as its operator too (an operator name in ISO 8859-1 for
// LATIN1-1), and a log whose file name holds control characters.
func writeTextLogs(t *testing.T, dir string) {
	t.Helper()
	os.MkdirAll(dir, 0o755)
	good, err := os.ReadFile("../../testdata/bad/good.csv")
	if err != nil {
		t.Fatal(err)
	}
	body := good[bytes.IndexByte(good, '\n')+1:] // without its serial line
	for i, s := range textSerials {
		meta := "# serial: " + s + "\n# operator: " + s + "\n"
		if s == "LATIN1-1" {
			meta = "# serial: LATIN1-1\n# operator: J\xfcrgen M\xfcller\n" // ISO 8859-1, not UTF-8
		}
		os.WriteFile(filepath.Join(dir, "u"+strconv.Itoa(i)+".csv"), append([]byte(meta), body...), 0o644)
	}
	ctlName := "bell\x07esc\x1b[31mred.csv"
	if err := os.WriteFile(filepath.Join(dir, ctlName), body, 0o644); err != nil {
		t.Skipf("file system refuses control characters in names: %v", err)
	}
}

// made lists, sorted, the entries of after that are not in before.
func made(before, after map[string]string) []string {
	var names []string
	for k := range after {
		if _, ok := before[k]; !ok {
			names = append(names, k)
		}
	}
	sort.Strings(names)
	return names
}

// checkWorkbookText checks every cell of the workbook: no formula, the
// formula-like serials stored as strings, no control character.
func checkWorkbookText(t *testing.T, path string) {
	t.Helper()
	f, err := excelize.OpenFile(path)
	if err != nil {
		t.Fatalf("report.xlsx: %v", err)
	}
	defer f.Close()
	cells := 0
	for _, sheet := range f.GetSheetList() {
		rows, err := f.GetRows(sheet)
		if err != nil {
			t.Fatal(err)
		}
		for r, row := range rows {
			for c, v := range row {
				ref, _ := excelize.CoordinatesToCellName(c+1, r+1)
				if checkCellText(t, f, sheet, ref, v) {
					cells++
				}
			}
		}
	}
	if cells < 4 {
		t.Errorf("found the formula-like serials in %d cells, want each at least once", cells)
	}
}

// checkCellText checks one cell holding v and reports whether v is one of
// the formula-like serials.
func checkCellText(t *testing.T, f *excelize.File, sheet, ref, v string) (serial bool) {
	t.Helper()
	// The writer uses no formulas, so any formula came from a log.
	if formula, _ := f.GetCellFormula(sheet, ref); formula != "" {
		t.Errorf("%s!%s holds the formula %q", sheet, ref, formula)
	}
	if strings.ContainsAny(v, "\x07\x1b") {
		t.Errorf("%s!%s holds control characters: %q", sheet, ref, v)
	}
	if !slices.Contains(textSerials[:4], v) {
		return false
	}
	if typ, _ := f.GetCellType(sheet, ref); typ != excelize.CellTypeSharedString && typ != excelize.CellTypeInlineString {
		t.Errorf("%s!%s holds %q as cell type %v, want a string", sheet, ref, v, typ)
	}
	return true
}

// checkPDFText checks the PDF's text (with pdftotext, when installed): no
// control character, and the serials present.
func checkPDFText(t *testing.T, path string) {
	t.Helper()
	pdftotext, err := exec.LookPath("pdftotext")
	if err != nil {
		t.Log("pdftotext not installed (poppler-utils); the PDF text is not checked")
		return
	}
	text, err := exec.Command(pdftotext, path, "-").Output()
	if err != nil {
		t.Fatalf("pdftotext: %v", err)
	}
	if bytes.ContainsAny(text, "\x07\x1b") {
		i := bytes.IndexAny(text, "\x07\x1b")
		t.Errorf("control characters in the PDF text: %q", text[max(0, i-30):min(len(text), i+30)])
	}
	if !bytes.Contains(text, []byte("../../etc/x")) || !bytes.Contains(text, []byte("LATIN1-1")) {
		t.Errorf("the PDF lacks the serials as text")
	}
}
