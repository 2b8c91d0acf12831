package main

import (
	"context"
	"fmt"
	"io"
	"path"
	"path/filepath"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/batch"
	"github.com/stepgate/stepgate/acceptance/logs"
	"github.com/stepgate/stepgate/acceptance/report"
	"github.com/stepgate/stepgate/acceptance/report/pdfreport"
	"github.com/stepgate/stepgate/acceptance/spec"
)

// runOptions are the options of `stepgate run`, one field per flag with the
// flag's meaning, and the paths it searches for logs.
type runOptions struct {
	Spec       string   // --spec: acceptance spec (YAML); required
	Out        string   // --out: output directory; required
	Paths      []string // log files, or directories searched for logs
	Workers    int      // --workers: concurrent workers; 0 means one per core
	AllUnits   bool     // --all-units: every unit gets a detail page
	ReportDate string   // --report-date YYYY-MM-DD; empty: see reportDate
	// MaxUnitPages (--max-unit-pages) caps the units with a detail page in
	// the PDF; 0 means no limit, as in batch.Options.
	MaxUnitPages int
	// Quiet (--quiet, -q) prints nothing but errors; Verbose (--verbose,
	// -v) lists every unit with all its reasons and prints the timing. The
	// command line refuses both at once.
	Quiet, Verbose bool
	// JSON (--json) prints the run's summary as JSON on stdout instead of
	// the verdict table; notices and progress stay on stderr.
	JSON bool
	// Force (--force) replaces the reports an earlier run left in Out;
	// without it a run refuses an output directory that holds reports.
	Force      bool
	CPUProfile string // --cpu-profile FILE (hidden, for developers)
	MemProfile string // --mem-profile FILE (hidden, for developers)
	Timing     bool   // --timing: print the timing even when quiet (hidden)
	// Record (--record DB) is the line record the run's units are stored
	// in: a SQLite file path or a postgres:// URL; empty: none.
	Record string
	// Operator (--operator) is who ran the run, as the record keeps it;
	// empty: $USER, else $LOGNAME.
	Operator string
	// Include and Exclude (--include, --exclude, repeatable) add file name
	// patterns to the spec's log.include and log.exclude.
	Include, Exclude []string
}

// defaultRunOptions are the run options the command line starts from.
func defaultRunOptions() runOptions {
	return runOptions{MaxUnitPages: batch.MaxUnitPages}
}

// newRunCmd declares `stepgate run` and its flags.
func newRunCmd() *cobra.Command {
	o := defaultRunOptions()
	cmd := &cobra.Command{
		Use:   "run --spec FILE --out DIR PATH...",
		Short: "Judge every log under PATH against the spec and write the reports",
		Example: `  stepgate run --spec vd25.yaml --out reports/2026-11-30 logs/
  stepgate run --spec vd25.yaml --out out --report-date 2026-12-01 a.csv b.csv`,
		Args: needArgs("PATH", "the log files or directories to judge"),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Paths = args
			return runBatch(cmd.Context(), cmdStreams(cmd), o)
		},
	}
	fl := cmd.Flags()
	fl.StringVar(&o.Spec, "spec", "", "acceptance spec (YAML)")
	fl.StringVar(&o.Out, "out", "", "output directory for results.json, report.xlsx and report.pdf")
	fl.IntVar(&o.Workers, "workers", 0, "concurrent workers (0: one per core)")
	fl.BoolVar(&o.AllUnits, "all-units", false, "give every unit a page in the PDF, not only failing and invalid ones")
	fl.IntVar(&o.MaxUnitPages, "max-unit-pages", o.MaxUnitPages, "most units with a detail page in the PDF (0: no limit); the XLSX and JSON hold every unit")
	fl.StringVar(&o.ReportDate, "report-date", "", "date printed on the reports, YYYY-MM-DD (default: SOURCE_DATE_EPOCH, else the newest test date in the logs, else the newest modification date of the log files)")
	fl.StringArrayVar(&o.Include, "include", nil, "judge only files matching this pattern (repeatable; added to the spec's log.include)")
	fl.StringArrayVar(&o.Exclude, "exclude", nil, "leave out files matching this pattern, listed in the reports (repeatable; added to the spec's log.exclude)")
	fl.BoolVarP(&o.Quiet, "quiet", "q", false, "print nothing but errors")
	fl.BoolVarP(&o.Verbose, "verbose", "v", false, "list every unit with all its reasons, and the run's timing on stderr")
	fl.BoolVar(&o.JSON, "json", false, "print the summary as JSON on stdout (schema: stepgate schema run) instead of the verdict table")
	fl.BoolVar(&o.Force, "force", false, "replace the reports already in --out (without it, a run refuses a directory holding reports)")
	fl.StringVar(&o.CPUProfile, "cpu-profile", "", "write a CPU profile of the run to this file (for developers)")
	fl.StringVar(&o.MemProfile, "mem-profile", "", "write a heap profile at the end of the run to this file (for developers)")
	fl.StringVar(&o.Record, "record", "", "store every judged unit in this line record: a SQLite file path or a postgres:// URL (earlier attempts of a serial count in its attempt numbers and the yields)")
	fl.StringVar(&o.Operator, "operator", "", "who ran the run, as the line record keeps it (default: $USER)")
	fl.BoolVar(&o.Timing, "timing", false, "print the run's timing on stderr, even with --quiet (for developers)")
	fl.MarkHidden("timing")
	fl.MarkHidden("cpu-profile")
	fl.MarkHidden("mem-profile")
	cmd.MarkFlagRequired("spec")
	cmd.MarkFlagRequired("out")
	cmd.MarkFlagsMutuallyExclusive("quiet", "verbose")
	cmd.MarkFlagsMutuallyExclusive("json", "verbose")
	cmd.MarkFlagFilename("spec", "yaml", "yml")
	cmd.MarkFlagDirname("out")
	return cmd
}

// needArgs requires at least one argument, and names it when it is
// missing: what, and what it is for.
func needArgs(name, what string) cobra.PositionalArgs {
	return func(cmd *cobra.Command, args []string) error {
		if len(args) == 0 {
			return fmt.Errorf("missing %s: give %s", name, what)
		}
		return nil
	}
}

// oneArg requires exactly one argument, and names it when it is missing
// or when there are more.
func oneArg(name, what string) cobra.PositionalArgs {
	return func(cmd *cobra.Command, args []string) error {
		switch {
		case len(args) == 0:
			return fmt.Errorf("missing %s: give %s", name, what)
		case len(args) > 1:
			return fmt.Errorf("one %s wanted (%s), got %d: %s", name, what, len(args), strings.Join(args, " "))
		}
		return nil
	}
}

// runInputs is what a run has resolved before it reads a log.
type runInputs struct {
	spec     *spec.Spec
	date     string // the report date given, or ""
	outAbs   string // the output directory, absolute
	files    []string
	excluded []logs.Excluded // files the include and exclude patterns left out
}

// runTiming is how long the run's parts took, for --timing and --verbose.
type runTiming struct {
	started   time.Time
	judged    time.Duration // reading, measuring and judging
	readBytes int64
}

// runBatch is the run command's body: it judges every log under o.Paths
// against the spec and writes the three reports into o.Out. Its error
// carries the exit status (see exitError).
func runBatch(ctx context.Context, s streams, o runOptions) error {
	date, err := o.check()
	if err != nil {
		return usageErr(err)
	}
	stopProfiles, err := startProfiles(o.CPUProfile, o.MemProfile)
	if err != nil {
		return usageErr(err)
	}
	defer stopProfiles()
	ctx, stop := interruptible(ctx)
	defer stop()

	in, err := resolveInputs(s, o, date)
	if err != nil {
		return usageErr(err)
	}
	tuneGC(len(in.files))
	b, recs, tm, err := judge(ctx, s, o, in)
	if err != nil {
		return stopped(ctx, fmt.Errorf("%w; no report written", err))
	}
	lr := openRecord(ctx, o.Record, b)
	prog := newProgress(s.err, o.Quiet)
	prog.phase("writing reports")
	paths, err := report.WriteAll(ctx, o.Out, b, recs, report.Options{PDF: pdfreport.Options{AllUnits: o.AllUnits}})
	prog.finish()
	if err != nil {
		return stopped(ctx, err)
	}
	if ctx.Err() != nil {
		return stopped(ctx, fmt.Errorf("interrupted after the reports were written"))
	}
	printOutcome(s, o, b, paths, len(in.files), tm)
	if err := lr.write(ctx, s, o, b); err != nil {
		return err
	}
	if b.Summary.Pass != b.Summary.Units {
		return &exitError{code: 1, err: errUnitsNotPassed}
	}
	return nil
}

// exitInterrupted is the exit status of a run stopped by SIGINT or SIGTERM:
// 128 plus the number of SIGINT, as shells report an interrupted program.
const exitInterrupted = 130

// stopped gives err the exit status of a run that could not finish: 130
// when ctx was cancelled by an interrupt, else 2.
func stopped(ctx context.Context, err error) error {
	if ctx.Err() != nil {
		return &exitError{code: exitInterrupted, err: err}
	}
	return usageErr(err)
}

// check refuses options that no spec or log can make right, before
// anything is read, and returns the report date they give (see
// reportDate).
func (o runOptions) check() (date string, err error) {
	if o.MaxUnitPages < 0 {
		return "", fmt.Errorf("--max-unit-pages %d: want 0 (no limit) or more", o.MaxUnitPages)
	}
	if o.Workers < 0 {
		return "", fmt.Errorf("--workers %d: want 0 (one per core) or more", o.Workers)
	}
	return reportDate(o.ReportDate)
}

// resolveInputs loads the spec, checks the output directory and finds the
// logs. Files in the searched directories that are not logs by name are
// named on stderr unless the run is quiet.
func resolveInputs(s streams, o runOptions, date string) (runInputs, error) {
	in := runInputs{date: date}
	var err error
	if in.spec, err = spec.Load(o.Spec); err != nil {
		return in, err
	}
	if in.outAbs, err = filepath.Abs(o.Out); err != nil {
		return in, fmt.Errorf("--out %s: %w", o.Out, err)
	}
	if err := checkOutDir(o.Out, in.outAbs); err != nil {
		return in, err
	}
	if err := checkOutNotInput(o.Out, in.outAbs, o.Paths); err != nil {
		return in, err
	}
	if !o.Force {
		if err := checkNoReports(o.Out); err != nil {
			return in, err
		}
	}
	// The output directory is skipped wherever a search meets it, so that
	// nothing stepgate or a user left there is read as a log. Every other
	// file found is a unit, unless the spec's or the command line's
	// patterns leave it out; the reports list those.
	pat := logs.Patterns{
		Include: append(append([]string(nil), in.spec.Log.Include...), o.Include...),
		Exclude: append(append([]string(nil), in.spec.Log.Exclude...), o.Exclude...),
	}
	for _, p := range append(append([]string(nil), o.Include...), o.Exclude...) {
		if _, err := path.Match(p, ""); err != nil || strings.TrimSpace(p) == "" {
			return in, fmt.Errorf("--include/--exclude %q: not a file name pattern (path.Match syntax: *, ?, [a-z])", p)
		}
	}
	found, err := logs.FindFiles(o.Paths, []string{in.outAbs}, pat)
	if err != nil {
		return in, err
	}
	files := found.Files
	in.excluded = found.Excluded
	if len(files) == 0 {
		return in, fmt.Errorf("%s: %w", strings.Join(o.Paths, " "), logs.ErrNoLogs)
	}
	in.files = files
	return in, nil
}

// judge runs the batch with a progress line on stderr and dates it.
func judge(ctx context.Context, s streams, o runOptions, in runInputs) (*acceptance.Batch, *batch.Records, runTiming, error) {
	tm := runTiming{started: time.Now()}
	prog := newProgress(s.err, o.Quiet)
	b, recs, err := batch.Run(ctx, in.spec, in.files, batch.Options{
		Tool:         acceptance.ToolInfo{Name: "stepgate", Version: version},
		ReportDate:   in.date,
		Workers:      o.Workers,
		AllUnits:     o.AllUnits,
		MaxUnitPages: o.MaxUnitPages, // 0: no limit, on the command line as in the API
		Traces:       batch.KeepPageTraces,
		Progress: func(done, total int, n int64) {
			tm.readBytes = n
			prog.update(done, total, n)
		},
	})
	prog.finish()
	if err != nil {
		return nil, nil, tm, err
	}
	from := acceptance.DateFromTests
	switch {
	case o.ReportDate != "":
		from = acceptance.DateFromOption
	case in.date != "":
		from = acceptance.DateFromSourceDate
	case b.ReportDate == "":
		from = acceptance.DateFromFiles
	}
	b.Run = runInfo(o, from)
	for _, x := range in.excluded {
		b.Excluded = append(b.Excluded, acceptance.ExcludedFile{File: x.File, Pattern: x.Pattern})
	}
	if b.ReportDate == "" {
		// No flag, no SOURCE_DATE_EPOCH and no test date in any log: the
		// files themselves date the test.
		b.ReportDate = newestFileDate(in.files)
		if !o.Quiet && b.ReportDate != "" {
			fmt.Fprintf(s.err, "stepgate: no log carries a started_at date; the reports are dated %s, the newest modification date of the log files (set it with --report-date)\n", b.ReportDate)
		}
	}
	tm.judged = time.Since(tm.started)
	return b, recs, tm, nil
}

// runInfo is what results.json records of how the run was asked for; the
// report date came from where from says.
func runInfo(o runOptions, from string) *acceptance.RunInfo {
	resolved, err := filepath.Abs(o.Spec)
	if err == nil {
		if r, err := filepath.EvalSymlinks(resolved); err == nil {
			resolved = r
		}
	}
	return &acceptance.RunInfo{
		SpecPath: o.Spec, SpecResolved: resolved, Inputs: o.Paths,
		ReportDate: o.ReportDate, ReportDateFrom: from,
		AllUnits: o.AllUnits, MaxUnitPages: o.MaxUnitPages,
	}
}

// printOutcome prints the verdict table and the reports written on stdout,
// unless quiet, and the timing on stderr with --verbose or --timing.
func printOutcome(s streams, o runOptions, b *acceptance.Batch, paths []string, files int, tm runTiming) {
	if o.JSON {
		if err := writeRunJSON(s.out, b, paths); err != nil {
			fmt.Fprintln(s.err, "stepgate: --json:", err)
		}
	} else if !o.Quiet {
		printSummary(s.out, b, o.Verbose)
		printExcluded(s.out, b.Excluded, o.Verbose)
		for _, p := range paths {
			fmt.Fprintln(s.out, "wrote", p)
		}
	}
	if o.Verbose || o.Timing {
		total := time.Since(tm.started)
		mb := float64(tm.readBytes) / 1e6
		fmt.Fprintf(s.err, "stepgate: %d files, %.1f MB judged in %.2f s (%.1f MB/s), reports written in %.2f s\n",
			files, mb, tm.judged.Seconds(), mb/tm.judged.Seconds(), (total - tm.judged).Seconds())
	}
}

// orList writes a list of words as "a, b or c".
func orList(words []string) string {
	if len(words) < 2 {
		return strings.Join(words, "")
	}
	return strings.Join(words[:len(words)-1], ", ") + " or " + words[len(words)-1]
}

// printExcluded names the files the patterns left out, each with its
// pattern: the first five, or all with verbose.
func printExcluded(w io.Writer, ex []acceptance.ExcludedFile, all bool) {
	if len(ex) == 0 {
		return
	}
	fmt.Fprintf(w, "left out by the include/exclude patterns: %d file(s), listed in the reports\n", len(ex))
	for i, x := range ex {
		if i == 5 && !all {
			fmt.Fprintf(w, "  … and %d more\n", len(ex)-i)
			break
		}
		fmt.Fprintf(w, "  %s  (%s)\n", x.File, x.Pattern)
	}
}
