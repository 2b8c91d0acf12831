package record

import (
	"database/sql/driver"
	"encoding/json"
	"fmt"
	"math"
	"time"
)

// Verdicts a unit, a step or a check can carry. The record stores the word
// it is given; these are the words stepgate uses.
const (
	Pass    = "pass"
	Fail    = "fail"
	Invalid = "invalid"
)

// Number is a value that may be absent: a measurement that could not be
// made, or a limit that is not set. The zero Number is absent.
type Number struct {
	Value float64
	Valid bool
}

// Some returns a present Number.
func Some(v float64) Number { return Number{Value: v, Valid: true} }

// None is the absent Number.
var None = Number{}

// String formats the number, or "null" when it is absent.
func (n Number) String() string {
	if !n.Valid {
		return "null"
	}
	return fmt.Sprint(n.Value)
}

// Scan reads a nullable floating-point column.
func (n *Number) Scan(src any) error {
	switch v := src.(type) {
	case nil:
		*n = None
	case float64:
		*n = Some(v)
	case int64:
		*n = Some(float64(v))
	default:
		return fmt.Errorf("record: cannot read %T as a number", src)
	}
	return nil
}

// driverValue gives the number as a nullable floating-point argument.
func (n Number) driverValue() driver.Value {
	if !n.Valid {
		return nil
	}
	return n.Value
}

// Run is one recording run: a batch or a station session that judged units.
type Run struct {
	Time        time.Time       // when the run judged its units
	ToolVersion string          // stepgate's version
	Options     json.RawMessage // the run's options as a JSON object; empty is {}
	RanBy       string          // who ran it (user name, from the environment or a flag)
	ReportID    string          // the id of the reports the run wrote, if any
}

// Spec identifies the acceptance spec the units were judged under and keeps
// its full text.
type Spec struct {
	ID       string // the spec's own id
	Revision string
	SHA256   string // of Text, lower-case hex
	Text     string
}

// Metric is one named value of a step: a measurement, a prediction or a gap.
// When Value is absent, Reason says why (it must not be empty).
type Metric struct {
	Name   string
	Value  Number
	Reason string
}

// Check is one limit check of a step.
type Check struct {
	Metric  string
	Value   Number // the measured value; absent when it could not be measured
	Min     Number // absent when the limit has no lower bound
	Max     Number // absent when the limit has no upper bound
	Verdict string
	Reason  string // why the check did not pass; empty when it passed
	U       Number // the expanded uncertainty of Value, when one is stated
	Rule    string // the decision rule applied (for example simple acceptance), when stated
}

// Prediction is the model's predicted response of a step.
type Prediction struct {
	Kind    string // e.g. "ideal" or "realised"
	Metrics []Metric
}

// Step is one step of a unit's test.
type Step struct {
	Index     int     // 1-based, in the order the steps appear in the log
	StartS    float64 // the step instant, seconds from the start of the log
	From, To  float64 // commanded levels
	Verdict   string
	Reasons   []string
	Metrics   []Metric    // measured values
	Checks    []Check     // limit checks, in the spec's order
	Predicted *Prediction // nil when the spec has no model
	Gaps      []Metric    // measured minus predicted
}

// Unit is one attempt of a unit under test: one log file judged once. Its
// times are kept in UTC to the microsecond.
type Unit struct {
	Serial      string
	File        string    // the log's path
	FileSHA256  string    // of the log's bytes, lower-case hex
	FileModTime time.Time // zero when unknown
	Metadata    map[string]string
	Station     string
	Operator    string
	Lot         string
	Shift       string
	StartedAt   time.Time // zero when the log does not say
	Verdict     string
	Reasons     []string
	Steps       []Step
}

// SpecRef names a spec without its text.
type SpecRef struct {
	ID       string
	Revision string
	SHA256   string
}

// Attempt is a recorded unit attempt as read back from the record.
type Attempt struct {
	ID       int64     // the attempt's row id
	RunID    int64     // the run that recorded it
	RunTime  time.Time // that run's time
	ReportID string    // that run's report id
	Spec     SpecRef
	Unit     Unit
}

// Result says what RecordRun did.
type Result struct {
	RunID    int64    // the id of the run's row
	Recorded int      // units recorded
	Skipped  int      // units already in the record: same file content under the same spec
	Skips    []string // the files of the skipped units, in the order given
}

// checkNumber rejects a NaN, which SQLite would silently store as NULL.
func checkNumber(n Number) error {
	if n.Valid && math.IsNaN(n.Value) {
		return fmt.Errorf("NaN is not a value: record it as absent with a reason")
	}
	return nil
}
