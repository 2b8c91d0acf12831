package acceptance

import (
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
	Model        *model.Config          `yaml:"model"`
	Report       ReportInfo             `yaml:"report"`

	// Source is the file the spec was read from; SHA256 the hex digest of its
	// bytes. Set by LoadSpec, not read from YAML.
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

// LogFormat describes how logs are written.
type LogFormat struct {
	DecimalComma bool   `yaml:"decimal_comma"` // numbers use ',' as the decimal mark
	Delimiter    string `yaml:"delimiter"`     // auto (default) | comma | semicolon | tab
}

// StepRules control segmentation.
type StepRules struct {
	MinChange float64 `yaml:"min_change"` // command changes smaller than this are not steps
}

// MetricRules set the measurement levels, in percent.
type MetricRules struct {
	RiseLevelsPct    []float64 `yaml:"rise_levels_pct"`     // [low, high], default [10, 90]
	SettlingBandPct  float64   `yaml:"settling_band_pct"`   // ± % of |step size|, default 2
	DeadTimeLevelPct float64   `yaml:"dead_time_level_pct"` // default 2
	FinalWindowPct   float64   `yaml:"final_window_pct"`    // default 20
}

// Limit bounds one metric. A nil bound is not checked.
type Limit struct {
	Min *float64 `yaml:"min" json:"min"`
	Max *float64 `yaml:"max" json:"max"`
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
