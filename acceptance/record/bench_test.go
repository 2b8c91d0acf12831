package record

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"syscall"
	"testing"
	"time"
)

// cpuTime is the CPU time (user and system) the process has used: on a
// shared machine a steadier figure than the wall clock.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// Benchmarks of the SQLite record at line scale; run with
//
//	go test -run '^$' -bench . -benchtime 3x ./acceptance/record
//
// Each unit has three steps of eleven metrics (with a prediction and a gap
// each) and four checks, as the demo line's units do.

// benchUnits builds n units of one run, numbered from first.
func benchUnits(n, first int, start time.Time) []Unit {
	units := make([]Unit, n)
	for i := range units {
		k := first + i
		u := testUnit(fmt.Sprintf("VD25-%07d", k), k, start.Add(time.Duration(k)*20*time.Second))
		u.Lot = fmt.Sprintf("L-%03d", k/2000)
		units[i] = u
	}
	return units
}

// BenchmarkRecordRun5000 records a run of 5,000 units into a new SQLite
// file, in one transaction.
func BenchmarkRecordRun5000(b *testing.B) {
	benchRecord(b, func(i int) string { return filepath.Join(b.TempDir(), fmt.Sprintf("bench%d.db", i)) })
}

// BenchmarkRecordRun5000Postgres is the same into the PostgreSQL test
// server (STEPGATE_TEST_POSTGRES), a schema of its own per run; the CPU
// time is the client's only.
func BenchmarkRecordRun5000Postgres(b *testing.B) {
	benchRecord(b, func(int) string { return freshPostgres(b) })
}

func benchRecord(b *testing.B, fresh func(i int) string) {
	const n = 5000
	units := benchUnits(n, 0, t0)
	ctx := context.Background()
	var took, cpu time.Duration
	for i := range b.N {
		b.StopTimer()
		s, err := Open(ctx, fresh(i))
		if err != nil {
			b.Fatal(err)
		}
		b.StartTimer()
		start, cpu0 := time.Now(), cpuTime()
		res, err := s.RecordRun(ctx, testRun(t0), testSpec("A"), units)
		took, cpu = took+time.Since(start), cpu+cpuTime()-cpu0
		if err != nil || res.Recorded != n {
			b.Fatalf("%+v, %v", res, err)
		}
		b.StopTimer()
		s.Close()
		b.StartTimer()
	}
	b.ReportMetric(float64(n*b.N)/took.Seconds(), "units/s")
	b.ReportMetric(took.Seconds()/float64(b.N)*1e6/n, "µs/unit")
	b.ReportMetric(cpu.Seconds()/float64(b.N), "cpu-s/run")
}

// trendStores keeps the recorded databases between the calls testing makes
// of a benchmark function (recording 100,000 units takes a minute).
var trendStores = map[int]*Store{}

// trendStore returns a SQLite record of total units of one spec, recorded
// in runs of 5,000.
func trendStore(b *testing.B, total int) *Store {
	if s := trendStores[total]; s != nil {
		return s
	}
	const perRun = 5000
	ctx := context.Background()
	dir, err := os.MkdirTemp("", "stepgate-trend-bench")
	if err != nil {
		b.Fatal(err)
	}
	s, err := Open(ctx, filepath.Join(dir, "trend.db"))
	if err != nil {
		b.Fatal(err)
	}
	setup := time.Now()
	for first := 0; first < total; first += perRun {
		if _, err := s.RecordRun(ctx, testRun(t0), testSpec("A"), benchUnits(min(perRun, total-first), first, t0)); err != nil {
			b.Fatal(err)
		}
	}
	b.Logf("recorded %d units in %v (%s)", total, time.Since(setup).Round(time.Millisecond), dir)
	trendStores[total] = s
	return s
}

// BenchmarkTrend100k streams 100,000 recorded units of one spec, with the
// four limited metrics of every step, as a trend over them reads them.
func BenchmarkTrend100k(b *testing.B) { benchTrend(b, 100_000, false) }

// BenchmarkTrend100kMeasured is the same with measured values only, as the
// control charts read them (no predictions or gaps).
func BenchmarkTrend100kMeasured(b *testing.B) { benchTrend(b, 100_000, true) }

// BenchmarkTrend20k is the same over 20,000 units, to show how the time grows.
func BenchmarkTrend20k(b *testing.B) { benchTrend(b, 20_000, false) }

func benchTrend(b *testing.B, total int, measuredOnly bool) {
	s := trendStore(b, total)
	ctx := context.Background()
	f := Filter{SpecID: "VD25-EOL", Steps: true, MeasuredOnly: measuredOnly,
		Metrics: []string{"rise_time_s", "overshoot_pct", "settling_time_s", "steady_state_error"}}
	b.ResetTimer()
	var took, cpu time.Duration
	for range b.N {
		start, cpu0 := time.Now(), cpuTime()
		units, values := 0, 0
		err := s.Units(ctx, f, func(a Attempt) error {
			units++
			for _, st := range a.Unit.Steps {
				values += len(st.Metrics)
			}
			return nil
		})
		took, cpu = took+time.Since(start), cpu+cpuTime()-cpu0
		if err != nil || units != total || values != total*3*4 {
			b.Fatalf("%d units, %d values, %v", units, values, err)
		}
	}
	b.ReportMetric(took.Seconds()/float64(b.N), "s/trend")
	b.ReportMetric(float64(total*b.N)/took.Seconds(), "units/s")
	b.ReportMetric(cpu.Seconds()/float64(b.N), "cpu-s/trend")
}

// TestMain removes the benchmarks' databases.
func TestMain(m *testing.M) {
	code := m.Run()
	for _, s := range trendStores {
		var path string
		s.db.QueryRow("SELECT file FROM pragma_database_list WHERE name = 'main'").Scan(&path)
		s.Close()
		if path != "" {
			os.RemoveAll(filepath.Dir(path))
		}
	}
	os.Exit(code)
}
