// Command stepgate turns a batch of closed-loop step-test logs and an
// acceptance spec into a verdict for every unit under test and into JSON,
// XLSX and PDF reports; it also predicts the response from the spec's model,
// designs a proportional gain, and identifies an effective loop from a
// reference log.
//
// Exit status: 0 when every unit passed, 1 when any unit failed or was
// invalid, 2 for a usage, spec or output error (then no report is written,
// and an output directory that holds reports is refused without --force),
// 130 when a run was interrupted.
package main

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"runtime/debug"
	"strings"

	"github.com/spf13/cobra"

	"github.com/stepgate/stepgate/templates"
)

// version is the tool version printed in reports; set with -ldflags at
// release time.
var version = "0.1.0-dev"

// versionLine is what --version prints: the version, and the commit the
// binary was built from when it was built in a repository (Go records it
// as vcs.revision), marked "modified" when the tree had uncommitted
// changes.
func versionLine() string {
	info, ok := debug.ReadBuildInfo()
	if !ok {
		return version
	}
	return version + commitOf(info.Settings)
}

// commitOf formats the build's commit from its settings: " (commit
// 0123456789ab)", with ", modified" for a tree with changes; "" without
// a commit.
func commitOf(settings []debug.BuildSetting) string {
	var rev, modified string
	for _, s := range settings {
		switch s.Key {
		case "vcs.revision":
			rev = s.Value
		case "vcs.modified":
			if s.Value == "true" {
				modified = ", modified"
			}
		}
	}
	if rev == "" {
		return ""
	}
	return " (commit " + rev[:min(12, len(rev))] + modified + ")"
}

// exitError carries an exit status with its error.
type exitError struct {
	code int
	err  error
}

func (e *exitError) Error() string { return e.err.Error() }
func (e *exitError) Unwrap() error { return e.err }

// usageErr marks an error as exit status 2.
func usageErr(err error) error { return &exitError{code: 2, err: err} }

func main() {
	os.Exit(execute(os.Args[1:]))
}

// execute runs the command line and returns the exit status.
func execute(args []string) int {
	root := newRootCmd()
	root.SetArgs(args)
	cmd, err := root.ExecuteC()
	if err == nil {
		return 0
	}
	var ee *exitError
	if errors.As(err, &ee) {
		if ee.err != nil && ee.err != errUnitsNotPassed {
			fmt.Fprintln(os.Stderr, "stepgate:", message(ee.err))
		}
		return ee.code
	}
	// Errors that are not an exitError are cobra's: the command line
	// itself is wrong (a flag, an argument).
	fmt.Fprintf(os.Stderr, "stepgate: %s; see %s --help\n", message(err), cmd.CommandPath())
	return 2
}

// message is err's text with a missing file said in plain words: "no
// such file or folder: PATH" instead of the system's "stat PATH: no such
// file or directory".
func message(err error) string {
	text := err.Error()
	var pe *fs.PathError
	if errors.As(err, &pe) && errors.Is(pe.Err, fs.ErrNotExist) {
		return strings.Replace(text, pe.Error(), "no such file or folder: "+pe.Path, 1)
	}
	return text
}

// errUnitsNotPassed signals exit status 1 after a complete run.
var errUnitsNotPassed = errors.New("not every unit passed")

func newRootCmd() *cobra.Command {
	root := &cobra.Command{
		Use:   "stepgate",
		Short: "Acceptance verdicts and reports for closed-loop step tests",
		Long: `stepgate reads step-test logs from actuator and servo test rigs, measures
every step (overshoot, rise, settling, steady-state error, dead time), judges
each unit under test against the limits of a spec, compares the line with the
spec's model prediction, and writes results.json, report.xlsx and report.pdf.

` + templates.HelpNotice,
		SilenceUsage:  true,
		SilenceErrors: true,
		Version:       versionLine(),
	}
	// The version flag has no short form: -v is run's --verbose.
	root.Flags().Bool("version", false, "print the version (and the commit it was built from)")
	root.SetVersionTemplate("stepgate {{.Version}}\n")
	root.AddCommand(newRunCmd(), newDemoCmd(), newSpecCmd(), newPredictCmd(), newIdentifyCmd(), newHistoryCmd(), newSchemaCmd())
	return root
}

// streams are the output streams a command writes to.
type streams struct {
	out io.Writer // results: tables, JSON, the reports written
	err io.Writer // notices, progress and timing
}

// cmdStreams are the streams cobra gives cmd (os.Stdout and os.Stderr
// unless a test sets others).
func cmdStreams(cmd *cobra.Command) streams {
	return streams{out: cmd.OutOrStdout(), err: cmd.ErrOrStderr()}
}
