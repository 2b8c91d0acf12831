package main

import (
	"bufio"
	"context"
	"database/sql"
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"

	"github.com/stepgate/stepgate/acceptance/record"
)

// The line record's tests run against both backends: a SQLite file, and the
// PostgreSQL server named by STEPGATE_TEST_POSTGRES (.ci/run starts one and
// sets STEPGATE_REQUIRE_POSTGRES=1, where a missing server fails).
var recordBackends = []struct {
	name  string
	fresh func(t *testing.T) string
}{
	{"sqlite", func(t *testing.T) string { return filepath.Join(t.TempDir(), "line.db") }},
	{"postgres", freshPostgresRecord},
}

// freshPostgresRecord returns a URL of an empty schema of its own on the
// test server, dropped when the test ends; without a server it skips,
// unless STEPGATE_REQUIRE_POSTGRES=1.
func freshPostgresRecord(t *testing.T) string {
	base := os.Getenv("STEPGATE_TEST_POSTGRES")
	if base == "" {
		if os.Getenv("STEPGATE_REQUIRE_POSTGRES") == "1" {
			t.Fatal("STEPGATE_REQUIRE_POSTGRES=1 but STEPGATE_TEST_POSTGRES is not set")
		}
		t.Skip("PostgreSQL tests skipped: STEPGATE_TEST_POSTGRES is not set")
	}
	u, err := url.Parse(base)
	if err != nil {
		t.Fatal(err)
	}
	schema := fmt.Sprintf("cli_%d_%08x", os.Getpid(), rand.Uint32())
	db, err := sql.Open("pgx", base)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := db.Exec("CREATE SCHEMA " + schema); err != nil {
		db.Close()
		t.Fatalf("creating a test schema: %v", err)
	}
	t.Cleanup(func() {
		db.Exec("DROP SCHEMA " + schema + " CASCADE")
		db.Close()
	})
	q := u.Query()
	q.Set("search_path", schema)
	u.RawQuery = q.Encode()
	return u.String()
}

// summaryOf reads results.json's summary and units' attempts.
func summaryOf(t *testing.T, dir string) (map[string]any, []map[string]any) {
	t.Helper()
	data, err := os.ReadFile(filepath.Join(dir, "results.json"))
	if err != nil {
		t.Fatal(err)
	}
	var r struct {
		Summary map[string]any   `json:"summary"`
		Units   []map[string]any `json:"units"`
	}
	if err := json.Unmarshal(data, &r); err != nil {
		t.Fatal(err)
	}
	return r.Summary, r.Units
}

// A unit fails in one run and passes in a later one: the record supplies
// the first attempt, so the second run numbers its file attempt 2 of 2,
// with first-pass yield 0 % and final yield 100 % (common-practice
// definitions, common practice, no source). Recording the same file again
// adds nothing; history lists both attempts.
func TestRunRecordAcrossRuns(t *testing.T) {
	bad := "../../testdata/bad"
	spec := filepath.Join(bad, "specs", "corpus.yaml")
	for _, be := range recordBackends {
		t.Run(be.name, func(t *testing.T) {
			dsn := be.fresh(t)
			out1, out2 := t.TempDir(), t.TempDir()
			if code, _, stderr := captureRun(t, "run", "--quiet", "--spec", spec, "--out", out1, "--record", dsn, "--operator", "tester", filepath.Join(bad, "retest_1.csv")); code != 1 {
				t.Fatalf("first run: exit %d, want 1; %s", code, stderr)
			}
			for range 2 { // the second time, nothing new is recorded
				// --force: the second time replaces the first time's reports.
				code, stdout, stderr := captureRun(t, "run", "--force", "--spec", spec, "--out", out2, "--record", dsn, filepath.Join(bad, "retest_2.csv"))
				if code != 0 {
					t.Fatalf("retest: exit %d, want 0; %s", code, stderr)
				}
				if !strings.Contains(stdout, "in the line record") {
					t.Errorf("no recording line: %s", stdout)
				}
				sum, units := summaryOf(t, out2)
				if sum["first_pass_yield_pct"] != 0.0 || sum["final_yield_pct"] != 100.0 || sum["retested"] != 1.0 || units[0]["attempt"] != 2.0 || units[0]["attempts"] != 2.0 {
					t.Errorf("summary %v, unit attempt %v of %v; want 0 %%, 100 %%, 1 retested, attempt 2 of 2", sum, units[0]["attempt"], units[0]["attempts"])
				}
			}
			code, stdout, stderr := captureRun(t, "history", "RETEST-0001", "--record", dsn, "--json")
			if code != 0 {
				t.Fatalf("history: exit %d; %s", code, stderr)
			}
			var h historyJSON
			if err := json.Unmarshal([]byte(stdout), &h); err != nil {
				t.Fatalf("history --json: %v\n%s", err, stdout)
			}
			if len(h.Attempts) != 2 || h.Attempts[0].Verdict != "fail" || h.Attempts[1].Verdict != "pass" || h.Disposition == nil || *h.Disposition != "pass" || h.Attempts[0].Station != "RIG-1" {
				t.Errorf("history %+v", h)
			}
			if _, stdout, _ := captureRun(t, "history", "RETEST-0001", "--record", dsn); !strings.Contains(stdout, "2 attempt(s); disposition (latest attempt): pass") {
				t.Errorf("history table:\n%s", stdout)
			}
		})
	}
}

// The keys of history --json are a contract.
func TestHistoryJSONKeys(t *testing.T) {
	started := "2026-11-30T06:00:00Z"
	h := historyJSON{Serial: "S", Attempts: []historyAttempt{{Attempt: 1, StartedAt: &started}}}
	data, _ := json.Marshal(h)
	for _, k := range []string{`"serial"`, `"attempts"`, `"disposition"`, `"attempt"`, `"started_at"`, `"recorded_at"`, `"file"`, `"sha256"`,
		`"spec_id"`, `"revision"`, `"station"`, `"operator"`, `"lot"`, `"shift"`, `"verdict"`, `"reasons"`, `"report_id"`} {
		if !strings.Contains(string(data), k) {
			t.Errorf("history --json lacks %s: %s", k, data)
		}
	}
}

// A record that cannot be written ends the run with status 3 after the
// reports are written; history of a record that does not exist is a usage
// error and creates nothing.
func TestRecordErrors(t *testing.T) {
	out := t.TempDir()
	missing := filepath.Join(t.TempDir(), "no", "such", "dir", "line.db")
	code, _, stderr := captureRun(t, "run", "--quiet", "--spec", "../../testdata/bad/specs/corpus.yaml", "--out", out, "--record", missing, "../../testdata/bad/good.csv")
	if code != exitRecord || !strings.Contains(stderr, "the reports were written, but the line record") {
		t.Errorf("exit %d, stderr %q; want %d and the record's error", code, stderr, exitRecord)
	}
	for _, n := range reportNames {
		if _, err := os.Stat(filepath.Join(out, n)); err != nil {
			t.Errorf("report %s not written: %v", n, err)
		}
	}
	nowhere := filepath.Join(t.TempDir(), "line.db")
	if code, _, stderr := captureRun(t, "history", "X", "--record", nowhere); code != 2 || !strings.Contains(stderr, "--record") {
		t.Errorf("history of a missing record: exit %d, %q", code, stderr)
	}
	if _, err := os.Stat(nowhere); err == nil {
		t.Errorf("history created %s", nowhere)
	}
}

// A run killed (SIGKILL) while it records leaves the record as it was or
// complete, never part of a run: the built binary is killed as soon as it
// has written its reports, when the recording starts.
func TestRunKilledMidRecord(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the binary and a 600-unit line")
	}
	tmp := t.TempDir()
	bin := buildStepgate(t, tmp)
	specPath, _, logs := demoLine(t, tmp, 600)
	dsn := filepath.Join(tmp, "line.db")
	cmd := exec.Command(bin, "run", "--spec", specPath, "--out", filepath.Join(tmp, "out"), "--record", dsn, logs)
	stdout, _ := cmd.StdoutPipe()
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	sc := bufio.NewScanner(stdout)
	for sc.Scan() {
		if strings.HasSuffix(sc.Text(), "report.pdf") { // the last report: recording begins
			cmd.Process.Signal(syscall.SIGKILL)
			break
		}
	}
	cmd.Wait()
	st, err := record.Open(context.Background(), dsn)
	if err != nil {
		t.Fatalf("opening the record after the kill: %v", err)
	}
	defer st.Close()
	n := 0
	if err := st.Units(context.Background(), record.Filter{}, func(record.Attempt) error { n++; return nil }); err != nil {
		t.Fatal(err)
	}
	if n != 0 && n != 600 {
		t.Errorf("the record holds %d attempts after a kill mid-record, want 0 (as before) or 600 (complete)", n)
	}
	t.Logf("after the kill the record holds %d of 600 attempts", n)
}
