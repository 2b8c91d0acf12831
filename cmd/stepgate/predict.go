package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"

	"github.com/spf13/cobra"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/batch"
	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
	"github.com/stepgate/stepgate/templates"
)

// predictOutput is the JSON contract of `predict --json`: keys may be added,
// never renamed.
type predictOutput struct {
	Controller model.Controller `json:"controller"`
	Plant      string           `json:"plant"`
	Step       struct {
		From       float64 `json:"from"`
		To         float64 `json:"to"`
		DurationS  float64 `json:"duration_s"`
		SampleS    float64 `json:"sample_period_s"`
		Realisable bool    `json:"realised_differs"`
	} `json:"step"`
	Ideal    predictionOutput `json:"ideal"`
	Realised predictionOutput `json:"realised"`
	Design   *designOutput    `json:"design,omitempty"`
	Caution  string           `json:"caution"`
}

// predictionOutput is a measured prediction as `predict --json` writes it:
// every metric, null where unknown, and the reasons of the unknown ones
// when there are any.
type predictionOutput struct {
	Kind       string                    `json:"kind"`
	Metrics    map[metrics.Name]*float64 `json:"metrics"`
	Unmeasured map[metrics.Name]string   `json:"unmeasured,omitempty"`

	set acceptance.MetricSet // the values, for the text output
}

func predictionOf(p acceptance.Prediction) predictionOutput {
	out := predictionOutput{Kind: p.Kind, Metrics: map[metrics.Name]*float64{}, set: p.Metrics}
	for i, n := range metrics.Names {
		if v := p.Metrics.At(i); v.OK {
			x := v.V
			out.Metrics[n] = &x
		} else {
			out.Metrics[n] = nil
		}
	}
	if un := p.Metrics.Unmeasured(); len(un) > 0 {
		out.Unmeasured = un
	}
	return out
}

type designOutput struct {
	Target      string   `json:"target"` // "damping" or "overshoot_pct"
	Value       float64  `json:"value"`
	KpIdeal     *float64 `json:"kp_ideal"`
	KpRealised  *float64 `json:"kp_realised"`
	MethodIdeal string   `json:"method_ideal,omitempty"`
	MethodReal  string   `json:"method_realised,omitempty"`
	WhyIdeal    string   `json:"why_ideal,omitempty"`
	WhyRealised string   `json:"why_realised,omitempty"`
}

// predictOptions are the options of `stepgate predict`, one field per flag.
type predictOptions struct {
	Spec string // --spec: acceptance spec with a model section; required
	// ForDamping (--for-damping) and ForOvershoot (--for-overshoot, %)
	// ask for a designed proportional gain; nil when not given. They
	// exclude each other.
	ForDamping, ForOvershoot *float64
	From, To                 float64 // --from, --to: the commanded step
	Duration                 float64 // --duration-s: simulated time after the step; 0: long enough to settle
	Sample                   float64 // --sample-s: output sample period; 0: 1 ms or the loop's if shorter
	JSON                     bool    // --json: print JSON
}

// defaultPredictOptions are the predict options the command line starts
// from.
func defaultPredictOptions() predictOptions {
	return predictOptions{From: 0, To: 1}
}

// newPredictCmd declares `stepgate predict` and its flags.
func newPredictCmd() *cobra.Command {
	o := defaultPredictOptions()
	var forDamping, forOvershoot float64
	cmd := &cobra.Command{
		Use:   "predict --spec FILE [--for-damping Z | --for-overshoot P] [--json]",
		Short: "Predict the step response from the spec's model, and design a proportional gain",
		Long: `predict simulates one step of the spec's model twice: ideal (continuous,
linear, no loop delay) and realised (sampled controller, loop delay, held
output, saturation, deadband), measures both with the same metric code that
measures the logs, and prints the metrics. With --for-damping or
--for-overshoot it also designs the proportional gain that meets the target,
for the ideal and, when the spec has a loop section, the realised loop.

` + templates.GainCaution,
		Example: `  stepgate predict --spec vd25.yaml
  stepgate predict --spec vd25.yaml --for-overshoot 5 --to 25
  stepgate predict --spec vd25.yaml --for-damping 1 --json`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if cmd.Flags().Changed("for-damping") {
				o.ForDamping = &forDamping
			}
			if cmd.Flags().Changed("for-overshoot") {
				o.ForOvershoot = &forOvershoot
			}
			return runPredict(cmdStreams(cmd), o)
		},
	}
	fl := cmd.Flags()
	fl.StringVar(&o.Spec, "spec", "", "acceptance spec with a model section")
	fl.Float64Var(&forDamping, "for-damping", 0, "design the proportional gain for this damping ratio ζ")
	fl.Float64Var(&forOvershoot, "for-overshoot", 0, "design the proportional gain for this overshoot, %")
	fl.Float64Var(&o.From, "from", o.From, "command before the step")
	fl.Float64Var(&o.To, "to", o.To, "command after the step")
	fl.Float64Var(&o.Duration, "duration-s", 0, "simulated time after the step, s (0: long enough to settle)")
	fl.Float64Var(&o.Sample, "sample-s", 0, "output sample period, s (0: 1 ms or the loop's sample period if shorter)")
	fl.BoolVar(&o.JSON, "json", false, "print JSON")
	cmd.MarkFlagRequired("spec")
	cmd.MarkFlagsMutuallyExclusive("for-damping", "for-overshoot")
	return cmd
}

// runPredict predicts one step of the spec's model, ideal and realised,
// measures both, designs the gain when a target is given, and prints the
// result.
func runPredict(s streams, o predictOptions) error {
	if o.ForDamping != nil && o.ForOvershoot != nil {
		return usageErr(errors.New("give --for-damping or --for-overshoot, not both"))
	}
	if o.From == o.To {
		return usageErr(fmt.Errorf("--from and --to are both %v: no step to predict", o.From))
	}
	sp, sys, err := loadModel(o.Spec)
	if err != nil {
		return usageErr(err)
	}
	duration, dt, err := o.timing(sp, sys)
	if err != nil {
		return usageErr(err)
	}
	out := predictOutput{Controller: sp.Model.Controller, Plant: sys.Plant().String(), Caution: templates.GainCaution}
	out.Step.From, out.Step.To, out.Step.DurationS, out.Step.SampleS, out.Step.Realisable = o.From, o.To, duration, dt, sys.Realised()
	pr, err := sys.Predict(o.From, o.To, duration, dt)
	if err != nil {
		return usageErr(fmt.Errorf("%s: prediction: %w", o.Spec, err))
	}
	// A step smaller than the spec's min_change is still found.
	minChange := sp.Steps.MinChange
	if d := abs(o.To - o.From); minChange > d {
		minChange = d / 2
	}
	out.Ideal = predictionOf(batch.MeasurePrediction(pr.Ideal, "ideal", minChange, sp.Options()))
	out.Realised = predictionOf(batch.MeasurePrediction(pr.Realised, "realised", minChange, sp.Options()))
	if out.Design, err = o.design(sys); err != nil {
		return usageErr(err)
	}
	if o.JSON {
		enc := json.NewEncoder(s.out)
		enc.SetIndent("", "  ")
		return enc.Encode(out)
	}
	printPrediction(s.out, sp, out)
	return nil
}

// loadModel loads the spec and builds its model.
func loadModel(path string) (*spec.Spec, *model.System, error) {
	sp, err := spec.Load(path)
	if err != nil {
		return nil, nil, err
	}
	if sp.Model == nil {
		return nil, nil, fmt.Errorf("%s: the spec has no model section; see `stepgate spec init`", path)
	}
	sys, err := model.Build(*sp.Model)
	if err != nil {
		return nil, nil, fmt.Errorf("%s: model: %w", path, err)
	}
	return sp, sys, nil
}

// timing resolves the simulated duration and the sample period: 0 means
// twice the model's settling horizon, so that the final window of the
// metrics lies well inside the settled response, and 1 ms or the loop's
// sample period when that is shorter.
func (o predictOptions) timing(sp *spec.Spec, sys *model.System) (duration, dt float64, err error) {
	duration, dt = o.Duration, o.Sample
	if duration == 0 {
		if duration, err = sys.SuggestedDuration(); err != nil {
			return 0, 0, fmt.Errorf("%s: model: %w", o.Spec, err)
		}
		duration *= 2
	}
	if dt == 0 {
		dt = 1e-3
		if l := sp.Model.Loop; l != nil && l.SamplePeriod > 0 && l.SamplePeriod < dt {
			dt = l.SamplePeriod
		}
	}
	return duration, dt, nil
}

// design designs the proportional gain for the target the options name,
// for the ideal and the realised loop; nil without a target. A loop for
// which no gain meets the target says why; only when neither has a gain is
// it an error.
func (o predictOptions) design(sys *model.System) (*designOutput, error) {
	d := &designOutput{}
	var target model.Target
	switch {
	case o.ForDamping != nil:
		target, d.Target, d.Value = model.DampingTarget(*o.ForDamping), "damping", *o.ForDamping
	case o.ForOvershoot != nil:
		target, d.Target, d.Value = model.OvershootTarget(*o.ForOvershoot), "overshoot_pct", *o.ForOvershoot
	default:
		return nil, nil
	}
	des, err := sys.DesignGain(target, o.From, o.To)
	if err != nil && des.Ideal == nil && des.Realised == nil {
		return nil, fmt.Errorf("gain design for %s: %w", target, err)
	}
	if des.Ideal != nil {
		k := des.Ideal.Kp
		d.KpIdeal, d.MethodIdeal = &k, des.Ideal.Method
	} else {
		d.WhyIdeal = des.IdealWhy
	}
	if des.Realised != nil {
		k := des.Realised.Kp
		d.KpRealised, d.MethodReal = &k, des.Realised.Method
	} else {
		d.WhyRealised = des.RealisedWhy
	}
	return d, nil
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

func printPrediction(w io.Writer, sp *spec.Spec, out predictOutput) {
	c := out.Controller
	fmt.Fprintf(w, "%s rev %s model\n  plant: %s\n  controller: kp %g, ki %g, kd %g\n", sp.SpecID, sp.Revision, out.Plant, c.Kp, c.Ki, c.Kd)
	fmt.Fprintf(w, "  step %g → %g, %.4g s after the step, sampled every %g s\n\n", out.Step.From, out.Step.To, out.Step.DurationS, out.Step.SampleS)
	fmt.Fprintf(w, "%-24s %14s %14s\n", "metric", "ideal", "realised")
	for _, n := range metrics.Names {
		fmt.Fprintf(w, "%-24s %14s %14s\n", n, fmtValue(out.Ideal.set.Get(n)), fmtValue(out.Realised.set.Get(n)))
	}
	if !out.Step.Realisable {
		fmt.Fprintln(w, "(the spec has no loop or actuator section: the realised loop equals the ideal one)")
	}
	if d := out.Design; d != nil {
		fmt.Fprintf(w, "\ngain for %s = %g:\n", d.Target, d.Value)
		if d.KpIdeal != nil {
			fmt.Fprintf(w, "  ideal loop:    kp = %.6g (%s)\n", *d.KpIdeal, d.MethodIdeal)
		} else {
			fmt.Fprintf(w, "  ideal loop:    none: %s\n", d.WhyIdeal)
		}
		if d.KpRealised != nil {
			fmt.Fprintf(w, "  realised loop: kp = %.6g (%s)\n", *d.KpRealised, d.MethodReal)
		} else if d.WhyRealised != "" {
			fmt.Fprintf(w, "  realised loop: none: %s\n", d.WhyRealised)
		}
	}
	fmt.Fprintf(w, "\n%s\n", out.Caution)
}

func fmtValue(v metrics.Value) string {
	if !v.OK {
		return "null"
	}
	return fmt.Sprintf("%.6g", v.V)
}
