package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"github.com/stepgate/stepgate/acceptance/spec"
)

// captureRun runs the command line with stdout and stderr captured.
func captureRun(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	oldOut, oldErr := os.Stdout, os.Stderr
	ro, wo, _ := os.Pipe()
	re, we, _ := os.Pipe()
	os.Stdout, os.Stderr = wo, we
	outc, errc := make(chan string), make(chan string)
	go func() { var b bytes.Buffer; b.ReadFrom(ro); outc <- b.String() }()
	go func() { var b bytes.Buffer; b.ReadFrom(re); errc <- b.String() }()
	code = execute(args)
	wo.Close()
	we.Close()
	os.Stdout, os.Stderr = oldOut, oldErr
	return code, <-outc, <-errc
}

// TestRunEndToEnd runs the batch on testdata/e2e (invented demo data whose
// expected verdicts are listed in testdata/e2e/README.md) and checks the
// reports and the exit status.
func TestRunEndToEnd(t *testing.T) {
	out := t.TempDir()
	code, stdout, stderr := captureRun(t, "run", "--spec", "../../testdata/e2e/spec.yaml", "--out", out, "--report-date", "2026-12-01", "../../testdata/e2e")
	if code != 1 {
		t.Fatalf("exit %d, want 1 (some units fail); stderr: %s", code, stderr)
	}
	if !strings.Contains(stdout, "units 7: pass 1, fail 3, invalid 3") {
		t.Errorf("summary line missing from stdout:\n%s", stdout)
	}
	if !strings.Contains(stdout, "left out by the include/exclude patterns: 2 file(s)") || !strings.Contains(stdout, "README.md  (*.md)") {
		t.Errorf("the files the spec's patterns exclude are not listed on stdout:\n%s", stdout)
	}
	checkE2EResults(t, filepath.Join(out, "results.json"))
	checkE2EWorkbook(t, filepath.Join(out, "report.xlsx"))
	checkE2EPDF(t, filepath.Join(out, "report.pdf"))
	// No temporary files are left behind.
	if names := strings.Join(dirNames(t, out), " "); names != allReports {
		t.Errorf("output directory holds %v, want the reports only", names)
	}
}

// e2eResults is the part of results.json TestRunEndToEnd reads.
type e2eResults struct {
	Tool    map[string]string  `json:"tool"`
	Spec    map[string]string  `json:"spec"`
	Summary map[string]float64 `json:"summary"`
	Units   []e2eUnit          `json:"units"`
}

type e2eUnit struct {
	Unit     string            `json:"unit"`
	File     string            `json:"file"`
	SHA256   string            `json:"sha256"`
	Metadata map[string]string `json:"metadata"`
	Verdict  string            `json:"verdict"`
	Reasons  []string          `json:"reasons"`
	Steps    []struct {
		Index   int                 `json:"index"`
		StartS  float64             `json:"start_s"`
		From    float64             `json:"from"`
		To      float64             `json:"to"`
		Verdict string              `json:"verdict"`
		Metrics map[string]*float64 `json:"metrics"`
		Checks  []struct {
			Metric  string   `json:"metric"`
			Value   *float64 `json:"value"`
			Max     *float64 `json:"max"`
			Verdict string   `json:"verdict"`
		} `json:"checks"`
		Predicted *struct {
			Metrics map[string]*float64 `json:"metrics"`
		} `json:"predicted"`
		Gap map[string]*float64 `json:"gap"`
	} `json:"steps"`
	Fit map[string]any `json:"fit"`
}

// e2eUnits are the verdicts testdata/e2e/README.md lists, with a check of
// what else each unit's record must hold.
var e2eUnits = map[string]struct {
	verdict string
	check   func(t *testing.T, u e2eUnit)
}{
	"VD25-261101": {"pass", checkPassedUnit},
	"VD25-261105": {"fail", func(t *testing.T, u e2eUnit) {
		if !strings.HasPrefix(u.Reasons[0], "overshoot_pct ") || !strings.Contains(u.Reasons[0], "> 10 at step 1") {
			t.Errorf("overshoot reason: %v", u.Reasons)
		}
	}},
	"VD25-261109": {"fail", nil},
	"VD25-261112": {"fail", nil},
	"VD25-261138": {"invalid", func(t *testing.T, u e2eUnit) {
		if !strings.Contains(u.Reasons[0], "line 1407: row has 3 fields") {
			t.Errorf("truncated log reason has no line number: %v", u.Reasons)
		}
	}},
	"VD25-261199": {"invalid", nil},
	"export":      {"invalid", nil},
}

// checkE2EResults reads results.json back: the tool and spec blocks, the
// summary, the units in id order with their verdicts and reasons.
func checkE2EResults(t *testing.T, path string) {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var res e2eResults
	if err := json.Unmarshal(data, &res); err != nil {
		t.Fatalf("results.json: %v", err)
	}
	if res.Tool["name"] != "stepgate" || res.Spec["spec_id"] != "VD25-EOL" || res.Spec["revision"] != "B" || len(res.Spec["sha256"]) != 64 {
		t.Errorf("tool/spec block wrong: %v %v", res.Tool, res.Spec)
	}
	if res.Summary["units"] != 7 || res.Summary["pass"] != 1 || res.Summary["fail"] != 3 || res.Summary["invalid"] != 3 {
		t.Errorf("summary %v", res.Summary)
	}
	for i, u := range res.Units {
		if i > 0 && res.Units[i-1].Unit > u.Unit {
			t.Errorf("units not ordered by id: %s before %s", res.Units[i-1].Unit, u.Unit)
		}
		want := e2eUnits[u.Unit]
		if want.verdict != u.Verdict {
			t.Errorf("unit %s: verdict %s, want %s (reasons %v)", u.Unit, u.Verdict, want.verdict, u.Reasons)
		}
		if u.Verdict != "pass" && len(u.Reasons) == 0 {
			t.Errorf("unit %s: %s without a reason", u.Unit, u.Verdict)
		}
		if want.check != nil {
			want.check(t, u)
		}
	}
}

// checkPassedUnit checks the passing unit's record: two steps, each with
// its four checks passed, a prediction and a gap; metadata, digest, fit.
func checkPassedUnit(t *testing.T, u e2eUnit) {
	t.Helper()
	if len(u.Steps) != 2 || u.Steps[0].To != 25 || u.Steps[1].To != 0 {
		t.Fatalf("VD25-261101 steps: %+v", u.Steps)
	}
	for _, s := range u.Steps {
		if len(s.Checks) != 4 || s.Predicted == nil || s.Gap == nil {
			t.Errorf("step %d: checks %d, predicted %v, gap %v", s.Index, len(s.Checks), s.Predicted != nil, s.Gap != nil)
		}
		for _, c := range s.Checks {
			if c.Value == nil || c.Verdict != "pass" {
				t.Errorf("step %d check %s: %v %s", s.Index, c.Metric, c.Value, c.Verdict)
			}
		}
	}
	if u.Metadata["station"] != "EOL-2" || len(u.SHA256) != 64 || u.Fit == nil {
		t.Errorf("metadata %v, sha %q, fit %v", u.Metadata, u.SHA256, u.Fit)
	}
}

// checkE2EWorkbook reads the workbook back: its sheets, and numbers stored
// as numbers.
func checkE2EWorkbook(t *testing.T, path string) {
	t.Helper()
	f, err := excelize.OpenFile(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sheets := strings.Join(f.GetSheetList(), ",")
	for _, s := range []string{"Summary", "Units", "Limits"} {
		if !strings.Contains(sheets, s) {
			t.Errorf("workbook has sheets %s, missing %s", sheets, s)
		}
	}
	rows, err := f.GetRows("Units")
	if err != nil || len(rows) < 2 {
		t.Fatalf("Units sheet: %v, %d rows", err, len(rows))
	}
	col := -1
	for i, h := range rows[0] {
		if strings.HasPrefix(h, "overshoot_pct") {
			col = i
			break
		}
	}
	if col < 0 {
		t.Fatalf("no overshoot column in %v", rows[0])
	}
	cell, _ := excelize.CoordinatesToCellName(col+1, 2)
	if typ, _ := f.GetCellType("Units", cell); typ != excelize.CellTypeNumber && typ != excelize.CellTypeUnset {
		t.Errorf("overshoot cell %s has type %v, want a number", cell, typ)
	}
}

// checkE2EPDF checks that the report is a PDF with pages.
func checkE2EPDF(t *testing.T, path string) {
	t.Helper()
	pdf, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.HasPrefix(pdf, []byte("%PDF-")) || bytes.Count(pdf, []byte("/Type /Page\n")) < 2 {
		t.Errorf("report.pdf: not a PDF with pages (%d bytes)", len(pdf))
	}
}

// TestRunDeterministic checks that two runs give byte-identical reports.
func TestRunDeterministic(t *testing.T) {
	var got [2][3][]byte
	for i := range got {
		out := t.TempDir()
		if code, _, stderr := captureRun(t, "run", "--quiet", "--spec", "../../testdata/e2e/spec.yaml", "--out", out, "--report-date", "2026-12-01", "../../testdata/e2e"); code != 1 {
			t.Fatalf("exit %d: %s", code, stderr)
		}
		for j, n := range []string{"results.json", "report.xlsx", "report.pdf"} {
			got[i][j], _ = os.ReadFile(filepath.Join(out, n))
		}
	}
	for j, n := range []string{"results.json", "report.xlsx", "report.pdf"} {
		if len(got[0][j]) == 0 || !bytes.Equal(got[0][j], got[1][j]) {
			t.Errorf("%s differs between two runs of the same inputs", n)
		}
	}
}

// TestExitCodes checks the documented exit statuses.
func TestExitCodes(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "good")
	os.MkdirAll(good, 0o755)
	src, _ := os.ReadFile("../../testdata/e2e/VD25-261101.csv")
	os.WriteFile(filepath.Join(good, "u1.csv"), src, 0o644)
	cases := []struct {
		name string
		args []string
		code int
		msg  string
	}{
		{"all pass", []string{"run", "--quiet", "--spec", "../../testdata/e2e/spec.yaml", "--out", filepath.Join(dir, "o1"), good}, 0, ""},
		{"missing spec", []string{"run", "--spec", filepath.Join(dir, "nope.yaml"), "--out", filepath.Join(dir, "o2"), good}, 2, "nope.yaml"},
		{"no logs", []string{"run", "--spec", "../../testdata/e2e/spec.yaml", "--out", filepath.Join(dir, "o3"), "--exclude", "*", filepath.Join(dir, "o1")}, 2, "no log files"},
		{"bad report date", []string{"run", "--spec", "../../testdata/e2e/spec.yaml", "--out", filepath.Join(dir, "o4"), "--report-date", "1/12/26", good}, 2, "YYYY-MM-DD"},
		{"unknown flag", []string{"run", "--nope"}, 2, "unknown flag"},
		{"spec check bad", []string{"spec", "check", "../../testdata/specs/invalid_many.yaml"}, 2, "invalid_many.yaml:"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			code, _, stderr := captureRun(t, c.args...)
			if code != c.code || !strings.Contains(stderr, c.msg) {
				t.Errorf("exit %d, stderr %q; want %d containing %q", code, stderr, c.code, c.msg)
			}
		})
	}
	// A spec error writes no report.
	if _, err := os.Stat(filepath.Join(dir, "o2")); !os.IsNotExist(err) {
		t.Errorf("a spec error left an output directory: %v", err)
	}
}

// TestSpecInitParses checks that the template printed by `spec init` is a
// valid spec.
func TestSpecInitParses(t *testing.T) {
	code, stdout, _ := captureRun(t, "spec", "init")
	if code != 0 {
		t.Fatalf("exit %d", code)
	}
	if _, err := spec.Parse([]byte(stdout), "template.yaml"); err != nil {
		t.Fatalf("template does not parse: %v", err)
	}
}

// TestPredictJSONContract checks the keys of `predict --json`, and that the
// closed-form gain for critical damping is the coefficient-matching value:
// the demo plant 48.4/(s² + 19.8 s) under P control has s² + 19.8 s + 48.4 kp,
// so ζ = 1 needs kp = 19.8²/(4·48.4) = 2.025 (references §4, coefficient
// matching; hand derivation).
func TestPredictJSONContract(t *testing.T) {
	code, stdout, stderr := captureRun(t, "predict", "--spec", "../../testdata/e2e/spec.yaml", "--for-damping", "1", "--to", "25", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var out map[string]json.RawMessage
	if err := json.Unmarshal([]byte(stdout), &out); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"controller", "ideal", "realised", "design"} {
		if _, ok := out[k]; !ok {
			t.Errorf("predict --json lacks %q", k)
		}
	}
	var d struct {
		Target     string   `json:"target"`
		Value      float64  `json:"value"`
		KpIdeal    *float64 `json:"kp_ideal"`
		KpRealised *float64 `json:"kp_realised"`
	}
	json.Unmarshal(out["design"], &d)
	if d.KpIdeal == nil || abs(*d.KpIdeal-2.025) > 1e-9 || d.Target != "damping" || d.Value != 1 {
		t.Errorf("design %+v, want kp_ideal 2.025", d)
	}
	var ideal struct {
		Metrics map[string]*float64 `json:"metrics"`
	}
	json.Unmarshal(out["ideal"], &ideal)
	if ideal.Metrics["overshoot_pct"] == nil {
		t.Errorf("ideal overshoot missing: %s", out["ideal"])
	}
}

// TestIdentifyJSONContract checks the keys of `identify --json` and the
// refusal of a log without a step.
func TestIdentifyJSONContract(t *testing.T) {
	code, stdout, stderr := captureRun(t, "identify", "--gain", "4.5", "--spec", "../../testdata/e2e/spec.yaml", "--json", "../../testdata/e2e/VD25-261101.csv")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var out map[string]any
	if err := json.Unmarshal([]byte(stdout), &out); err != nil {
		t.Fatalf("%v: %s", err, stdout)
	}
	for _, k := range []string{"static_gain", "damping", "natural_frequency_rad_s", "dead_time_s", "rms_residual"} {
		if _, ok := out[k]; !ok {
			t.Errorf("identify --json lacks %q", k)
		}
	}
	code, _, stderr = captureRun(t, "identify", "--gain", "4.5", "--spec", "../../testdata/e2e/spec.yaml", "../../testdata/e2e/no-step.csv")
	if code != 2 || !strings.Contains(stderr, "no clean step") {
		t.Errorf("no-step log: exit %d, %q", code, stderr)
	}
}

func TestMemoryLimit(t *testing.T) {
	const MiB = 1 << 20
	tests := []struct {
		files int
		want  int64
	}{
		{0, 256 * MiB},
		{1000, 256 * MiB},
		{20000, 256 * MiB}, // 117 MiB of summaries + 128 MiB fits under the floor
		{50000, 50000*6<<10 + 128*MiB},
	}
	for _, tc := range tests {
		if got := memoryLimit(tc.files); got != tc.want {
			t.Errorf("memoryLimit(%d) = %d MiB, want %d MiB", tc.files, got/MiB, tc.want/MiB)
		}
	}
}
