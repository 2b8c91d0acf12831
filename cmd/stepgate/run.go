package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"strings"
	"syscall"
	"time"

	"github.com/spf13/cobra"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report"
	"github.com/stepgate/stepgate/acceptance/rigdata"
)

type runFlags struct {
	spec       string
	out        string
	workers    int
	allUnits   bool
	reportDate string
	quiet      bool
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
	fl.StringVar(&f.reportDate, "report-date", "", "date printed on the reports, YYYY-MM-DD (default: SOURCE_DATE_EPOCH, else the newest test date in the logs)")
	fl.BoolVar(&f.quiet, "quiet", false, "print nothing but errors")
	cmd.MarkFlagRequired("spec")
	cmd.MarkFlagRequired("out")
	return cmd
}

// runBatch is the run command's body.
func runBatch(ctx context.Context, stdout, stderr io.Writer, f runFlags, args []string) error {
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
	files, err := rigdata.FindLogs(args, []string{outAbs})
	if err != nil {
		return usageErr(err)
	}
	if len(files) == 0 {
		return usageErr(fmt.Errorf("%s: %w", strings.Join(args, " "), acceptance.ErrNoLogs))
	}
	if ctx == nil {
		ctx = context.Background()
	}
	ctx, stop := signal.NotifyContext(ctx, os.Interrupt, syscall.SIGTERM)
	defer stop()

	b, err := acceptance.Run(ctx, spec, files, acceptance.RunOptions{
		Tool:       acceptance.ToolInfo{Name: "stepgate", Version: version},
		ReportDate: date,
		Traces:     acceptance.KeepAllTraces,
	})
	if err != nil {
		return usageErr(fmt.Errorf("%w; no report written", err))
	}
	paths, err := report.WriteAll(f.out, b, report.Options{})
	if err != nil {
		return usageErr(err)
	}
	if ctx.Err() != nil {
		return usageErr(fmt.Errorf("interrupted after the reports were written"))
	}
	if !f.quiet {
		printSummary(stdout, b)
		for _, p := range paths {
			fmt.Fprintln(stdout, "wrote", p)
		}
	}
	if b.Summary.Pass != b.Summary.Units {
		return &exitError{code: 1, err: errUnitsNotPassed}
	}
	return nil
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
func printSummary(w io.Writer, b *acceptance.Batch) {
	fmt.Fprintf(w, "%s rev %s: %s\n", b.Spec.SpecID, b.Spec.Revision, b.Spec.Title)
	width := len("unit")
	for _, u := range b.Units {
		if len(u.Unit) > width {
			width = len(u.Unit)
		}
	}
	fmt.Fprintf(w, "%-*s  %-7s  %s\n", width, "unit", "verdict", "first reason")
	for _, u := range b.Units {
		reason := ""
		if len(u.Reasons) > 0 {
			reason = u.Reasons[0]
		}
		fmt.Fprintf(w, "%-*s  %-7s  %s\n", width, u.Unit, u.Verdict, oneLine(reason, 100))
	}
	s := b.Summary
	yield := 0.0
	if s.Units > 0 {
		yield = 100 * float64(s.Pass) / float64(s.Units)
	}
	fmt.Fprintf(w, "units %d: pass %d, fail %d, invalid %d; yield %.1f %%\n", s.Units, s.Pass, s.Fail, s.Invalid, yield)
}

// oneLine removes control characters and shortens s to at most n runes.
func oneLine(s string, n int) string {
	s = strings.Map(func(r rune) rune {
		if r < 0x20 || r == 0x7f {
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
