package main

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/santhosh-tekuri/jsonschema/v6"

	"github.com/stepgate/stepgate/acceptance/report"
)

// compileSchema compiles what `stepgate schema NAME` prints. The validator
// checks the schema itself against the draft 2020-12 meta-schema.
func compileSchema(t *testing.T, name string) *jsonschema.Schema {
	t.Helper()
	code, stdout, stderr := captureRun(t, "schema", name)
	if code != 0 {
		t.Fatalf("schema %s: exit %d: %s", name, code, stderr)
	}
	doc, err := jsonschema.UnmarshalJSON(strings.NewReader(stdout))
	if err != nil {
		t.Fatalf("schema %s is not JSON: %v", name, err)
	}
	c := jsonschema.NewCompiler()
	c.DefaultDraft(jsonschema.Draft2020)
	url := "mem:///" + name + ".schema.json"
	if err := c.AddResource(url, doc); err != nil {
		t.Fatal(err)
	}
	sch, err := c.Compile(url)
	if err != nil {
		t.Fatalf("schema %s does not compile: %v", name, err)
	}
	return sch
}

// validate fails when data, a JSON document that stepgate wrote (what
// names it), breaks the schema. A key the tool writes that the schema
// lacks fails here: add it to templates/schema.json.
func validate(t *testing.T, sch *jsonschema.Schema, what string, data []byte) {
	t.Helper()
	inst, err := jsonschema.UnmarshalJSON(bytes.NewReader(data))
	if err != nil {
		t.Fatalf("%s is not JSON: %v", what, err)
	}
	if err := sch.Validate(inst); err != nil {
		t.Errorf("%s does not follow `stepgate schema` (templates/schema.json); a key the tool writes must be added there:\n%v", what, err)
	}
}

// Every JSON document the tool writes follows its schema: results.json and
// every line of units.jsonl of a run (the end-to-end line, the bad-input
// corpus and the demo line, between them every verdict, unknown metrics
// with reasons, fits, predictions, gaps and evidence), run --json,
// predict --json with and without a designed gain, and identify --json.
// The reference is the JSON Schema validator github.com/santhosh-tekuri/jsonschema,
// which implements draft 2020-12 and passes its official test suite.
func TestOutputsFollowSchema(t *testing.T) {
	results, unit, run := compileSchema(t, "results"), compileSchema(t, "unit"), compileSchema(t, "run")
	predict, identify := compileSchema(t, "predict"), compileSchema(t, "identify")

	for _, c := range outputRuns(t) {
		validate(t, results, c.name+" results.json", c.files[report.JSONName])
		for i, line := range bytes.Split(bytes.TrimSuffix(c.files[report.UnitsName], []byte("\n")), []byte("\n")) {
			validate(t, unit, c.name+" units.jsonl line "+strconv.Itoa(i+1), line)
		}
		if c.stdout != "" {
			validate(t, run, c.name+" run --json", []byte(c.stdout))
		}
	}
	for _, args := range [][]string{
		{"predict", "--spec", "../../testdata/e2e/spec.yaml", "--for-damping", "1", "--to", "25", "--json"},
		{"predict", "--spec", "../../testdata/e2e/spec.yaml", "--json"},
	} {
		code, stdout, stderr := captureRun(t, args...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, stderr)
		}
		validate(t, predict, strings.Join(args, " "), []byte(stdout))
	}
	code, stdout, stderr := captureRun(t, "identify", "--gain", "4.5", "--spec", "../../testdata/e2e/spec.yaml", "--json", "../../testdata/e2e/VD25-261101.csv")
	if code != 0 {
		t.Fatalf("identify: exit %d: %s", code, stderr)
	}
	validate(t, identify, "identify --json", []byte(stdout))
}

// The schema refuses what the contract rules out: a key it does not know,
// a verdict that is not one of the three, a missing member. Without these
// the test above could pass on a schema that admits anything.
func TestSchemaRefuses(t *testing.T) {
	unit := compileSchema(t, "unit")
	good := `{"unit":"U1","file":"u1.csv","sha256":"00","metadata":null,"verdict":"pass","reasons":[],"steps":[],"samples":3,"attempt":1,"attempts":1,"lot":"","shift":""}`
	if inst, _ := jsonschema.UnmarshalJSON(strings.NewReader(good)); unit.Validate(inst) != nil {
		t.Fatalf("a valid unit is refused: %v", unit.Validate(inst))
	}
	for name, doc := range map[string]string{
		"unknown key":     strings.Replace(good, `"samples":3`, `"samples":3,"colour":"red"`, 1),
		"unknown verdict": strings.Replace(good, `"pass"`, `"ok"`, 1),
		"missing member":  strings.Replace(good, `,"samples":3`, ``, 1),
		"text for number": strings.Replace(good, `"samples":3`, `"samples":"3"`, 1),
	} {
		inst, err := jsonschema.UnmarshalJSON(strings.NewReader(doc))
		if err != nil {
			t.Fatal(err)
		}
		if unit.Validate(inst) == nil {
			t.Errorf("%s: the schema accepts %s", name, doc)
		}
	}
	if code, _, stderr := captureRun(t, "schema", "nope"); code != 2 || !strings.Contains(stderr, "results") {
		t.Errorf("schema nope: exit %d, %q", code, stderr)
	}
}

// outputRun is what one run left: its output files by name and, with
// --json, its stdout.
type outputRun struct {
	name   string
	files  map[string][]byte
	stdout string
}

// outputRuns runs the end-to-end line with --json, the bad-input corpus
// and a small demo line, each into a new directory.
func outputRuns(t *testing.T) []outputRun {
	t.Helper()
	var runs []outputRun
	read := func(name, dir, stdout string) {
		files := map[string][]byte{}
		for _, n := range report.Names {
			b, err := os.ReadFile(filepath.Join(dir, n))
			if err != nil {
				t.Fatal(err)
			}
			files[n] = b
		}
		runs = append(runs, outputRun{name, files, stdout})
	}
	out := filepath.Join(t.TempDir(), "e2e")
	code, stdout, stderr := captureRun(t, "run", "--json", "--spec", "../../testdata/e2e/spec.yaml", "--out", out, "--report-date", "2026-12-01", "../../testdata/e2e")
	if code != 1 {
		t.Fatalf("e2e: exit %d: %s", code, stderr)
	}
	read("e2e", out, stdout)
	out = filepath.Join(t.TempDir(), "bad")
	code, _, stderr = captureRun(t, "run", "--quiet", "--spec", "../../testdata/bad/specs/corpus.yaml", "--out", out, "--report-date", "2026-12-01", "../../testdata/bad")
	if code != 1 {
		t.Fatalf("bad corpus: exit %d: %s", code, stderr)
	}
	read("bad corpus", out, "")
	dir := t.TempDir()
	code, _, stderr = captureRun(t, "demo", "--out", dir, "--units", "12", "--report-date", "2026-12-01")
	if code != 0 {
		t.Fatalf("demo: exit %d: %s", code, stderr)
	}
	read("demo", filepath.Join(dir, "report"), "")
	return runs
}

// units.jsonl holds, line by line, exactly the objects of results.json's
// units array, in order; steps.csv holds one row per step of every unit
// (one row for a unit without steps) with the same values as results.json
// under a header naming each metric's unit.
func TestTablesMatchResults(t *testing.T) {
	for _, c := range outputRuns(t) {
		t.Run(c.name, func(t *testing.T) {
			var res struct {
				MetricUnits map[string]*string `json:"metric_units"`
				Units       []json.RawMessage  `json:"units"`
			}
			if err := json.Unmarshal(c.files[report.JSONName], &res); err != nil {
				t.Fatal(err)
			}
			checkUnitsLines(t, res.Units, c.files[report.UnitsName])
			checkStepsCSV(t, res.MetricUnits, res.Units, c.files[report.StepsName])
		})
	}
}

// checkUnitsLines compares units.jsonl with the units of results.json,
// byte for byte once the indentation is removed.
func checkUnitsLines(t *testing.T, units []json.RawMessage, jsonl []byte) {
	t.Helper()
	sc := bufio.NewScanner(bytes.NewReader(jsonl))
	sc.Buffer(nil, 1<<26)
	i := 0
	for sc.Scan() {
		if i >= len(units) {
			t.Fatalf("units.jsonl has more lines than results.json has units (%d)", len(units))
		}
		var want bytes.Buffer
		if err := json.Compact(&want, units[i]); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(sc.Bytes(), want.Bytes()) {
			t.Errorf("units.jsonl line %d differs from units[%d]:\n got %.200s\nwant %.200s", i+1, i, sc.Bytes(), want.Bytes())
		}
		i++
	}
	if i != len(units) || len(units) == 0 {
		t.Errorf("units.jsonl has %d lines, results.json %d units", i, len(units))
	}
}

// checkStepsCSV compares steps.csv with the units of results.json.
func checkStepsCSV(t *testing.T, unitsOf map[string]*string, units []json.RawMessage, data []byte) {
	t.Helper()
	if !bytes.HasSuffix(data, []byte("\r\n")) {
		t.Error("steps.csv lines do not end in CRLF (RFC 4180 §2)")
	}
	r := csv.NewReader(bytes.NewReader(data))
	rows, err := r.ReadAll()
	if err != nil {
		t.Fatalf("steps.csv: %v", err)
	}
	head := rows[0]
	col := map[string]int{}
	for i, h := range head {
		name, unit, _ := strings.Cut(strings.TrimSuffix(h, ")"), " (")
		col[name] = i
		if u, ok := unitsOf[name]; ok && ((u == nil) != (unit == "") || (u != nil && *u != unit)) {
			t.Errorf("header %q: results.json gives the unit %v", h, u)
		}
	}
	rows = rows[1:]
	n := 0
	for _, raw := range units {
		var u struct {
			Unit, File, Verdict string
			Steps               []struct {
				Index   int                        `json:"index"`
				Axis    string                     `json:"axis"`
				StartS  json.Number                `json:"start_s"`
				Verdict string                     `json:"verdict"`
				Metrics map[string]json.RawMessage `json:"metrics"`
			}
		}
		if err := json.Unmarshal(raw, &u); err != nil {
			t.Fatal(err)
		}
		want := max(1, len(u.Steps))
		for j := range want {
			if n >= len(rows) {
				t.Fatalf("steps.csv ends at unit %q", u.Unit)
			}
			row := rows[n]
			n++
			if row[col["unit"]] != u.Unit || row[col["file"]] != u.File || row[col["unit_verdict"]] != u.Verdict {
				t.Errorf("row %d: unit %q %q %q, want %q %q %q", n, row[col["unit"]], row[col["file"]], row[col["unit_verdict"]], u.Unit, u.File, u.Verdict)
			}
			if len(u.Steps) == 0 {
				if row[col["step"]] != "" {
					t.Errorf("row %d: unit %q has no steps but step %q", n, u.Unit, row[col["step"]])
				}
				continue
			}
			s := u.Steps[j]
			if row[col["step"]] != strconv.Itoa(s.Index) || row[col["axis"]] != s.Axis || row[col["start_s"]] != string(s.StartS) || row[col["step_verdict"]] != s.Verdict {
				t.Errorf("row %d: step %q at %q %q, want %d at %s %s", n, row[col["step"]], row[col["start_s"]], row[col["step_verdict"]], s.Index, s.StartS, s.Verdict)
			}
			if len(s.Metrics) == 0 {
				t.Fatalf("unit %q step %d has no metrics", u.Unit, s.Index)
			}
			for m, v := range s.Metrics {
				i, ok := col[m]
				if !ok {
					t.Fatalf("steps.csv has no column for %s", m)
				}
				if w := string(v); (w == "null" && row[i] != "") || (w != "null" && row[i] != w) {
					t.Errorf("row %d %s: %q, results.json %s", n, m, row[i], w)
				}
			}
		}
	}
	if n != len(rows) {
		t.Errorf("steps.csv has %d rows, results.json %d steps", len(rows), n)
	}
}
