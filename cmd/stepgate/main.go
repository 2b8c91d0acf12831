// Command stepgate turns a batch of closed-loop step-test logs and an
// acceptance spec into a verdict for every unit under test and into JSON,
// XLSX and PDF reports; it also predicts the response from the spec's model,
// designs a proportional gain, and identifies an effective loop from a
// reference log.
//
// Exit status: 0 when every unit passed, 1 when any unit failed or was
// invalid, 2 for a usage, spec or output error (then no report is written).
package main

import (
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/spf13/cobra"

	"github.com/stepgate/stepgate/templates"
)

// version is the tool version printed in reports; set with -ldflags at
// release time.
var version = "0.1.0-dev"

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
	err := root.Execute()
	if err == nil {
		return 0
	}
	var ee *exitError
	if errors.As(err, &ee) {
		if ee.err != nil && ee.err != errUnitsNotPassed {
			fmt.Fprintln(os.Stderr, "stepgate:", ee.err)
		}
		return ee.code
	}
	fmt.Fprintln(os.Stderr, "stepgate:", err)
	return 2
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
		Version:       version,
	}
	root.AddCommand(newRunCmd(), newDemoCmd(), newSpecCmd(), newPredictCmd(), newIdentifyCmd(), newHistoryCmd())
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
