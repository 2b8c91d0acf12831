package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"os/signal"
	"path/filepath"
	"runtime/debug"
	"runtime/pprof"
	"strings"
	"syscall"
	"time"
	"unicode/utf8"

	"github.com/spf13/cobra"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report"
	"github.com/stepgate/stepgate/acceptance/report/pdfreport"
	"github.com/stepgate/stepgate/acceptance/rigdata"
)

type runFlags struct {
	spec       string
	out        string
	workers    int
	allUnits   bool
	maxPages   int
	reportDate string
	quiet      bool
	verbose    bool
	cpuProfile string
	memProfile string
	timing     bool
}

func newRunCmd() *cobra.Command {
	var f runFlags
	cmd := &cobra.Command{
		Use:   "run --spec FILE --out DIR PATH...",
		Short: "Judge every log under PATH against the spec and write the reports",
		Example: `  stepgate run --spec vd25.yaml --out reports/2026-11-30 logs/
  stepgate run --spec vd25.yaml --out out --report-date 2026-12-01 a.csv b.csv`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runBatch(cmd.Context(), cmd.OutOrStdout(), cmd.ErrOrStderr(), f, args)
		},
	}
	fl := cmd.Flags()
	fl.StringVar(&f.spec, "spec", "", "acceptance spec (YAML)")
	fl.StringVar(&f.out, "out", "", "output directory for results.json, report.xlsx and report.pdf")
	fl.IntVar(&f.workers, "workers", 0, "concurrent workers (0: one per core)")
	fl.BoolVar(&f.allUnits, "all-units", false, "give every unit a page in the PDF, not only failing and invalid ones")
	fl.IntVar(&f.maxPages, "max-unit-pages", acceptance.MaxUnitPages, "most units with a detail page in the PDF (0: no limit); the XLSX and JSON hold every unit")
	fl.StringVar(&f.reportDate, "report-date", "", "date printed on the reports, YYYY-MM-DD (default: SOURCE_DATE_EPOCH, else the newest test date in the logs, else the newest modification date of the log files)")
	fl.BoolVar(&f.quiet, "quiet", false, "print nothing but errors")
	fl.BoolVar(&f.verbose, "verbose", false, "list every unit with all its reasons, and the run's timing on stderr")
	fl.StringVar(&f.cpuProfile, "cpu-profile", "", "write a CPU profile of the run to this file (for developers)")
	fl.StringVar(&f.memProfile, "mem-profile", "", "write a heap profile at the end of the run to this file (for developers)")
	fl.BoolVar(&f.timing, "timing", false, "print the run's timing on stderr, even with --quiet (for developers)")
	fl.MarkHidden("timing")
	fl.MarkHidden("cpu-profile")
	fl.MarkHidden("mem-profile")
	cmd.MarkFlagRequired("spec")
	cmd.MarkFlagRequired("out")
	return cmd
}

// runBatch is the run command's body.
func runBatch(ctx context.Context, stdout, stderr io.Writer, f runFlags, args []string) (err error) {
	if f.cpuProfile != "" {
		pf, perr := os.Create(f.cpuProfile)
		if perr != nil {
			return usageErr(fmt.Errorf("--cpu-profile: %w", perr))
		}
		pprof.StartCPUProfile(pf)
		defer func() { pprof.StopCPUProfile(); pf.Close() }()
	}
	if f.memProfile != "" {
		defer func() {
			if pf, perr := os.Create(f.memProfile); perr == nil {
				pprof.Lookup("allocs").WriteTo(pf, 0)
				pf.Close()
			}
		}()
	}
	if ctx == nil {
		ctx = context.Background()
	}
	// SIGINT and SIGTERM cancel the run from its start: the batch stops
	// taking files and no report is renamed into place. A second signal
	// ends the program at once (the default action is restored).
	ctx, stop := signal.NotifyContext(ctx, os.Interrupt, syscall.SIGTERM)
	defer stop()
	go func() {
		<-ctx.Done()
		stop()
	}()

	spec, err := acceptance.LoadSpec(f.spec)
	if err != nil {
		return usageErr(err)
	}
	date, err := reportDate(f.reportDate)
	if err != nil {
		return usageErr(err)
	}
	outAbs, err := filepath.Abs(f.out)
	if err != nil {
		return usageErr(fmt.Errorf("--out %s: %w", f.out, err))
	}
	if err := checkOutDir(f.out, outAbs); err != nil {
		return usageErr(err)
	}
	if err := checkOutNotInput(f.out, outAbs, args); err != nil {
		return usageErr(err)
	}
	// The output directory is skipped wherever a search meets it, so that
	// nothing stepgate or a user left there is read as a log.
	files, others, err := rigdata.FindLogsAndOthers(args, []string{outAbs})
	if err != nil {
		return usageErr(err)
	}
	if len(others) > 0 && !f.quiet {
		// Files that are not logs by name are not judged; say which, so
		// that a log saved under another extension is not missed unseen.
		fmt.Fprintf(stderr, "stepgate: %d file(s) in the searched directories are not judged (not .csv, .tsv or .txt), e.g. %s\n",
			len(others), oneLine(others[0], 120))
	}
	if len(files) == 0 {
		return usageErr(fmt.Errorf("%s: %w", strings.Join(args, " "), acceptance.ErrNoLogs))
	}

	if f.quiet && f.verbose {
		return usageErr(errors.New("--quiet and --verbose exclude each other"))
	}
	if f.maxPages < 0 {
		return usageErr(fmt.Errorf("--max-unit-pages %d: want 0 (no limit) or more", f.maxPages))
	}
	if f.workers < 0 {
		return usageErr(fmt.Errorf("--workers %d: want 0 (one per core) or more", f.workers))
	}
	tuneGC(len(files))
	started := time.Now()
	prog := newProgress(stderr, f.quiet)
	var readBytes int64
	b, err := acceptance.Run(ctx, spec, files, acceptance.RunOptions{
		Tool:         acceptance.ToolInfo{Name: "stepgate", Version: version},
		ReportDate:   date,
		Workers:      f.workers,
		AllUnits:     f.allUnits,
		MaxUnitPages: f.maxPages, // 0: no limit, on the command line as in the API
		Traces:       acceptance.KeepPageTraces,
		Progress: func(done, total int, n int64) {
			readBytes = n
			prog.update(done, total, n)
		},
	})
	prog.finish()
	if err != nil {
		return usageErr(fmt.Errorf("%w; no report written", err))
	}
	if b.ReportDate == "" {
		// No flag, no SOURCE_DATE_EPOCH and no test date in any log: the
		// files themselves date the test.
		b.ReportDate = newestFileDate(files)
		if !f.quiet && b.ReportDate != "" {
			fmt.Fprintf(stderr, "stepgate: no log carries a started_at date; the reports are dated %s, the newest modification date of the log files (set it with --report-date)\n", b.ReportDate)
		}
	}
	judged := time.Since(started)
	paths, err := report.WriteAllContext(ctx, f.out, b, report.Options{PDF: pdfreport.Options{AllUnits: f.allUnits}})
	if err != nil {
		return usageErr(err)
	}
	if ctx.Err() != nil {
		return usageErr(fmt.Errorf("interrupted after the reports were written"))
	}
	if !f.quiet {
		printSummary(stdout, b, f.verbose)
		for _, p := range paths {
			fmt.Fprintln(stdout, "wrote", p)
		}
	}
	if f.verbose || f.timing {
		total := time.Since(started)
		fmt.Fprintf(stderr, "stepgate: %d files, %.1f MB judged in %.2f s (%.1f MB/s), reports written in %.2f s\n",
			len(files), float64(readBytes)/1e6, judged.Seconds(), float64(readBytes)/1e6/judged.Seconds(), (total - judged).Seconds())
	}
	if b.Summary.Pass != b.Summary.Units {
		return &exitError{code: 1, err: errUnitsNotPassed}
	}
	return nil
}

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

// printSummary writes the verdict table to stdout.
// summaryAllUpTo is the batch size up to which the summary lists every
// unit; a larger batch lists the units that did not pass (--verbose lists
// all).
const summaryAllUpTo = 100

func printSummary(w io.Writer, b *acceptance.Batch, verbose bool) {
	fmt.Fprintf(w, "%s rev %s: %s\n", b.Spec.SpecID, b.Spec.Revision, b.Spec.Title)
	listAll := verbose || len(b.Units) <= summaryAllUpTo
	// Unit ids come from file names and log metadata: control characters
	// in them must not reach the terminal.
	ids := make([]string, len(b.Units))
	width := len("unit")
	for i, u := range b.Units {
		ids[i] = oneLine(u.Unit, 64)
		width = max(width, utf8.RuneCountInString(ids[i]))
	}
	head := "first reason"
	if verbose {
		head = "reasons"
	}
	fmt.Fprintf(w, "%-*s  %-7s  %s\n", width, "unit", "verdict", head)
	for i, u := range b.Units {
		if !listAll && u.Verdict == acceptance.Pass {
			continue
		}
		reason := ""
		if len(u.Reasons) > 0 {
			reason = u.Reasons[0]
		}
		pad := strings.Repeat(" ", width-utf8.RuneCountInString(ids[i]))
		fmt.Fprintf(w, "%s%s  %-7s  %s\n", ids[i], pad, u.Verdict, oneLine(reason, 100))
		if verbose {
			for _, r := range u.Reasons[min(1, len(u.Reasons)):] {
				fmt.Fprintf(w, "%s  %-7s  %s\n", strings.Repeat(" ", width), "", oneLine(r, 100))
			}
		}
	}
	if !listAll {
		fmt.Fprintf(w, "(%d passing units not listed; --verbose lists every unit)\n", b.Summary.Pass)
	}
	s := b.Summary
	yield := 0.0
	if s.Units > 0 {
		yield = 100 * float64(s.Pass) / float64(s.Units)
	}
	fmt.Fprintf(w, "units %d: pass %d, fail %d, invalid %d; yield %.1f %%\n", s.Units, s.Pass, s.Fail, s.Invalid, yield)
}

// oneLine replaces control characters (C0, DEL and C1, which terminals
// act on) and invalid UTF-8 by spaces and shortens s to at most n runes.
func oneLine(s string, n int) string {
	s = strings.Map(func(r rune) rune {
		if r < 0x20 || (r >= 0x7f && r < 0xa0) || r == utf8.RuneError {
			return ' '
		}
		return r
	}, s)
	rs := []rune(s)
	if len(rs) > n {
		return string(rs[:n-1]) + "…"
	}
	return s
}

// tuneGC trades a little memory for less collection work: a batch allocates
// fast but keeps little (one summary per unit). Unless the user set GOGC or
// GOMEMLIMIT, the collector runs at half its default frequency, with a
// soft memory limit that makes it run more often only when the heap
// approaches the limit: 256 MiB, or the summaries the batch is expected to
// keep (about 6 KiB per unit) plus 128 MiB for the work in hand when that
// is more, so that a very large batch is not collected without end.
func tuneGC(files int) {
	if os.Getenv("GOGC") == "" {
		debug.SetGCPercent(200)
	}
	if os.Getenv("GOMEMLIMIT") == "" {
		debug.SetMemoryLimit(memoryLimit(files))
	}
}

// memoryLimit is the soft memory limit tuneGC sets for a batch of files.
func memoryLimit(files int) int64 {
	const perUnit, working, floor = 6 << 10, 128 << 20, 256 << 20
	return max(floor, int64(files)*perUnit+working)
}
