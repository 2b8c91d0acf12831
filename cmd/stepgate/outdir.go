package main

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"time"

	"github.com/stepgate/stepgate/acceptance/report"
)

// checkOutDir refuses, before any log is read, an output directory that
// cannot be one: an existing file, or a path under a file. The directory
// itself is made only when the reports are written.
func checkOutDir(out, outAbs string) error {
	for p := outAbs; ; p = filepath.Dir(p) {
		st, err := os.Stat(p)
		switch {
		case err == nil && !st.IsDir():
			return fmt.Errorf("--out %s: %s is a file, not a directory", out, p)
		case err == nil:
			return nil
		case !errors.Is(err, fs.ErrNotExist) && !errors.Is(err, syscall.ENOTDIR):
			return fmt.Errorf("--out %s: %w", out, err)
		}
		if filepath.Dir(p) == p {
			return nil
		}
	}
}

// checkOutNotInput refuses an output directory that is one of the input
// directories: the reports would be written among the logs being judged.
// An output directory inside an input directory is allowed; the search
// skips it.
func checkOutNotInput(out, outAbs string, args []string) error {
	realOut, err := filepath.EvalSymlinks(outAbs)
	if err != nil {
		return nil // not made yet: it cannot be an input directory
	}
	for _, a := range args {
		st, err := os.Stat(a)
		if err != nil || !st.IsDir() {
			continue
		}
		realIn, err := filepath.EvalSymlinks(a)
		if err != nil {
			continue
		}
		if abs, err := filepath.Abs(realIn); err == nil && abs == realOut {
			return fmt.Errorf("--out %s is the input directory %s: %w; write the reports to another directory", out, a, report.ErrOutputInsideInput)
		}
	}
	return nil
}

// ErrReportsPresent is returned when the output directory already holds
// reports and the run was not told to replace them.
var ErrReportsPresent = errors.New("already holds reports")

// checkNoReports refuses an output directory that holds any report a run
// writes: a signed report is never replaced silently. The message names
// the reports and the two ways on.
func checkNoReports(out string) error {
	var found []string
	for _, n := range report.Names {
		// A directory in a report's place is no report; writing refuses it
		// with its own message.
		if st, err := os.Lstat(filepath.Join(out, n)); err == nil && !st.IsDir() {
			found = append(found, n)
		}
	}
	if len(found) == 0 {
		return nil
	}
	return fmt.Errorf("--out %s %w (%s); nothing was changed: give --force to replace them, or write to another directory",
		out, ErrReportsPresent, strings.Join(found, ", "))
}

// newestFileDate is the UTC date (YYYY-MM-DD) of the newest modification
// time among files, or "" when none can be read.
func newestFileDate(files []string) string {
	var newest time.Time
	for _, p := range files {
		if st, err := os.Stat(p); err == nil && st.ModTime().After(newest) {
			newest = st.ModTime()
		}
	}
	if newest.IsZero() {
		return ""
	}
	return newest.UTC().Format("2006-01-02")
}

// reportDate resolves the date the reports carry: the flag, else
// SOURCE_DATE_EPOCH, else "" (the batch then takes the newest test date).
func reportDate(flag string) (string, error) {
	if flag != "" {
		if _, err := time.Parse("2006-01-02", flag); err != nil {
			return "", fmt.Errorf("--report-date %q: want YYYY-MM-DD", flag)
		}
		return flag, nil
	}
	if s := os.Getenv("SOURCE_DATE_EPOCH"); s != "" {
		var sec int64
		if _, err := fmt.Sscan(s, &sec); err != nil {
			return "", fmt.Errorf("SOURCE_DATE_EPOCH %q: want seconds since 1970", s)
		}
		return time.Unix(sec, 0).UTC().Format("2006-01-02"), nil
	}
	return "", nil
}
