package main

import (
	"encoding/json"
	"fmt"
	"io"
	"strings"

	"github.com/spf13/cobra"

	"github.com/stepgate/stepgate/acceptance/logs"
	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/acceptance/spec"
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

// identifyOptions are the options of `stepgate identify`, one field per
// flag, and the log to fit.
type identifyOptions struct {
	Log  string  // the reference step log
	Gain float64 // --gain: proportional gain of the reference test; required, positive
	// Spec (--spec) gives the column names, the time unit and min_change;
	// without it Columns (--columns, "time,command,response") and TimeUnit
	// (--time-unit: s, ms or us) name the columns.
	Spec, Columns, TimeUnit string
	// MinChange (--min-change) is the smallest command change that counts
	// as a step; nil means the spec's min_change, or 0.5 without a spec.
	MinChange *float64
	Step      int  // --step: which step of the log to fit, from 1
	JSON      bool // --json: print JSON
}

// defaultMinChange is identify's smallest step without a spec.
const defaultMinChange = 0.5

// defaultIdentifyOptions are the identify options the command line starts
// from.
func defaultIdentifyOptions() identifyOptions {
	return identifyOptions{Columns: "t,target,position", TimeUnit: "s", Step: 1}
}

// newIdentifyCmd declares `stepgate identify` and its flags.
func newIdentifyCmd() *cobra.Command {
	o := defaultIdentifyOptions()
	minChange := defaultMinChange
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
		Args: oneArg("LOG", "the reference step log to fit"),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Log = args[0]
			if cmd.Flags().Changed("min-change") {
				o.MinChange = &minChange
			}
			return runIdentify(cmdStreams(cmd), o)
		},
	}
	fl := cmd.Flags()
	fl.Float64Var(&o.Gain, "gain", 0, "proportional gain the reference test was recorded under (required)")
	fl.StringVar(&o.Spec, "spec", "", "take column names, time unit and min_change from this spec")
	fl.StringVar(&o.Columns, "columns", o.Columns, "time,command,response column names when no --spec is given")
	fl.StringVar(&o.TimeUnit, "time-unit", o.TimeUnit, "time unit when no --spec is given: s | ms | us")
	fl.Float64Var(&minChange, "min-change", minChange, "smallest command change that counts as a step")
	fl.IntVar(&o.Step, "step", o.Step, "which step of the log to fit (1-based)")
	fl.BoolVar(&o.JSON, "json", false, "print JSON")
	cmd.MarkFlagRequired("gain")
	return cmd
}

// runIdentify fits the chosen step of the log and prints the fit and the
// spec block.
func runIdentify(s streams, o identifyOptions) error {
	if !(o.Gain > 0) {
		return usageErr(fmt.Errorf("--gain %v: the proportional gain of the reference test must be positive", o.Gain))
	}
	f, minChange, err := o.logFormat()
	if err != nil {
		return usageErr(err)
	}
	tr, steps, err := readSteps(o.Log, f, minChange)
	if err != nil {
		return usageErr(err)
	}
	if o.Step < 1 || o.Step > len(steps) {
		return usageErr(fmt.Errorf("--step %d: the log has %d step(s)", o.Step, len(steps)))
	}
	step := steps[o.Step-1]
	id, err := model.Identify(tr, step, o.Gain)
	if err != nil {
		return usageErr(fmt.Errorf("%s: %w", o.Log, err))
	}
	if o.JSON {
		enc := json.NewEncoder(s.out)
		enc.SetIndent("", "  ")
		return enc.Encode(identifyOutput{
			StaticGain: id.StaticGain, Damping: id.Damping, NaturalFrequency: id.NaturalFrequency,
			DeadTime: id.DeadTime, RMSResidual: id.RMSResidual, Gain: o.Gain, Step: o.Step, Samples: id.Samples, File: o.Log,
		})
	}
	printIdentification(s.out, o, step, id)
	return nil
}

// logFormat resolves the log's columns and the smallest step, from the
// spec when one is named, else from the column and time-unit options;
// --min-change, when given, overrides the spec's.
func (o identifyOptions) logFormat() (logs.Format, float64, error) {
	minChange := defaultMinChange
	var f logs.Format
	if o.Spec != "" {
		sp, err := spec.Load(o.Spec)
		if err != nil {
			return f, 0, err
		}
		f, minChange = sp.Format(), sp.Steps.MinChange
	} else {
		cols := strings.Split(o.Columns, ",")
		if len(cols) != 3 {
			return f, 0, fmt.Errorf("--columns %q: want time,command,response", o.Columns)
		}
		scale, err := logs.TimeScaleFor(o.TimeUnit)
		if err != nil {
			return f, 0, fmt.Errorf("--time-unit: %w", err)
		}
		f = logs.Format{Time: strings.TrimSpace(cols[0]), Command: strings.TrimSpace(cols[1]), Response: strings.TrimSpace(cols[2]), TimeScale: scale}
	}
	if o.MinChange != nil {
		minChange = *o.MinChange
	}
	if minChange <= 0 {
		return f, 0, fmt.Errorf("--min-change %v: must be positive", minChange)
	}
	return f, minChange, nil
}

// readSteps reads the log and finds its steps.
func readSteps(path string, f logs.Format, minChange float64) (metrics.Trace, []metrics.Step, error) {
	lg, err := logs.ReadFile(path, f)
	if err != nil {
		return metrics.Trace{}, nil, err
	}
	if err := lg.Trace.Validate(); err != nil {
		return metrics.Trace{}, nil, fmt.Errorf("%s: %w", path, err)
	}
	steps := metrics.FindSteps(lg.Trace, minChange)
	if len(steps) == 0 {
		return metrics.Trace{}, nil, fmt.Errorf("%s: no clean step: the command never changes by --min-change %v", path, minChange)
	}
	return lg.Trace, steps, nil
}

// printIdentification prints the fit and the model.reference_test block
// to paste into a spec.
func printIdentification(w io.Writer, o identifyOptions, step metrics.Step, id model.Identified) {
	fmt.Fprintf(w, "%s, step %d (%g → %g), %d samples fitted at gain %g\n", o.Log, o.Step, step.From, step.To, id.Samples, o.Gain)
	fmt.Fprintf(w, "  static gain G   %.5g\n  damping ζ       %.4g\n  natural freq ωn %.5g rad/s\n  dead time θ     %.4g s\n  rms residual    %.4g (response units)\n\n",
		id.StaticGain, id.Damping, id.NaturalFrequency, id.DeadTime, id.RMSResidual)
	fmt.Fprintf(w, "# paste into the spec; the dead time is the whole loop's, not a plant dead time\nmodel:\n  reference_test:\n    gain: %g\n    static_gain: %.5g\n    damping: %.4g\n    natural_frequency_rad_s: %.5g\n",
		o.Gain, id.Reference.StaticGain, id.Reference.Damping, id.Reference.NaturalFrequency)
}
