package acceptance

import (
	"encoding/json"
	"fmt"
	"strings"

	"github.com/stepgate/stepgate/metrics"
)

// ReasonKind says why a step or unit did not pass.
type ReasonKind uint8

// The kinds of reason. OtherReason is a reason whose kind was not recorded:
// one read back from the text of results.json or built outside the runner.
const (
	OtherReason   ReasonKind = iota
	AboveMax                 // a measured value above its limit's max
	BelowMin                 // a measured value below its limit's min
	StillOutside             // settling time unmeasured, but the record shows it above its max
	NotMeasured              // a limited metric that could not be measured
	NotAMetric               // a limit on a name stepgate does not measure
	Unreadable               // the log cannot be read
	Unusable                 // the log was read but its samples are no usable record
	NoStep                   // the command never changed by the spec's min_change
	DuplicateUnit            // the unit id appears in more than one file
	InternalError            // stepgate failed while judging the log
	DuplicateFile            // the log is a second copy of another file of the batch (same SHA-256)
	InGuardBand              // within its limits but not inside the guard band (guarded acceptance)
	NoUncertainty            // guarded acceptance needs U, which could not be evaluated
)

// Fails reports whether a reason of kind k is a failure (a limit exceeded)
// rather than a reason the data could not show pass or fail.
func (k ReasonKind) Fails() bool {
	return k == AboveMax || k == BelowMin || k == StillOutside || k == InGuardBand
}

// Reason is why a step or a unit did not pass: its kind, the metric and step
// it concerns, the value and limit compared, and the prose rendered from
// them, which results.json and the reports print. In JSON a Reason is its
// text.
type Reason struct {
	Kind   ReasonKind
	Metric metrics.Name // the metric concerned; "" for a unit-level reason
	Step   int          // 1-based step index; 0 for a unit-level reason
	Value  float64      // the value compared (AboveMax, BelowMin, StillOutside)
	Limit  float64      // the limit it was compared with
	Text   string       // the reason in words
}

// String returns the reason's text.
func (r Reason) String() string { return r.Text }

// MarshalJSON writes the reason's text as a JSON string.
func (r Reason) MarshalJSON() ([]byte, error) { return json.Marshal(r.Text) }

// UnmarshalJSON reads a reason's text; its kind is not recorded in JSON, so
// it becomes an OtherReason.
func (r *Reason) UnmarshalJSON(data []byte) error {
	*r = Reason{}
	return json.Unmarshal(data, &r.Text)
}

// limitReason renders a measured value beyond a limit, e.g.
// "overshoot_pct 9.1 > 8 at step 1".
func limitReason(kind ReasonKind, n metrics.Name, step int, v, limit float64) Reason {
	op := ">"
	if kind == BelowMin {
		op = "<"
	}
	return Reason{Kind: kind, Metric: n, Step: step, Value: v, Limit: limit,
		Text: fmt.Sprintf("%s %s %s %s at step %d", n, verdictNumber(v, limit), op, formatFloat(limit), step)}
}

// stillOutsideReason renders a settling time that could not be measured
// but that the record shows above its max: the last sample outside the
// band of half-width band (a fraction) lies later than the max.
func stillOutsideReason(n metrics.Name, step int, lastOutside, max, band float64) Reason {
	return Reason{Kind: StillOutside, Metric: n, Step: step, Value: lastOutside, Limit: max,
		Text: fmt.Sprintf("%s > %s at step %d: still outside the ±%s %% band %s s after the step",
			n, formatFloat(max), step, pct(band), verdictNumber(lastOutside, max))}
}

// guardReason renders a value within its limit but not inside the
// acceptance zone of guarded acceptance, e.g. "overshoot_pct 7.8 within
// the guard band of max 8 (accepted up to 7.5, w = 0.5) at step 1".
func guardReason(n metrics.Name, step int, v, limit, w float64, max bool) Reason {
	word, op, zone := "max", "up to", limit-w
	if !max {
		word, op, zone = "min", "down to", limit+w
	}
	return Reason{Kind: InGuardBand, Metric: n, Step: step, Value: v, Limit: zone,
		Text: fmt.Sprintf("%s %s within the guard band of %s %s (accepted %s %s, w = %s) at step %d",
			n, verdictNumber(v, zone), word, formatFloat(limit), op, verdictSig(zone, 6), verdictSig(w, 4), step)}
}

// noUncertaintyReason renders a check that guarded acceptance cannot
// decide because the guard band is a multiple of U and U is unknown.
func noUncertaintyReason(n metrics.Name, step int) Reason {
	return Reason{Kind: NoUncertainty, Metric: n, Step: step,
		Text: fmt.Sprintf("%s at step %d cannot be judged under guarded acceptance: its guard band is a multiple of U, which could not be evaluated", n, step)}
}

// notMeasuredReason renders a limited metric that could not be measured.
func notMeasuredReason(n metrics.Name, step int, v metrics.Value) Reason {
	return Reason{Kind: NotMeasured, Metric: n, Step: step,
		Text: fmt.Sprintf("%s not measured at step %d: %s", n, step, verdictWhy(v))}
}

// notAMetricReason renders a limit on a name stepgate does not measure.
func notAMetricReason(n metrics.Name, step int) Reason {
	return Reason{Kind: NotAMetric, Metric: n, Step: step,
		Text: fmt.Sprintf("%s is not a metric stepgate measures (step %d)", n, step)}
}

// noStepReason renders a record whose command never changed by minChange.
func noStepReason(minChange float64, responseUnit string) Reason {
	return Reason{Kind: NoStep, Limit: minChange,
		Text: fmt.Sprintf("no step found: the command never changed by min_change %s%s", formatFloat(minChange), unitSuffix(responseUnit))}
}

// UnreadableReason renders a log that cannot be read; detail says where
// and why.
func UnreadableReason(detail string) Reason {
	return Reason{Kind: Unreadable, Text: "log cannot be read: " + detail}
}

// UnusableReason renders a log whose samples are no usable record.
func UnusableReason(err error) Reason {
	return Reason{Kind: Unusable, Text: fmt.Sprintf("log cannot be measured: %v", err)}
}

// DuplicateReason renders a unit id found in other files too.
func DuplicateReason(unit string, others []string) Reason {
	return Reason{Kind: DuplicateUnit, Text: fmt.Sprintf("unit id %q also appears in %s", unit, strings.Join(others, ", "))}
}

// DuplicateFileReason renders a second copy of a log: a file whose bytes
// are those of first (same SHA-256), one test filed twice.
func DuplicateFileReason(unit, first string) Reason {
	return Reason{Kind: DuplicateFile, Text: fmt.Sprintf("unit id %q: this file is a copy of %s (same SHA-256), one test filed twice; counted once as an attempt", unit, first)}
}

// InternalReason renders a failure of stepgate itself while judging a log.
func InternalReason(r any) Reason {
	return Reason{Kind: InternalError, Text: fmt.Sprintf("stepgate failed while judging this log (internal error: %v); please report it with the log", r)}
}

// ReasonTexts returns the texts of rs, in order.
func ReasonTexts(rs []Reason) []string {
	if rs == nil {
		return nil
	}
	out := make([]string, len(rs))
	for i, r := range rs {
		out[i] = r.Text
	}
	return out
}

// TextReasons returns reasons of unknown kind (OtherReason) with the given
// texts, as reasons read back from results.json are; never nil.
func TextReasons(texts ...string) []Reason {
	out := make([]Reason, len(texts))
	for i, t := range texts {
		out[i] = Reason{Text: t}
	}
	return out
}
