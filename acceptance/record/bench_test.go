package record

import (
	"context"
	"fmt"
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
	const n = 5000
	units := benchUnits(n, 0, t0)
	ctx := context.Background()
	var took, cpu time.Duration
	for i := range b.N {
		b.StopTimer()
		s, err := Open(ctx, filepath.Join(b.TempDir(), fmt.Sprintf("bench%d.db", i)))
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

// BenchmarkTrend100k streams 100,000 recorded units of one spec, with the
// four limited metrics of every step, as a trend over them reads them.
func BenchmarkTrend100k(b *testing.B) {
	const total, perRun = 100_000, 5000
	ctx := context.Background()
	path := filepath.Join(b.TempDir(), "trend.db")
	s, err := Open(ctx, path)
	if err != nil {
		b.Fatal(err)
	}
	defer s.Close()
	setup := time.Now()
	for first := 0; first < total; first += perRun {
		if _, err := s.RecordRun(ctx, testRun(t0), testSpec("A"), benchUnits(perRun, first, t0)); err != nil {
			b.Fatal(err)
		}
	}
	b.Logf("recorded %d units in %v", total, time.Since(setup).Round(time.Millisecond))
	f := Filter{SpecID: "VD25-EOL", Steps: true,
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
