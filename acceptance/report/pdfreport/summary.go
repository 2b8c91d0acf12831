package pdfreport

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math"
	"sort"
	"strings"
	"time"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/metrics"
)

// ReportID returns the identification that every page of the report and the
// workbook carry: spec id, revision and the first 8 hex digits of a SHA-256
// over the spec's SHA-256, the report date, the tool name and version, and
// every unit's id and file SHA-256 in report order, e.g.
// "ACT-25-C-8f3a01bc". The same inputs give the same id wherever the files
// lie; a change in any input file, the spec, the tool or the date gives
// another. Characters that cannot be printed are cleaned as Clean does.
func ReportID(b *acceptance.Batch) string {
	h := sha256.New()
	fmt.Fprintf(h, "stepgate report id 1\nspec %s\ndate %s\ntool %s %s\n",
		b.Spec.SHA256, b.ReportDate, b.Tool.Name, b.Tool.Version)
	for _, u := range b.Units {
		fmt.Fprintf(h, "unit %q %s\n", u.Unit, u.SHA256)
	}
	sum := hex.EncodeToString(h.Sum(nil))[:8]
	var parts []string
	for _, p := range []string{b.Spec.SpecID, b.Spec.Revision} {
		if p = strings.TrimSpace(Clean(p)); p != "" {
			parts = append(parts, p)
		}
	}
	return strings.Join(append(parts, sum), "-")
}

// ReportTime parses the batch's report date (YYYY-MM-DD) as midnight UTC,
// the time stamped into document properties so that the same batch gives the
// same bytes.
func ReportTime(b *acceptance.Batch) (time.Time, error) {
	t, err := time.Parse("2006-01-02", b.ReportDate)
	if err != nil {
		return time.Time{}, fmt.Errorf("report date %q: want YYYY-MM-DD", b.ReportDate)
	}
	return t, nil
}

// LimitedMetrics returns the metrics the batch's limits bound, in the
// report order of metrics.Names, followed by any other limited name in
// alphabetical order.
func LimitedMetrics(b *acceptance.Batch) []string {
	var out []string
	seen := map[string]bool{}
	for _, n := range metrics.Names {
		if _, ok := b.Limits[string(n)]; ok {
			out = append(out, string(n))
			seen[string(n)] = true
		}
	}
	var rest []string
	for k := range b.Limits {
		if !seen[k] {
			rest = append(rest, k)
		}
	}
	sort.Strings(rest)
	return append(out, rest...)
}

// MetricUnit returns the unit a metric is expressed in: seconds for times,
// percent for the percentages, and the spec's response unit for levels and
// errors (empty when the spec names none).
func MetricUnit(name, responseUnit string) string {
	switch {
	case strings.HasSuffix(name, "_s"):
		return "s"
	case strings.HasSuffix(name, "_pct"):
		return "%"
	}
	switch metrics.Name(name) {
	case metrics.StepSize, metrics.InitialValue, metrics.FinalValue, metrics.PeakValue, metrics.SteadyStateError:
		return responseUnit
	}
	return ""
}

// ResponseUnit returns the spec's response unit, or "" without a spec.
func ResponseUnit(b *acceptance.Batch) string {
	if b.SpecDoc == nil {
		return ""
	}
	return b.SpecDoc.ResponseUnit
}

// Yield returns the fraction of units that passed; ok is false when the
// batch has no units, where a yield means nothing.
func Yield(s acceptance.Summary) (y float64, ok bool) {
	if s.Units <= 0 {
		return 0, false
	}
	return float64(s.Pass) / float64(s.Units), true
}

// Comparison sets the model's prediction of one metric for one nominal step
// beside what the batch achieved on the matching recorded steps.
type Comparison struct {
	From, To  float64 // the nominal step
	Metric    string
	Kind      string        // "realised" or "ideal"
	Predicted metrics.Value // unknown with the reason when not predicted
	// Measured counts the matching steps on which the metric was measured;
	// Steps counts the matching steps.
	Measured, Steps int
	// Mean, Min and Max of the measured values; unknown when none was.
	Mean, Min, Max metrics.Value
}

// Compare returns, for every nominal step of the batch's model and every
// limited metric, the prediction (realised when b.Model.Realised, else
// ideal) and the mean, lowest and highest measured value over the recorded
// steps with the same command change (levels within 1 % of the step size).
// It returns nil when the batch has no model.
func Compare(b *acceptance.Batch) []Comparison {
	if b.Model == nil {
		return nil
	}
	var out []Comparison
	for _, n := range b.Model.Nominal {
		pred, kind := n.Ideal, "ideal"
		if b.Model.Realised {
			pred, kind = n.Realised, "realised"
		}
		tol := 0.01 * math.Abs(n.To-n.From)
		for _, m := range LimitedMetrics(b) {
			c := Comparison{From: n.From, To: n.To, Metric: m, Kind: kind}
			if v, ok := pred.Metrics[m]; ok {
				c.Predicted = v
				if !v.OK && v.Why == "" {
					c.Predicted.Why = pred.Unmeasured[m]
				}
			} else if why, ok := pred.Unmeasured[m]; ok {
				c.Predicted = metrics.Unknown(why)
			} else {
				c.Predicted = metrics.Unknown("the model did not predict this metric")
			}
			if !c.Predicted.OK && c.Predicted.Why == "" {
				c.Predicted.Why = "not predicted"
			}
			sum, lo, hi := 0.0, math.Inf(1), math.Inf(-1)
			for _, u := range b.Units {
				for _, s := range u.Steps {
					if math.Abs(s.From-n.From) > tol || math.Abs(s.To-n.To) > tol {
						continue
					}
					c.Steps++
					v, ok := s.Metrics[m]
					if !ok || !v.OK {
						continue
					}
					c.Measured++
					sum += v.V
					lo, hi = math.Min(lo, v.V), math.Max(hi, v.V)
				}
			}
			if c.Measured > 0 {
				c.Mean = metrics.Known(sum / float64(c.Measured))
				c.Min, c.Max = metrics.Known(lo), metrics.Known(hi)
			} else {
				why := "no matching step was measured"
				if c.Steps == 0 {
					why = "no recorded step has this command change"
				}
				c.Mean, c.Min, c.Max = metrics.Unknown(why), metrics.Unknown(why), metrics.Unknown(why)
			}
			out = append(out, c)
		}
	}
	return out
}

// FirstReason returns the unit's first reason, or the first reason of its
// first step that has one, or "" when nothing was reported.
func FirstReason(u *acceptance.UnitResult) string {
	if len(u.Reasons) > 0 {
		return u.Reasons[0]
	}
	for _, s := range u.Steps {
		if len(s.Reasons) > 0 {
			return s.Reasons[0]
		}
	}
	return ""
}
