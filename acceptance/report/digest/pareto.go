package digest

import (
	"sort"
	"strings"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/logs"
	"github.com/stepgate/stepgate/metrics"
)

// Cause is one bar of the failure-reason Pareto: the number of units that
// did not pass showing one reason.
type Cause struct {
	// Verdict is Fail for a limit that was exceeded, Invalid for a reason
	// that kept the data from showing pass or fail.
	Verdict acceptance.Verdict
	// Key identifies the reason: "fail max overshoot_pct",
	// "fail min rise_time_s", "not measured settling_time_s", or the kind
	// of a unit-level reason such as "log cannot be read".
	Key string
	// Metric is the metric concerned, "" for a unit-level reason.
	Metric metrics.Name
	// Label reads as a reason, e.g. "overshoot above its max".
	Label string
	// Units counts the units showing the reason.
	Units int
}

// Pareto counts, over the units that did not pass, every reason they show:
// each metric that exceeded its maximum or fell below its minimum on any
// step, each limited metric that could not be measured, and each kind of
// unit-level reason (UnitReasonLabel). A unit counts once under each reason
// it shows, so the bars can add up to more than the units that did not
// pass. The result is sorted by
// count, most first, then failures before invalid reasons, then by key.
func Pareto(b *acceptance.Batch) []Cause {
	count := map[string]*Cause{}
	for i := range b.Units {
		u := &b.Units[i]
		if u.Verdict == acceptance.Pass {
			continue
		}
		seen := map[string]bool{}
		add := func(c Cause) {
			if seen[c.Key] {
				return
			}
			seen[c.Key] = true
			if e, ok := count[c.Key]; ok {
				e.Units++
				return
			}
			c.Units = 1
			count[c.Key] = &c
		}
		stepText := map[string]bool{} // texts of step reasons read back without their kind
		for k := range u.Steps {
			s := &u.Steps[k]
			for _, r := range s.Reasons {
				if r.Kind == acceptance.OtherReason {
					stepText[r.Text] = true
				}
			}
			for _, c := range s.Checks {
				switch c.Verdict {
				case acceptance.Fail:
					side := "max"
					if c.Value != nil && c.Min != nil && *c.Value < *c.Min {
						side = "min"
					}
					if c.Value == nil && c.Max == nil && c.Min != nil {
						side = "min"
					}
					word := "above its max"
					if side == "min" {
						word = "below its min"
					}
					add(Cause{Verdict: acceptance.Fail, Key: "fail " + side + " " + string(c.Metric), Metric: c.Metric,
						Label: MetricLabel(c.Metric) + " " + word})
				case acceptance.Invalid:
					add(Cause{Verdict: acceptance.Invalid, Key: "not measured " + string(c.Metric), Metric: c.Metric,
						Label: MetricLabel(c.Metric) + " not measured"})
				}
			}
		}
		for _, r := range u.Reasons {
			if r.Step > 0 || stepText[r.Text] {
				continue // a step's reason, counted from its check above
			}
			if kind := UnitReasonLabel(r); kind != "" {
				add(Cause{Verdict: acceptance.Invalid, Key: kind, Label: kind})
			}
		}
	}
	out := make([]Cause, 0, len(count))
	for _, c := range count {
		out = append(out, *c)
	}
	sort.Slice(out, func(i, j int) bool {
		a, b := out[i], out[j]
		if a.Units != b.Units {
			return a.Units > b.Units
		}
		if a.Verdict != b.Verdict {
			return a.Verdict == acceptance.Fail
		}
		return a.Key < b.Key
	})
	return out
}

// UnitReasonLabel names the kind of a unit-level reason as the Pareto
// shows it: "log cannot be read", "record not usable", "no step found",
// "unit id in more than one file". Any other reason (an internal error, or
// a reason read back from the text of results.json or built outside the
// runner, whose kind is not known) is shown by its text up to the first
// colon, at most 60 characters, or "problem in the log file" when that text
// names a file; "" for an empty one.
func UnitReasonLabel(r acceptance.Reason) string {
	switch r.Kind {
	case acceptance.Unreadable:
		return "log cannot be read"
	case acceptance.Unusable:
		return "record not usable"
	case acceptance.NoStep:
		return "no step found"
	case acceptance.DuplicateUnit:
		return "unit id in more than one file"
	}
	t := strings.TrimSpace(r.Text)
	if i := strings.Index(t, ":"); i > 0 {
		t = t[:i]
	}
	if strings.ContainsAny(t, `/\`) || logs.IsLogName(t) {
		return "problem in the log file"
	}
	if rs := []rune(t); len(rs) > 60 {
		t = strings.TrimSpace(string(rs[:59])) + "…"
	}
	return t
}
