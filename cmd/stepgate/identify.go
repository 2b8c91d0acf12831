package main

import (
	"encoding/json"
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/acceptance/rigdata"
	"github.com/stepgate/stepgate/metrics"
)

// identifyOutput is the JSON contract of `identify --json`: keys may be
// added, never renamed.
type identifyOutput struct {
	StaticGain       float64 `json:"static_gain"`
	Damping          float64 `json:"damping"`
	NaturalFrequency float64 `json:"natural_frequency_rad_s"`
	DeadTime         float64 `json:"dead_time_s"`
	RMSResidual      float64 `json:"rms_residual"`
	Gain             float64 `json:"gain"`
	Step             int     `json:"step"`
	Samples          int     `json:"samples"`
	File             string  `json:"file"`
}

func newIdentifyCmd() *cobra.Command {
	var gain, minChange float64
	var specPath, columns, timeUnit string
	var step int
	var asJSON bool
	cmd := &cobra.Command{
		Use:   "identify --gain K [--json] LOG",
		Short: "Fit an effective second-order closed loop to a reference step log",
		Long: `identify estimates the closed-loop static gain G, damping ratio ζ, natural
frequency ωn and dead time θ from one step of a reference test recorded under
a known proportional gain K: it starts from the overshoot, peak time and final
value and refines the fit by least squares. It prints the fit residual and a
model.reference_test block to paste into a spec.

Columns come from --spec (its signals section) or from --columns.`,
		Example: `  stepgate identify --gain 10 bench/ref-K10.csv
  stepgate identify --gain 10 --spec vd25.yaml --step 2 --json bench/ref-K10.csv
  stepgate identify --gain 2 --columns time,cmd,pos --time-unit ms ref.csv`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if !(gain > 0) {
				return usageErr(fmt.Errorf("--gain %v: the proportional gain of the reference test must be positive", gain))
			}
			f := rigdata.Format{}
			if specPath != "" {
				spec, err := acceptance.LoadSpec(specPath)
				if err != nil {
					return usageErr(err)
				}
				f = spec.Format()
				if !cmd.Flags().Changed("min-change") {
					minChange = spec.Steps.MinChange
				}
			} else {
				cols := strings.Split(columns, ",")
				if len(cols) != 3 {
					return usageErr(fmt.Errorf("--columns %q: want time,command,response", columns))
				}
				scale, err := rigdata.TimeScaleFor(timeUnit)
				if err != nil {
					return usageErr(fmt.Errorf("--time-unit: %w", err))
				}
				f = rigdata.Format{Time: strings.TrimSpace(cols[0]), Command: strings.TrimSpace(cols[1]), Response: strings.TrimSpace(cols[2]), TimeScale: scale}
			}
			lg, err := rigdata.ReadFile(args[0], f)
			if err != nil {
				return usageErr(err)
			}
			if err := lg.Trace.Validate(); err != nil {
				return usageErr(fmt.Errorf("%s: %w", args[0], err))
			}
			if minChange <= 0 {
				return usageErr(fmt.Errorf("--min-change %v: must be positive", minChange))
			}
			steps := metrics.FindSteps(lg.Trace, minChange)
			if len(steps) == 0 {
				return usageErr(fmt.Errorf("%s: no clean step: the command never changes by --min-change %v", args[0], minChange))
			}
			if step < 1 || step > len(steps) {
				return usageErr(fmt.Errorf("--step %d: the log has %d step(s)", step, len(steps)))
			}
			id, err := model.Identify(lg.Trace, steps[step-1], gain)
			if err != nil {
				return usageErr(fmt.Errorf("%s: %w", args[0], err))
			}
			out := identifyOutput{
				StaticGain: id.StaticGain, Damping: id.Damping, NaturalFrequency: id.NaturalFrequency,
				DeadTime: id.DeadTime, RMSResidual: id.RMSResidual, Gain: gain, Step: step, Samples: id.Samples, File: args[0],
			}
			w := cmd.OutOrStdout()
			if asJSON {
				enc := json.NewEncoder(w)
				enc.SetIndent("", "  ")
				return enc.Encode(out)
			}
			fmt.Fprintf(w, "%s, step %d (%g → %g), %d samples fitted at gain %g\n", args[0], step, steps[step-1].From, steps[step-1].To, id.Samples, gain)
			fmt.Fprintf(w, "  static gain G   %.5g\n  damping ζ       %.4g\n  natural freq ωn %.5g rad/s\n  dead time θ     %.4g s\n  rms residual    %.4g (response units)\n\n",
				id.StaticGain, id.Damping, id.NaturalFrequency, id.DeadTime, id.RMSResidual)
			fmt.Fprintf(w, "# paste into the spec; the dead time is the whole loop's, not a plant dead time\nmodel:\n  reference_test:\n    gain: %g\n    static_gain: %.5g\n    damping: %.4g\n    natural_frequency_rad_s: %.5g\n",
				gain, id.Reference.StaticGain, id.Reference.Damping, id.Reference.NaturalFrequency)
			return nil
		},
	}
	fl := cmd.Flags()
	fl.Float64Var(&gain, "gain", 0, "proportional gain the reference test was recorded under (required)")
	fl.StringVar(&specPath, "spec", "", "take column names, time unit and min_change from this spec")
	fl.StringVar(&columns, "columns", "t,target,position", "time,command,response column names when no --spec is given")
	fl.StringVar(&timeUnit, "time-unit", "s", "time unit when no --spec is given: s | ms | us")
	fl.Float64Var(&minChange, "min-change", 0.5, "smallest command change that counts as a step")
	fl.IntVar(&step, "step", 1, "which step of the log to fit (1-based)")
	fl.BoolVar(&asJSON, "json", false, "print JSON")
	cmd.MarkFlagRequired("gain")
	return cmd
}
