// Package report owns putting a batch's reports on disk: results.json,
// report.xlsx and report.pdf, each written to a temporary file in the output
// directory and renamed into place only when every report is complete, so a
// reader never sees a torn or partial report under a final name.
package report

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/jsonreport"
	"github.com/stepgate/stepgate/acceptance/report/pdfreport"
	"github.com/stepgate/stepgate/acceptance/report/xlsxreport"
)

// File names written in the output directory.
const (
	JSONName = "results.json"
	XLSXName = "report.xlsx"
	PDFName  = "report.pdf"
)

// Options control the reports.
type Options struct {
	PDF pdfreport.Options
}

// WriteAll writes the three reports into dir (created if missing). On any
// error no final name is touched and the temporary files are removed.
func WriteAll(dir string, b *acceptance.Batch, o Options) (paths []string, err error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("output directory %s: %w", dir, err)
	}
	writers := []struct {
		name  string
		write func(io.Writer) error
	}{
		{JSONName, func(w io.Writer) error { return jsonreport.Write(w, b) }},
		{XLSXName, func(w io.Writer) error { return xlsxreport.Write(w, b) }},
		{PDFName, func(w io.Writer) error { return pdfreport.Write(w, b, o.PDF) }},
	}
	var temps []string
	defer func() {
		if err != nil {
			for _, t := range temps {
				os.Remove(t)
			}
		}
	}()
	for _, wr := range writers {
		tmp, werr := writeTemp(dir, wr.name, wr.write)
		if tmp != "" {
			temps = append(temps, tmp)
		}
		if werr != nil {
			return nil, werr
		}
	}
	for i, wr := range writers {
		final := filepath.Join(dir, wr.name)
		if rerr := os.Rename(temps[i], final); rerr != nil {
			return nil, fmt.Errorf("%s: %w", final, rerr)
		}
		paths = append(paths, final)
	}
	return paths, nil
}

// writeTemp writes one report to a new temporary file next to its final name
// and syncs it.
func writeTemp(dir, name string, write func(io.Writer) error) (string, error) {
	f, err := os.CreateTemp(dir, "."+name+".tmp-*")
	if err != nil {
		return "", fmt.Errorf("output directory %s: cannot create %s: %w", dir, name, err)
	}
	tmp := f.Name()
	// CreateTemp makes the file private; reports are ordinary documents.
	if err := f.Chmod(0o644); err != nil {
		f.Close()
		return tmp, fmt.Errorf("output directory %s: %s: %w", dir, name, err)
	}
	bw := bufio.NewWriterSize(f, 1<<16)
	err = write(bw)
	if err == nil {
		err = bw.Flush()
	}
	if err == nil {
		err = f.Sync()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return tmp, fmt.Errorf("writing %s in %s: %w", name, dir, err)
	}
	return tmp, nil
}

// ErrOutputInsideInput is returned when the output directory lies inside an
// input directory being searched.
var ErrOutputInsideInput = errors.New("output directory lies inside an input directory")
