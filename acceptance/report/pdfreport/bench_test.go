package pdfreport

import (
	"context"
	"io"
	"testing"

	"github.com/stepgate/stepgate/acceptance/batch"
	"github.com/stepgate/stepgate/acceptance/demo"
	"github.com/stepgate/stepgate/acceptance/logs"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/acceptance/spec"
)

// benchDigest judges n demo units of 6 s (three steps at 1 kHz) the way the
// command line does: only the records of the units that get a page are
// kept, and the PDF draws those pages from them.
func benchDigest(b testing.TB, n int) *digest.Digest {
	b.Helper()
	specPath, logDir, err := demo.Write(b.TempDir(), demo.Options{Units: n, Duration: 6})
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
	opts := batch.DefaultOptions()
	opts.ReportDate = "2026-12-01"
	judged, _, err := batch.Run(context.Background(), spec, files, opts)
	if err != nil {
		b.Fatal(err)
	}
	d, err := digest.New(judged)
	if err != nil {
		b.Fatal(err)
	}
	return d
}

// BenchmarkWritePDF writes the report of 800 demo units: a unit table of
// 800 rows and the detail pages of the 200 first units that did not pass.
func BenchmarkWritePDF(b *testing.B) {
	d := benchDigest(b, 800)
	if n := len(d.Batch.PageUnits(false)); n < 150 {
		b.Fatalf("%d unit pages, want the batch to fill about 200", n)
	}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if err := Write(io.Discard, d, keptTraces{}, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}
