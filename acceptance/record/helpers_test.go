package record

import (
	"context"
	"database/sql"
	"fmt"
	"math/rand/v2"
	"net/url"
	"os"
	"path/filepath"
	"testing"
	"time"
)

// The same tests run against both backends: a SQLite file in a temporary
// folder, and a PostgreSQL server named by STEPGATE_TEST_POSTGRES (see
// .ci/pgtest), each test in a schema of its own.

const (
	envPostgres        = "STEPGATE_TEST_POSTGRES"
	envRequirePostgres = "STEPGATE_REQUIRE_POSTGRES"
)

// backend makes fresh, empty databases of one kind for a test.
type backend struct {
	name  string
	fresh func(t testing.TB) string // a DSN of an empty database, removed when the test ends
}

var backends = []backend{
	{name: "sqlite", fresh: freshSQLite},
	{name: "postgres", fresh: freshPostgres},
}

// eachBackend runs fn as a subtest per backend.
func eachBackend(t *testing.T, fn func(t *testing.T, b backend)) {
	for _, b := range backends {
		t.Run(b.name, func(t *testing.T) { fn(t, b) })
	}
}

func freshSQLite(t testing.TB) string {
	return filepath.Join(t.TempDir(), "record.db")
}

// freshPostgres creates a schema of its own on the test server and returns
// a URL whose search_path is that schema. Without a server it skips, unless
// STEPGATE_REQUIRE_POSTGRES=1 (CI), where it fails.
func freshPostgres(t testing.TB) string {
	base := os.Getenv(envPostgres)
	if base == "" {
		if os.Getenv(envRequirePostgres) == "1" {
			t.Fatalf("%s=1 but %s is not set: start a server with .ci/pgtest", envRequirePostgres, envPostgres)
		}
		t.Skipf("PostgreSQL tests skipped: %s is not set (start a server with .ci/pgtest start DIR)", envPostgres)
	}
	u, err := url.Parse(base)
	if err != nil {
		t.Fatalf("%s: %v", envPostgres, err)
	}
	schema := fmt.Sprintf("t_%d_%08x", os.Getpid(), rand.Uint32())
	db, err := sql.Open("pgx", base)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := db.Exec("CREATE SCHEMA " + schema); err != nil {
		db.Close()
		t.Fatalf("PostgreSQL at %s: creating a test schema: %v", u.Redacted(), err)
	}
	t.Cleanup(func() {
		if _, err := db.Exec("DROP SCHEMA " + schema + " CASCADE"); err != nil {
			t.Errorf("dropping test schema %s: %v", schema, err)
		}
		db.Close()
	})
	q := u.Query()
	q.Set("search_path", schema)
	u.RawQuery = q.Encode()
	return u.String()
}

func open(t testing.TB, dsn string) *Store {
	t.Helper()
	s, err := Open(context.Background(), dsn)
	if err != nil {
		t.Fatalf("Open: %v", err)
	}
	t.Cleanup(func() { s.Close() })
	return s
}

var t0 = time.Date(2026, 11, 30, 6, 0, 0, 0, time.UTC)

// testSpec is a spec as the batch would pass it.
func testSpec(rev string) Spec {
	text := "spec_id: VD25-EOL\nrevision: " + rev + "\n"
	return Spec{ID: "VD25-EOL", Revision: rev, SHA256: hexSHA256(text), Text: text}
}

func testRun(at time.Time) Run {
	return Run{Time: at, ToolVersion: "0.1.0-test", Options: []byte(`{"workers":2}`), RanBy: "qa", ReportID: "R-1"}
}

// metricNames are eleven step metrics, as stepgate measures them.
var metricNames = []string{"dead_time_s", "final_value", "initial_value", "overshoot_pct", "peak_time_s",
	"peak_value", "rise_time_s", "settling_time_s", "steady_state_error", "steady_state_error_pct", "step_size"}

// testUnit builds a unit with three steps of eleven metrics, four checks,
// a prediction and gaps; its file content (hash) depends on serial and n.
func testUnit(serial string, n int, start time.Time) Unit {
	u := Unit{
		Serial: serial, File: fmt.Sprintf("/line/logs/%s-%d.csv", serial, n),
		FileSHA256: hexSHA256(fmt.Sprintf("%s/%d", serial, n)), FileModTime: start.Add(7 * time.Second),
		Metadata: map[string]string{"serial": serial, "station": "EOL-2"},
		Station:  "EOL-2", Operator: "ana", Lot: "L1", Shift: "early", StartedAt: start, Verdict: Pass,
	}
	levels := [][2]float64{{0, 25}, {25, 0}, {0, 10}}
	for i, lv := range levels {
		u.Steps = append(u.Steps, testStep(i+1, lv, float64(n)))
	}
	return u
}

func testStep(index int, lv [2]float64, x float64) Step {
	st := Step{Index: index, StartS: 0.5 + float64(index), From: lv[0], To: lv[1], Verdict: Pass,
		Predicted: &Prediction{Kind: "realised"}}
	for j, name := range metricNames {
		v := x + float64(index)/10 + float64(j)/100
		st.Metrics = append(st.Metrics, Metric{Name: name, Value: Some(v)})
		st.Predicted.Metrics = append(st.Predicted.Metrics, Metric{Name: name, Value: Some(v * 0.9)})
		st.Gaps = append(st.Gaps, Metric{Name: name, Value: Some(v * 0.1)})
	}
	for _, name := range []string{"rise_time_s", "overshoot_pct", "settling_time_s", "steady_state_error"} {
		st.Checks = append(st.Checks, Check{Metric: name, Value: Some(x), Max: Some(x + 1), Verdict: Pass})
	}
	return st
}

// counts returns the number of rows of each table.
func counts(t testing.TB, s *Store) map[string]int {
	t.Helper()
	out := map[string]int{}
	for _, table := range []string{"run", "spec", "attempt", "step", "metric", "step_check"} {
		var n int
		if err := s.db.QueryRow("SELECT COUNT(*) FROM " + table).Scan(&n); err != nil {
			t.Fatalf("counting %s: %v", table, err)
		}
		out[table] = n
	}
	return out
}
