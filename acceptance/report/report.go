package report

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sync"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/csvreport"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/acceptance/report/jsonreport"
	"github.com/stepgate/stepgate/acceptance/report/pdfreport"
	"github.com/stepgate/stepgate/acceptance/report/xlsxreport"
)

// File names written in the output directory.
const (
	JSONName  = "results.json"
	UnitsName = "units.jsonl"
	StepsName = "steps.csv"
	XLSXName  = "report.xlsx"
	PDFName   = "report.pdf"
)

// Names are the files WriteAll writes, in the order it renames them into
// place.
var Names = []string{JSONName, UnitsName, StepsName, XLSXName, PDFName}

// Options control the reports.
type Options struct {
	PDF pdfreport.Options
}

// WriteAll writes the reports of batch b into dir (created if missing):
// results.json, units.jsonl, steps.csv, report.xlsx and report.pdf
// (Names). It digests the batch once and hands the digest to every writer;
// the PDF's unit pages draw the records traces gives (the *batch.Records
// the run returned; nil draws none). Each report is written to a
// temporary file in dir; only when all of them are complete, flushed and
// synced, and ctx is still live, are they renamed to their final names,
// one after the other. Once ctx is cancelled (an interrupted run) it
// renames nothing: the final names keep the previous run's reports, or
// stay absent. On every error, including a cancellation, a failed write (a
// full disk) or a panic in a report writer, the temporary files are
// removed and the error says which report and directory.
func WriteAll(ctx context.Context, dir string, b *acceptance.Batch, traces digest.TraceStore, o Options) (paths []string, err error) {
	if err := interrupted(ctx); err != nil {
		return nil, err
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("output directory %s: %w", dir, err)
	}
	d, err := digest.New(b)
	if err != nil {
		return nil, fmt.Errorf("reports: %w", err)
	}
	writers := []struct {
		name  string
		write func(io.Writer) error
	}{
		{JSONName, func(w io.Writer) error { return jsonreport.Write(w, d) }},
		{UnitsName, func(w io.Writer) error { return jsonreport.WriteUnits(w, d) }},
		{StepsName, func(w io.Writer) error { return csvreport.Write(w, d) }},
		{XLSXName, func(w io.Writer) error { return xlsxreport.Write(w, d) }},
		{PDFName, func(w io.Writer) error { return pdfreport.Write(w, d, traces, o.PDF) }},
	}
	// The reports are written at the same time, each to its own
	// temporary file; they only read the batch and its digest.
	temps := make([]string, len(writers))
	errs := make([]error, len(writers))
	defer func() {
		if err != nil {
			for _, t := range temps {
				if t != "" {
					os.Remove(t)
				}
			}
		}
	}()
	var wg sync.WaitGroup
	for i, wr := range writers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			defer func() {
				if r := recover(); r != nil {
					errs[i] = fmt.Errorf("writing %s in %s: internal error: %v", wr.name, dir, r)
				}
			}()
			if err := interrupted(ctx); err != nil {
				errs[i] = err
				return
			}
			errs[i] = writeTemp(ctx, dir, wr.name, wr.write, &temps[i])
		}()
	}
	wg.Wait()
	for _, e := range errs {
		if e != nil {
			return nil, e
		}
	}
	// The last point at which an interruption is obeyed: from here the
	// renames run to the end, so the final names never mix two runs'
	// reports because of a signal.
	if err := interrupted(ctx); err != nil {
		return nil, err
	}
	// A final name taken by a directory would fail its rename after the
	// others had succeeded; refuse before renaming any.
	for _, wr := range writers {
		final := filepath.Join(dir, wr.name)
		if st, serr := os.Lstat(final); serr == nil && st.IsDir() {
			return nil, fmt.Errorf("%s is a directory; cannot replace it with the report", final)
		}
	}
	for i, wr := range writers {
		final := filepath.Join(dir, wr.name)
		if rerr := os.Rename(temps[i], final); rerr != nil {
			return nil, fmt.Errorf("%s: %w", final, rerr)
		}
		paths = append(paths, final)
	}
	syncDir(dir)
	return paths, nil
}

// interrupted returns an error when ctx is done, naming its cause.
func interrupted(ctx context.Context) error {
	if ctx.Err() == nil {
		return nil
	}
	return fmt.Errorf("interrupted (%w); no report written", context.Cause(ctx))
}

// ctxWriter fails every write once its context is done, so that a report
// being written stops at its next write after an interruption.
type ctxWriter struct {
	ctx context.Context
	w   io.Writer
}

func (c ctxWriter) Write(p []byte) (int, error) {
	if err := c.ctx.Err(); err != nil {
		return 0, context.Cause(c.ctx)
	}
	return c.w.Write(p)
}

// writeTemp writes one report to a new temporary file next to its final name
// and syncs it. The temporary file's name is stored in *temp as soon as it
// exists, so that the caller removes it on any later failure.
func writeTemp(ctx context.Context, dir, name string, write func(io.Writer) error, temp *string) error {
	f, err := os.CreateTemp(dir, "."+name+".tmp-*")
	if err != nil {
		return fmt.Errorf("output directory %s: cannot create %s: %w", dir, name, err)
	}
	*temp = f.Name()
	// CreateTemp makes the file private; reports are ordinary documents.
	if err := f.Chmod(0o644); err != nil {
		f.Close()
		return fmt.Errorf("output directory %s: %s: %w", dir, name, err)
	}
	closed := false
	defer func() {
		if !closed {
			f.Close()
		}
	}()
	bw := bufio.NewWriterSize(ctxWriter{ctx, f}, 1<<16)
	err = write(bw)
	if err == nil {
		err = bw.Flush()
	}
	if err == nil {
		err = f.Sync()
	}
	closed = true
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		if ctx.Err() != nil {
			return fmt.Errorf("writing %s in %s: interrupted (%w); no report written", name, dir, context.Cause(ctx))
		}
		return fmt.Errorf("writing %s in %s: %w", name, dir, err)
	}
	return nil
}

// syncDir flushes the directory entry of the renamed reports to disk where
// the system supports it; a failure leaves the reports in place and is not
// an error.
func syncDir(dir string) {
	if d, err := os.Open(dir); err == nil {
		d.Sync()
		d.Close()
	}
}

// ErrOutputInsideInput is returned when the output directory lies inside an
// input directory being searched.
var ErrOutputInsideInput = errors.New("output directory lies inside an input directory")
