package main

import (
	"fmt"
	"path/filepath"

	"github.com/spf13/cobra"

	"github.com/stepgate/stepgate/acceptance/demo"
)

func newDemoCmd() *cobra.Command {
	var out, reportDate string
	var units int
	var duration float64
	var noRun bool
	cmd := &cobra.Command{
		Use:   "demo --out DIR",
		Short: "Write an invented example line (spec and logs) and run the batch on it",
		Long: `demo writes the invented VD-25 vent-drive scenario: a spec and one step-test
log per unit (out step 0 → 25 mm and back, 1 kHz, 0.01 mm encoder), generated
deterministically from a seeded rig simulation with unit-to-unit spread, so that
most units pass and some fail for different reasons, plus one truncated log.
It then runs the batch and writes the reports under DIR/report.`,
		Example: `  stepgate demo --out demo-report
  stepgate demo --out /tmp/line3 --units 200
  stepgate demo --out /tmp/shift --units 5000 --duration-s 6 --no-run`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if units < 1 {
				return usageErr(fmt.Errorf("--units %d: want at least 1", units))
			}
			specPath, logDir, err := demo.Write(out, demo.Options{Units: units, Duration: duration})
			if err != nil {
				return usageErr(err)
			}
			w := cmd.OutOrStdout()
			fmt.Fprintf(w, "demo spec: %s\ndemo logs: %s (%d units)\n", specPath, logDir, units)
			if noRun {
				return nil
			}
			err = runBatch(cmd.Context(), w, cmd.ErrOrStderr(), runFlags{
				spec: specPath, out: filepath.Join(out, "report"), reportDate: reportDate,
			}, []string{logDir})
			if ee, ok := err.(*exitError); ok && ee.code == 1 {
				// Failing units are the point of the demo, not an error.
				fmt.Fprintln(w, "the demo line has failing and invalid units by design; see the reports")
				return nil
			}
			return err
		},
	}
	cmd.Flags().StringVar(&out, "out", "demo-report", "directory for the demo spec, logs and reports")
	cmd.Flags().IntVar(&units, "units", 40, "number of units to generate")
	cmd.Flags().Float64Var(&duration, "duration-s", demo.DefaultDuration, "seconds logged per unit (a move every 1.5 s: 3.5 s gives two steps, 6 s three)")
	cmd.Flags().BoolVar(&noRun, "no-run", false, "only write the spec and logs (scale data for benchmarks)")
	cmd.Flags().StringVar(&reportDate, "report-date", "", "date printed on the reports, YYYY-MM-DD")
	return cmd
}
