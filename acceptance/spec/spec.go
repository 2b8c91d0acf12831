package spec

import (
	"github.com/stepgate/stepgate/acceptance/logs"
	"math"
	"path/filepath"
	"slices"

	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/metrics"
)

// Spec is an acceptance specification: what to read from the logs, how to
// measure, the limits, and optionally the model that predicts the response.
type Spec struct {
	SpecID       string                 `yaml:"spec_id"`
	Revision     string                 `yaml:"revision"`
	Title        string                 `yaml:"title"`
	Signals      Signals                `yaml:"signals"`
	TimeUnit     string                 `yaml:"time_unit"`     // s | ms | us
	ResponseUnit string                 `yaml:"response_unit"` // label only
	EffortUnit   string                 `yaml:"effort_unit"`   // label only
	Log          LogFormat              `yaml:"log"`
	Steps        StepRules              `yaml:"steps"`
	Metrics      MetricRules            `yaml:"metrics"`
	Limits       map[metrics.Name]Limit `yaml:"limits"`
	// Axes, when given, declares several axes per unit, each with its own
	// command, response and effort columns and optional limits; the time
	// column (signals.time) is shared. Without axes the spec has one axis,
	// read from signals and judged by limits.
	Axes []Axis `yaml:"axes"`
	// DecisionRule is how a value and its uncertainty are judged against
	// a limit: simple (default) or guarded (see decision.go).
	DecisionRule string `yaml:"decision_rule"`
	// ResponseResolution is the resolution of the response signal (the
	// encoder count) in response units; 0 when the spec leaves it out
	// and the count is found in each log.
	ResponseResolution float64       `yaml:"response_resolution"`
	Model              *model.Config `yaml:"model"`
	Report             ReportInfo    `yaml:"report"`
	// Line says where a unit's lot and shift come from; empty: none.
	Line LineInfo `yaml:"line"`

	// Source is the file the spec was read from; SHA256 the hex digest of its
	// bytes. Set by Load, not read from YAML.
	Source string `yaml:"-"`
	SHA256 string `yaml:"-"`
}

// Signals names the log columns.
type Signals struct {
	Time     string `yaml:"time"`
	Command  string `yaml:"command"`
	Response string `yaml:"response"`
	Effort   string `yaml:"effort"` // optional
}

// LogFormat describes how logs are written and which files of a lot are
// logs.
type LogFormat struct {
	DecimalComma bool   `yaml:"decimal_comma"` // numbers use ',' as the decimal mark
	Delimiter    string `yaml:"delimiter"`     // auto (default) | comma | semicolon | tab
	// HeaderLine is the 1-based line of the header row, for logs whose
	// header detection cannot be sure of; 0 (default) finds it as the first
	// line naming the time and command columns.
	HeaderLine int `yaml:"header_line"`
	// SkipRows is how many lines under the header are not data (units or
	// descriptions); a units row is recognised without it.
	SkipRows int `yaml:"skip_rows"`
	// SampleRateHz, when set, says that the time column counts samples at
	// this rate: time in s = sample number / rate.
	SampleRateHz float64 `yaml:"sample_rate_hz"`
	// Scale converts columns written in other units (encoder counts,
	// inverted sense) into the spec's.
	Scale SignalScales `yaml:"scale"`
	// Include and Exclude are file name patterns (path.Match syntax); a
	// pattern with a '/' is matched against the path below the searched
	// directory, one without against the file name. A file matched by an
	// Exclude pattern, or by no Include pattern when some are given, is not
	// judged; the reports list it with the pattern.
	Include []string `yaml:"include"`
	Exclude []string `yaml:"exclude"`
}

// SignalScales holds the conversion of each signal; an unset one is read
// as written.
type SignalScales struct {
	Command  *SignalScale `yaml:"command"`
	Response *SignalScale `yaml:"response"`
	Effort   *SignalScale `yaml:"effort"`
}

// SignalScale converts a column as written into the spec's units: value =
// factor × (−raw when invert, else raw) + offset.
type SignalScale struct {
	Factor float64 `yaml:"factor"` // default 1; must not be 0
	Offset float64 `yaml:"offset"` // default 0, in the spec's units
	Invert bool    `yaml:"invert"` // the sensor counts the other way
}

// transform is the reader's form of a SignalScale.
func (s *SignalScale) transform() logs.Transform {
	if s == nil {
		return logs.Transform{}
	}
	return logs.Transform{Factor: s.Factor, Offset: s.Offset, Invert: s.Invert}
}

// StepRules control segmentation.
type StepRules struct {
	MinChange float64 `yaml:"min_change"` // command changes smaller than this are not steps
	// SteadyS is how long, in seconds, the command must hold its value for
	// a move (a ramp, trapezoid or S-curve over several samples) to end;
	// default DefaultSteadyS.
	SteadyS float64 `yaml:"steady_s"`
}

// MetricRules set the measurement levels, in percent.
type MetricRules struct {
	RiseLevelsPct    []float64 `yaml:"rise_levels_pct"`     // [low, high], default [10, 90]
	SettlingBandPct  float64   `yaml:"settling_band_pct"`   // ± % of |step size|, default 2
	DeadTimeLevelPct float64   `yaml:"dead_time_level_pct"` // default 2
	FinalWindowPct   float64   `yaml:"final_window_pct"`    // default 20
}

// Limit bounds one metric. A nil bound is not checked. The other fields
// are optional and nil when the spec leaves them out.
type Limit struct {
	Min *float64 `yaml:"min" json:"min"`
	Max *float64 `yaml:"max" json:"max"`
	// Resolution is the step the metric's values are stated in and
	// compared at, in the metric's unit; nil derives it from the
	// response's resolution and the log's sample period.
	Resolution *float64 `yaml:"resolution" json:"resolution,omitempty"`
	// GuardBand narrows the acceptance zone by this amount at each bound,
	// in the metric's unit (decision_rule guarded only).
	GuardBand *float64 `yaml:"guard_band" json:"guard_band,omitempty"`
	// GuardBandU narrows it by this multiple of the value's expanded
	// uncertainty U (decision_rule guarded only).
	GuardBandU *float64 `yaml:"guard_band_u" json:"guard_band_u,omitempty"`
	// MinPpk and MinCpk are the smallest performance (overall σ) and
	// capability (within-subgroup σ) indices the spec owner requires of
	// the batch for this metric.
	MinPpk *float64 `yaml:"min_ppk" json:"min_ppk,omitempty"`
	MinCpk *float64 `yaml:"min_cpk" json:"min_cpk,omitempty"`
}

// ReportInfo identifies the issuing organisation and the people who sign.
type ReportInfo struct {
	Company    string    `yaml:"company"`
	Site       string    `yaml:"site"`
	Address    string    `yaml:"address"`
	Customer   string    `yaml:"customer"`
	Logo       string    `yaml:"logo"` // PNG or JPEG path, relative to the spec file
	PreparedBy Signatory `yaml:"prepared_by"`
	ReviewedBy Signatory `yaml:"reviewed_by"`
	ApprovedBy Signatory `yaml:"approved_by"`
}

// Signatory is one line of the authorisation block.
type Signatory struct {
	Name string `yaml:"name"`
	Role string `yaml:"role"`
}

// Spec defaults, applied by Parse to keys the file leaves out.
const (
	DefaultTimeUnit         = "s"
	DefaultRiseLowPct       = 10.0
	DefaultRiseHighPct      = 90.0
	DefaultSettlingBandPct  = 2.0
	DefaultDeadTimeLevelPct = 2.0
	DefaultFinalWindowPct   = 20.0
	DefaultDelimiter        = "auto"
	DefaultDecisionRule     = RuleSimple
	DefaultSteadyS          = metrics.DefaultSteadyTime
	// MaxSteadyS bounds steps.steady_s: a command that must hold still
	// longer than this to end a move would merge a whole test plan into one.
	MaxSteadyS = 10.0
)

// LogoPath returns the report logo's path resolved against the folder of
// the spec file (Source), or "" when the spec sets no logo.
func (s *Spec) LogoPath() string {
	if s.Report.Logo == "" {
		return ""
	}
	if filepath.IsAbs(s.Report.Logo) || s.Source == "" {
		return s.Report.Logo
	}
	return filepath.Join(filepath.Dir(s.Source), s.Report.Logo)
}

// Options returns the measurement levels as fractions (the spec holds
// percentages). A level the spec leaves unset takes the default.
func (s *Spec) Options() metrics.Options {
	o := metrics.DefaultOptions()
	m := s.Metrics
	if len(m.RiseLevelsPct) == 2 {
		o.RiseLow = m.RiseLevelsPct[0] / 100
		o.RiseHigh = m.RiseLevelsPct[1] / 100
	}
	if m.SettlingBandPct > 0 {
		o.Band = m.SettlingBandPct / 100
	}
	if m.DeadTimeLevelPct > 0 {
		o.DeadTimeLevel = m.DeadTimeLevelPct / 100
	}
	if m.FinalWindowPct > 0 {
		o.FinalWindow = m.FinalWindowPct / 100
	}
	if s.Steps.SteadyS > 0 {
		o.SteadyTime = s.Steps.SteadyS
	}
	return o
}

// TimeScale returns the factor that converts the log's time column to
// seconds: 1 for s (and for an unset unit), 1e-3 for ms, 1e-6 for us. A
// unit Parse would reject gives NaN, so that no time is silently
// misread.
func (s *Spec) TimeScale() float64 {
	switch s.TimeUnit {
	case "", "s":
		return 1
	case "ms":
		return 1e-3
	case "us":
		return 1e-6
	}
	return math.NaN()
}

// LimitNames returns the limited metric names in metrics.Names order. Names
// that are not metrics (possible only in a spec that was not validated)
// follow, sorted.
func (s *Spec) LimitNames() []metrics.Name {
	out := make([]metrics.Name, 0, len(s.Limits))
	for _, n := range metrics.Names {
		if _, ok := s.Limits[n]; ok {
			out = append(out, n)
		}
	}
	var rest []metrics.Name
	for k := range s.Limits {
		if metrics.Index(k) < 0 {
			rest = append(rest, k)
		}
	}
	slices.Sort(rest)
	return append(out, rest...)
}

// Format returns how the spec says logs are written, for the log reader.
func (s *Spec) Format() logs.Format {
	f := logs.Format{
		Time:         s.Signals.Time,
		Command:      s.Signals.Command,
		Response:     s.Signals.Response,
		Effort:       s.Signals.Effort,
		TimeScale:    s.TimeScale(),
		DecimalComma: s.Log.DecimalComma,
		HeaderLine:   s.Log.HeaderLine,
		SkipRows:     s.Log.SkipRows,
		TimeUnit:     s.TimeUnit,
		ValueUnit:    s.ResponseUnit,
		Scale: [3]logs.Transform{s.Log.Scale.Command.transform(), s.Log.Scale.Response.transform(),
			s.Log.Scale.Effort.transform()},
		Plausible: true,
	}
	if r := s.Log.SampleRateHz; r > 0 {
		f.TimeScale = 1 / r
		f.TimeUnit = "samples"
	}
	switch s.Log.Delimiter {
	case "comma":
		f.Delimiter = ','
	case "semicolon":
		f.Delimiter = ';'
	case "tab":
		f.Delimiter = '\t'
	}
	return f
}
