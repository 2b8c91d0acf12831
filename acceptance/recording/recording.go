// Package recording maps a judged batch onto the line record's row types
// (package record) and the record's earlier attempts back onto the batch's
// retest chains. It owns no storage and no judging: the batch decides, the
// record keeps, and this package only translates between their types.
package recording

import (
	"math"
	"strings"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/record"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// Spec is the record's row of the spec the batch ran under: its id,
// revision, SHA-256 and text (the bytes of the spec file, which the
// SHA-256 is of).
func Spec(sp *spec.Spec, text []byte) record.Spec {
	return record.Spec{ID: sp.SpecID, Revision: sp.Revision, SHA256: sp.SHA256, Text: string(text)}
}

// Units returns the record's rows of the batch's units, and the files of
// the units it leaves out: a file that could not be read at all has no
// SHA-256 to be recorded under.
func Units(b *acceptance.Batch) (units []record.Unit, left []string) {
	units = make([]record.Unit, 0, len(b.Units))
	for i := range b.Units {
		u := &b.Units[i]
		if u.SHA256 == "" {
			left = append(left, u.File)
			continue
		}
		units = append(units, unit(u))
	}
	return units, left
}

func unit(u *acceptance.UnitResult) record.Unit {
	r := record.Unit{
		Serial: u.Unit, File: u.File, FileSHA256: u.SHA256, FileModTime: u.FileTime,
		Metadata: u.Metadata, Station: strings.TrimSpace(u.Metadata["station"]),
		Operator: strings.TrimSpace(u.Metadata["operator"]), Lot: u.Lot, Shift: u.Shift,
		StartedAt: acceptance.StartedAt(u.Metadata), Verdict: string(u.Verdict),
		Reasons: acceptance.ReasonTexts(u.Reasons), Steps: make([]record.Step, len(u.Steps)),
	}
	for k := range u.Steps {
		r.Steps[k] = step(&u.Steps[k])
	}
	return r
}

func step(s *acceptance.StepResult) record.Step {
	r := record.Step{
		Index: s.Index, StartS: s.StartS, From: s.From, To: s.To, Verdict: string(s.Verdict),
		Reasons: acceptance.ReasonTexts(s.Reasons), Metrics: metricList(&s.Metrics),
	}
	for _, c := range s.Checks {
		r.Checks = append(r.Checks, record.Check{
			Metric: string(c.Metric), Value: number(c.Value), Min: number(c.Min), Max: number(c.Max),
			Verdict: string(c.Verdict), Reason: c.Reason,
		})
	}
	if s.Predicted != nil {
		r.Predicted = &record.Prediction{Kind: s.Predicted.Kind, Metrics: metricList(&s.Predicted.Metrics)}
	}
	if s.Gap != nil {
		// Only the known gaps: a gap is unknown exactly when the measured or
		// the predicted value is, and those are recorded with their reasons.
		for i, n := range metrics.Names {
			if g, ok := s.Gap.At(i); ok && !math.IsNaN(g) && !math.IsInf(g, 0) {
				r.Gaps = append(r.Gaps, record.Metric{Name: string(n), Value: record.Some(g)})
			}
		}
	}
	return r
}

// metricList lists every metric of m: its value, or its reason for being
// unknown.
func metricList(m *acceptance.MetricSet) []record.Metric {
	out := make([]record.Metric, len(metrics.Names))
	for i, n := range metrics.Names {
		v := m.At(i)
		out[i] = record.Metric{Name: string(n)}
		switch {
		case v.OK && !math.IsNaN(v.V) && !math.IsInf(v.V, 0):
			out[i].Value = record.Some(v.V)
		case strings.TrimSpace(v.Why) != "":
			out[i].Reason = v.Why
		default:
			out[i].Reason = "no reason recorded"
		}
	}
	return out
}

func number(p *float64) record.Number {
	if p == nil || math.IsNaN(*p) {
		return record.None
	}
	return record.Some(*p)
}

// Prior returns the record's earlier attempts as the batch's retest
// chains take them.
func Prior(m map[string][]record.Attempt) []acceptance.PriorAttempt {
	var out []acceptance.PriorAttempt
	for _, as := range m {
		for _, a := range as {
			out = append(out, acceptance.PriorAttempt{
				Serial: a.Unit.Serial, File: a.Unit.File, SHA256: a.Unit.FileSHA256,
				StartedAt: a.Unit.StartedAt, FileTime: a.Unit.FileModTime,
				Verdict: acceptance.Verdict(a.Unit.Verdict), RunTime: a.RunTime,
			})
		}
	}
	return out
}

// Serials returns the batch's serials, each once, in batch order.
func Serials(b *acceptance.Batch) []string {
	var out []string
	for i := range b.Units {
		if i == 0 || b.Units[i].Unit != b.Units[i-1].Unit {
			out = append(out, b.Units[i].Unit)
		}
	}
	return out
}
