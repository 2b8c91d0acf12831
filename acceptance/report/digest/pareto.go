package digest

import (
	"github.com/stepgate/stepgate/metrics"
	"sort"
	"strings"

	"github.com/stepgate/stepgate/acceptance"
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
// unit-level reason ("log cannot be read", "no step found", "unit id in
// more than one file", or the text before the first colon of another
// reason). A unit counts once under each reason it shows, so the bars can
// add up to more than the units that did not pass. The result is sorted by
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
		stepReasons := map[string]bool{}
		for k := range u.Steps {
			s := &u.Steps[k]
			for _, r := range s.Reasons {
				stepReasons[r] = true
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
			if stepReasons[r] {
				continue
			}
			kind := ReasonKind(r)
			if kind == "" {
				continue
			}
			add(Cause{Verdict: acceptance.Invalid, Key: kind, Label: kind})
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

// ReasonKind groups a unit-level reason: "log cannot be read", "no step
// found", "unit id in more than one file", "record not usable" for a log
// whose samples are not a usable record, "problem in the log file" for a
// reason that starts with a file position (path:line:column), else the
// text before the first colon (at most 60 characters); "" for an empty
// reason.
func ReasonKind(r string) string {
	r = strings.TrimSpace(r)
	switch {
	case r == "":
		return ""
	case strings.HasPrefix(r, "log cannot be read"):
		return "log cannot be read"
	case strings.HasPrefix(r, "no step found"):
		return "no step found"
	case strings.HasPrefix(r, "unit id ") && strings.Contains(r, " also appears in "):
		return "unit id in more than one file"
	case strings.HasPrefix(r, "log "):
		return "record not usable"
	}
	if i := strings.Index(r, ":"); i > 0 {
		r = r[:i]
	}
	if strings.ContainsAny(r, `/\`) || strings.HasSuffix(r, ".csv") || strings.HasSuffix(r, ".tsv") || strings.HasSuffix(r, ".txt") {
		return "problem in the log file"
	}
	if rs := []rune(r); len(rs) > 60 {
		r = strings.TrimSpace(string(rs[:59])) + "…"
	}
	return r
}
