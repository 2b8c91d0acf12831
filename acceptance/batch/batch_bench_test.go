package batch_test

import (
	"context"
	"path/filepath"
	"testing"

	"github.com/stepgate/stepgate/acceptance/batch"
	"github.com/stepgate/stepgate/acceptance/demo"
	"github.com/stepgate/stepgate/acceptance/logs"
	"github.com/stepgate/stepgate/acceptance/report"
	"github.com/stepgate/stepgate/acceptance/spec"
)

// benchBatch writes n demo units of 6 s (three steps at 1 kHz) once per
// benchmark or test and returns the spec, the files and their bytes.
func benchBatch(b testing.TB, n int) (*spec.Spec, []string, int64) {
	b.Helper()
	dir := b.TempDir()
	specPath, logDir, err := demo.Write(dir, demo.Options{Units: n, Duration: 6})
	if err != nil {
		b.Fatal(err)
	}
	spec, err := spec.Load(specPath)
	if err != nil {
		b.Fatal(err)
	}
	files, err := logs.FindLogs([]string{logDir}, nil)
	if err != nil {
		b.Fatal(err)
	}
	var size int64
	for _, f := range files {
		lg, err := logs.ReadFile(f, spec.Format())
		if err == nil {
			size += lg.Size
		}
	}
	return spec, files, size
}

// BenchmarkRun measures a full batch of 200 units, reports included; the
// bytes per operation are the log bytes, so -bench reports MB/s of logs.
func BenchmarkRun(b *testing.B) {
	spec, files, size := benchBatch(b, 200)
	out := filepath.Join(b.TempDir(), "out")
	b.SetBytes(size)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		judged, recs, err := batch.Run(context.Background(), spec, files, batch.Options{ReportDate: "2026-12-01", Traces: batch.KeepPageTraces})
		if err != nil {
			b.Fatal(err)
		}
		if _, err := report.WriteAll(context.Background(), out, judged, recs, report.Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkRunNoReports measures reading, measuring and judging only.
func BenchmarkRunNoReports(b *testing.B) {
	spec, files, size := benchBatch(b, 200)
	b.SetBytes(size)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, _, err := batch.Run(context.Background(), spec, files, batch.Options{ReportDate: "2026-12-01", Traces: batch.KeepNoTraces}); err != nil {
			b.Fatal(err)
		}
	}
}
