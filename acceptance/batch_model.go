package acceptance

import (
	"github.com/stepgate/stepgate/metrics"
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
	Tool    ToolInfo     `json:"tool"`
	Spec    SpecInfo     `json:"spec"`
	Summary Summary      `json:"summary"`
	Units   []UnitResult `json:"units"`

	// SpecDoc is the full spec the batch ran under.
	SpecDoc *Spec `json:"-"`
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

// Summary counts units by verdict.
type Summary struct {
	Units   int `json:"units"`
	Pass    int `json:"pass"`
	Fail    int `json:"fail"`
	Invalid int `json:"invalid"`
}

// UnitResult is one log file's outcome.
type UnitResult struct {
	Unit     string            `json:"unit"`
	File     string            `json:"file"`
	SHA256   string            `json:"sha256"`
	Metadata map[string]string `json:"metadata"`
	Verdict  Verdict           `json:"verdict"`
	Reasons  []string          `json:"reasons"`
	Steps    []StepResult      `json:"steps"`
	// Samples is the number of data rows read.
	Samples int `json:"samples"`

	// Trace is the record, kept only for units that get a page or a chart.
	Trace *metrics.Trace `json:"-"`
}

// StepResult is one step's metrics and checks.
type StepResult struct {
	Index   int                      `json:"index"`
	StartS  float64                  `json:"start_s"`
	From    float64                  `json:"from"`
	To      float64                  `json:"to"`
	Verdict Verdict                  `json:"verdict"`
	Reasons []string                 `json:"reasons"`
	Metrics map[string]metrics.Value `json:"metrics"`
	// Unmeasured gives the reason for every metric that is null.
	Unmeasured map[string]string `json:"unmeasured"`
	Checks     []Check           `json:"checks"`
}

// Check is one limit applied to one metric of one step.
type Check struct {
	Metric  string   `json:"metric"`
	Value   *float64 `json:"value"`
	Min     *float64 `json:"min"`
	Max     *float64 `json:"max"`
	Verdict Verdict  `json:"verdict"`
	Reason  string   `json:"reason,omitempty"`
}
