package acceptance

import (
	"math"
	"time"

	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
	"github.com/stepgate/stepgate/templates"
)

// Verdict is the outcome of a check, a step or a unit.
type Verdict string

// The three verdicts. Invalid means the data could not show pass or fail.
const (
	Pass    Verdict = "pass"
	Fail    Verdict = "fail"
	Invalid Verdict = "invalid"
)

// Batch is the report model: everything one run decided, fed to every report
// writer. Field JSON names are the contract for machine consumers.
type Batch struct {
	Tool    ToolInfo      `json:"tool"`
	Spec    SpecInfo      `json:"spec"`
	Summary Summary       `json:"summary"`
	Units   []UnitResult  `json:"units"`
	Model   *ModelSummary `json:"model,omitempty"`
	// Limits repeats the spec's limits for consumers that read only results.
	Limits map[metrics.Name]spec.Limit `json:"limits"`
	// ReportDate is the date the reports carry (RFC 3339 date).
	ReportDate string `json:"report_date"`
	// Notice says what the batch's verdicts are and are not.
	Notice string `json:"notice"`
	// TestDates spans the logs' started_at metadata; empty when no log
	// carries one.
	TestDates DateRange `json:"test_dates"`
	// DecisionRule is the spec's decision rule, simple or guarded.
	DecisionRule string `json:"decision_rule"`
	// Excluded lists the files found that the spec's or the command line's
	// include and exclude patterns left out, each with its pattern; empty
	// (and left out of results.json) when none was.
	Excluded []ExcludedFile `json:"excluded,omitempty"`

	// Run is how the batch was asked for: the spec's path and the options
	// that change the reports; nil for a batch not made by the command line.
	Run *RunInfo `json:"-"`

	// Retests lists the serials tested more than once, each with its
	// attempts in order (earlier runs' attempts from the line record
	// included), for the reports' retest tables; set by ChainAttempts.
	Retests []Retest `json:"-"`

	// SpecDoc is the full spec the batch ran under.
	SpecDoc *spec.Spec `json:"-"`
	// MaxPages caps the units with a detail page; 0 means no cap (see
	// PageUnits and batch.Options.MaxUnitPages).
	MaxPages int `json:"-"`
}

// RunInfo records how a run was asked for, so that a reader of its
// results can run it again: the spec's path, the inputs and the options
// that change what the reports hold. Options that change only how fast a
// run goes (workers) are left out.
type RunInfo struct {
	// SpecPath is the spec's path as given; SpecResolved the same file as
	// an absolute path with symbolic links resolved.
	SpecPath, SpecResolved string
	// Inputs are the log files and directories as given, in order.
	Inputs []string
	// ReportDate is the report date given as an option, or "" when the
	// date was found otherwise; ReportDateFrom says where the batch's date
	// came from (see the ReportDateFrom constants).
	ReportDate, ReportDateFrom string
	// AllUnits gives every unit a detail page; MaxUnitPages caps the units
	// with a page, 0 meaning no cap.
	AllUnits     bool
	MaxUnitPages int
}

// Where a batch's report date came from (RunInfo.ReportDateFrom).
const (
	DateFromOption     = "option"            // --report-date
	DateFromSourceDate = "SOURCE_DATE_EPOCH" // the environment variable
	DateFromTests      = "test dates"        // the newest started_at in the logs
	DateFromFiles      = "file dates"        // the newest modification time of the logs
)

// DateRange is the first and last date (YYYY-MM-DD) of a set of tests.
type DateRange struct {
	First string `json:"first"`
	Last  string `json:"last"`
}

// ToolInfo names the program that made the report.
type ToolInfo struct {
	Name    string `json:"name"`
	Version string `json:"version"`
}

// SpecInfo identifies the spec revision.
type SpecInfo struct {
	SpecID   string `json:"spec_id"`
	Revision string `json:"revision"`
	SHA256   string `json:"sha256"`
	Title    string `json:"title"`
}

// Summary counts units by verdict, and serials by their attempts.
//
// Units, Pass, Fail and Invalid count the log files judged (a retest is a
// file of its own, and so is a second copy of one log); Serials, Retested
// and the two yields count serials, each once, over its chain of attempts
// (see ChainAttempts).
//
// ConditionalPass and ConditionalFail count the files by the worst
// conformity statement of their checks when it is conditional.
type Summary struct {
	Units   int `json:"units"`
	Pass    int `json:"pass"`
	Fail    int `json:"fail"`
	Invalid int `json:"invalid"`
	// Serials is the number of distinct serials in the batch.
	Serials int `json:"serials"`
	// Retested is the number of serials with more than one attempt.
	Retested int `json:"retested"`
	// FirstPassYieldPct is the share of serials whose first attempt passed,
	// in %; nil when the batch has no serial.
	FirstPassYieldPct *float64 `json:"first_pass_yield_pct"`
	// FinalYieldPct is the share of serials whose latest attempt passed,
	// in %; nil when the batch has no serial.
	FinalYieldPct *float64 `json:"final_yield_pct"`
	// ConditionalPass counts the units whose worst check is a conditional
	// pass (inside every limit, within U of one); ConditionalFail those
	// whose worst is a conditional fail (outside a limit by less than U).
	ConditionalPass int `json:"conditional_pass"`
	ConditionalFail int `json:"conditional_fail"`
}

// UnitResult is one log file's outcome.
type UnitResult struct {
	Unit     string            `json:"unit"`
	File     string            `json:"file"`
	SHA256   string            `json:"sha256"`
	Metadata map[string]string `json:"metadata"`
	Verdict  Verdict           `json:"verdict"`
	Reasons  []Reason          `json:"reasons"`
	Steps    []StepResult      `json:"steps"`
	// Samples is the number of data rows read.
	Samples int `json:"samples"`

	// Fit is the identified effective closed loop; nil without a model.
	Fit *Fit `json:"fit,omitempty"`
	// Causes are the likely causes its record indicates against the
	// model's realised prediction (acceptance/causes keys, in report
	// order): nil without a model or for a unit of several axes, empty
	// when none of them stands out.
	Causes []string `json:"causes,omitempty"`
	// Axes holds the verdict of each axis of a unit judged under a spec
	// with several axes, in spec order; nil (left out of results.json)
	// under a single-axis spec. Steps then holds the steps of every axis,
	// axis after axis, each naming its axis.
	Axes []AxisResult `json:"axes,omitempty"`

	// Attempt is the unit's place in its serial's chain of attempts, 1 for
	// the first (earlier runs' attempts in the line record included); a
	// second copy of a log carries the attempt of the copy it repeats.
	Attempt int `json:"attempt"`
	// Attempts is the number of attempts of the unit's serial.
	Attempts int `json:"attempts"`
	// Lot is the unit's lot, from the source the spec's line section
	// names; "" when it names none or the log does not give it.
	Lot string `json:"lot"`
	// Shift is the name of the shift the test started in, by the spec's
	// shift boundaries and the log's started_at; "" when either is missing.
	Shift string `json:"shift"`

	// FileTime is the log's modification time, which orders attempts
	// that carry no start time; zero when unknown.
	FileTime time.Time `json:"-"`

	// Trace is the record, kept only for units that get a page or a chart.
	Trace *metrics.Trace `json:"-"`
}

// AxisResult is the outcome of one axis of a unit: its verdict and its
// reasons, each also among the unit's.
type AxisResult struct {
	Name    string   `json:"name"`
	Verdict Verdict  `json:"verdict"`
	Reasons []Reason `json:"reasons"`
}

// StepResult is one step's metrics and checks.
type StepResult struct {
	Index int `json:"index"`
	// Axis names the axis the step belongs to under a spec with several
	// axes; "" (left out of results.json) under a single-axis spec.
	Axis    string    `json:"axis,omitempty"`
	StartS  float64   `json:"start_s"`
	From    float64   `json:"from"`
	To      float64   `json:"to"`
	Verdict Verdict   `json:"verdict"`
	Reasons []Reason  `json:"reasons"`
	Metrics MetricSet `json:"metrics"`
	Checks  []Check   `json:"checks"`
	// Uncertainty is the expanded uncertainty U (k = 2) of each metric,
	// unknown where the metric is or where it was not evaluated.
	Uncertainty MetricSet `json:"uncertainty"`

	// Predicted is the model's prediction of this step (realised when the
	// spec has a loop section, else ideal); nil without a model.
	Predicted *Prediction `json:"predicted,omitempty"`
	// Gap is measured − predicted per metric; null where either is unknown.
	Gap *GapSet `json:"gap,omitempty"`

	// Evidence holds observations from the record that point at causes of a
	// gap (saturation, friction); nil when none could be made.
	Evidence *StepEvidence `json:"evidence,omitempty"`

	// Curve is the step's response normalised to its step, for the overlay
	// chart; nil for steps the chart does not need (see curveSampler).
	Curve *StepCurve `json:"-"`
}

// StepCurve is a step's response normalised to its step, (y − from)/(to −
// from), on a uniform grid from the step instant: point k lies at
// k·Window/(len(Y) − 1) seconds. Points after the step's record ends are NaN.
type StepCurve struct {
	Window float64
	Y      []float32
}

// StepEvidence is what the record of one step shows beyond the metrics,
// used for the report's notes on likely causes. Every field is measured or
// unknown with a reason.
type StepEvidence struct {
	// EffortSaturatedPct is the share of the rise (step instant to the upper
	// rise-level crossing) during which |effort| was at its limit, in %.
	EffortSaturatedPct metrics.Value `json:"effort_saturated_pct"`
	// EffortLimit is the limit used: the spec's actuator effort_limit, else
	// the largest |effort| in the record when it is held flat.
	EffortLimit metrics.Value `json:"effort_limit"`
	// FinalDrift is the response's drift over the final window, response
	// units: near zero with a steady-state error indicates the response
	// stopped short (static friction or deadband) rather than still moving.
	FinalDrift metrics.Value `json:"final_drift"`
}

// Prediction is one simulated step measured by the metrics package.
type Prediction struct {
	Kind    string    `json:"kind"` // "ideal" or "realised"
	Metrics MetricSet `json:"metrics"`
}

// Fit is the effective second-order closed loop identified from a unit's
// recorded step: G·ωn²/(s² + 2ζωn s + ωn²) behind a dead time.
type Fit struct {
	Step             int           `json:"step"` // step index the fit used
	StaticGain       metrics.Value `json:"static_gain"`
	Damping          metrics.Value `json:"damping"`
	NaturalFrequency metrics.Value `json:"natural_frequency_rad_s"`
	DeadTime         metrics.Value `json:"dead_time_s"`
	RMSResidual      metrics.Value `json:"rms_residual"`
	Why              string        `json:"why,omitempty"` // why the fit failed, when it did
}

// ModelSummary is what the model predicts for the batch as a whole: the
// nominal steps (distinct command changes) simulated ideal and realised, and
// the gains designed for reference.
type ModelSummary struct {
	Config   model.Config        `json:"config"`
	Plant    string              `json:"plant"`    // the plant as a readable transfer function
	Realised bool                `json:"realised"` // true when the spec has a loop or actuator section or a plant dead time
	Nominal  []NominalPrediction `json:"nominal"`
	// Designs are the proportional gains the model gives for the spec's
	// overshoot limit and for critical damping, for reference.
	Designs  []GainDesign `json:"designs,omitempty"`
	Warnings []string     `json:"warnings,omitempty"`
}

// GainDesign is a proportional gain designed for one target.
type GainDesign struct {
	Target     string   `json:"target"` // "overshoot_pct" or "damping"
	Value      float64  `json:"value"`
	KpIdeal    *float64 `json:"kp_ideal"`
	KpRealised *float64 `json:"kp_realised"`
	Why        string   `json:"why,omitempty"` // why a gain is missing
}

// NominalPrediction is the model's response to one distinct command change.
type NominalPrediction struct {
	From     float64    `json:"from"`
	To       float64    `json:"to"`
	Ideal    Prediction `json:"ideal"`
	Realised Prediction `json:"realised"`

	IdealTrace    *metrics.Trace `json:"-"`
	RealisedTrace *metrics.Trace `json:"-"`
}

// Check is one limit applied to one metric of one step.
type Check struct {
	Metric  metrics.Name `json:"metric"`
	Value   *float64     `json:"value"`
	Min     *float64     `json:"min"`
	Max     *float64     `json:"max"`
	Verdict Verdict      `json:"verdict"`
	Reason  string       `json:"reason,omitempty"`
	// U is the value's standard uncertainty u (not the expanded U = 2u,
	// which the step's Uncertainty holds); nil when not evaluated.
	U *float64 `json:"u"`
	// Conformity is the statement of conformity with the limits given U
	// (ILAC-G8:09/2019); "" when the value or U is unknown.
	Conformity Conformity `json:"conformity"`
	// Resolution is the step the value was stated in and compared at; nil
	// when none is known (then float residue alone is ignored).
	Resolution *float64 `json:"resolution"`
	// GuardBand is the guard band w applied at each bound under guarded
	// acceptance; nil under simple acceptance or when unknown.
	GuardBand *float64 `json:"guard_band,omitempty"`
}

// Compared returns the prediction of n the batch compares the line with
// (realised when m.Realised, else ideal), its simulated record (nil when not
// kept) and its kind, "realised" or "ideal".
func (m *ModelSummary) Compared(n *NominalPrediction) (Prediction, *metrics.Trace, string) {
	if m.Realised {
		return n.Realised, n.RealisedTrace, "realised"
	}
	return n.Ideal, n.IdealTrace, "ideal"
}

// Matches reports whether a recorded step from → to is the nominal step n:
// both command levels within 1 % of the nominal step size.
func (n *NominalPrediction) Matches(from, to float64) bool {
	tol := 0.01 * math.Abs(n.To-n.From)
	return math.Abs(from-n.From) <= tol && math.Abs(to-n.To) <= tol
}

// PageUnits returns the indices of the units that get a detail page: the
// first b.MaxPages units that did not pass (of every unit with all), in
// batch order; b.MaxPages 0 (or less) means no cap.
func (b *Batch) PageUnits(all bool) []int {
	limit := b.MaxPages
	var idx []int
	for i := range b.Units {
		if limit > 0 && len(idx) == limit {
			break
		}
		if all || b.Units[i].Verdict != Pass {
			idx = append(idx, i)
		}
	}
	return idx
}

// Notice is the statement every results.json carries: what the batch's
// verdicts are and are not (templates/wording.txt's [notice]).
var Notice = templates.MustPhrase("notice")

// ExcludedFile is a file a search found and a pattern left out.
type ExcludedFile struct {
	File    string `json:"file"`    // the path as the search found it
	Pattern string `json:"pattern"` // the exclude pattern, or "not matched by include: …"
}
