package jsonreport

import (
	"slices"
	"strings"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/internal/jsonfmt"
	"github.com/stepgate/stepgate/metrics"
)

// encoder appends the members of results.json. Its buffer is kept between
// units, so a batch costs few allocations.
type encoder struct {
	jsonfmt.Indented
}

// Float appends v rounded to jsonfmt.Digits significant digits: every
// number in results.json is written at that precision (see jsonfmt.Round).
func (e *encoder) Float(v float64) { e.Indented.Float(jsonfmt.Round(v, jsonfmt.Digits)) }

// FloatPtr appends *p rounded as Float does, or null when p is nil.
func (e *encoder) FloatPtr(p *float64) {
	if p == nil {
		e.Null()
		return
	}
	e.Float(*p)
}

// Floats appends s as an array of numbers rounded as Float does; null when
// nil.
func (e *encoder) Floats(d int, s []float64) {
	e.Array(d, s == nil, len(s), func(i int) { e.Float(s[i]) })
}

// metricKeys are the metric names in byte order, the order of the keys of
// every metric object, each with its member prefix ready to append.
var metricKeys = func() []metricKey {
	ks := make([]metricKey, len(metrics.Names))
	for i, n := range metrics.Names {
		ks[i] = metricKey{name: n, member: string(jsonfmt.AppendString(nil, string(n))) + ": ", index: i}
	}
	slices.SortFunc(ks, func(a, b metricKey) int { return strings.Compare(string(a.name), string(b.name)) })
	return ks
}()

// metricKey is one metric name and its member prefix, `"name": `.
type metricKey struct {
	name   metrics.Name
	member string
	index  int // position in metrics.Names
}

// unit appends u, an element of the units array whose opening line is at
// depth d.
func (e *encoder) unit(d int, u *acceptance.UnitResult) {
	m := d + 1
	e.Open(m, `"unit": `)
	e.Str(u.Unit)
	e.Member(m, `"file": `)
	e.Str(u.File)
	e.Member(m, `"sha256": `)
	e.Str(u.SHA256)
	e.Member(m, `"metadata": `)
	e.StringMap(m, u.Metadata)
	e.Member(m, `"verdict": `)
	e.Str(string(u.Verdict))
	e.Member(m, `"reasons": `)
	e.reasons(m, u.Reasons)
	e.Member(m, `"steps": `)
	e.Array(m, u.Steps == nil, len(u.Steps), func(i int) { e.step(m+1, &u.Steps[i]) })
	e.Member(m, `"samples": `)
	e.Int(u.Samples)
	e.Member(m, `"attempt": `)
	e.Int(u.Attempt)
	e.Member(m, `"attempts": `)
	e.Int(u.Attempts)
	e.Member(m, `"lot": `)
	e.Str(u.Lot)
	e.Member(m, `"shift": `)
	e.Str(u.Shift)
	if u.Fit != nil {
		e.Member(m, `"fit": `)
		e.fit(m, u.Fit)
	}
	if u.Causes != nil {
		e.Member(m, `"causes": `)
		e.Array(m, false, len(u.Causes), func(i int) { e.Str(u.Causes[i]) })
	}
	if len(u.Axes) > 0 {
		e.Member(m, `"axes": `)
		e.Array(m, false, len(u.Axes), func(i int) { e.axis(m+1, &u.Axes[i]) })
	}
	e.Close(d, '}')
}

// axis appends a; d is the depth of the line it opens on.
func (e *encoder) axis(d int, a *acceptance.AxisResult) {
	m := d + 1
	e.Open(m, `"name": `)
	e.Str(a.Name)
	e.Member(m, `"verdict": `)
	e.Str(string(a.Verdict))
	e.Member(m, `"reasons": `)
	e.reasons(m, a.Reasons)
	e.Close(d, '}')
}

// step appends s: its fields, then the reasons of the unknown metrics
// under "unmeasured". d is the depth of the line the step opens on.
func (e *encoder) step(d int, s *acceptance.StepResult) {
	m := d + 1
	e.Open(m, `"index": `)
	e.Int(s.Index)
	if s.Axis != "" {
		e.Member(m, `"axis": `)
		e.Str(s.Axis)
	}
	e.Member(m, `"start_s": `)
	e.Float(s.StartS)
	e.Member(m, `"from": `)
	e.Float(s.From)
	e.Member(m, `"to": `)
	e.Float(s.To)
	e.Member(m, `"verdict": `)
	e.Str(string(s.Verdict))
	e.Member(m, `"reasons": `)
	e.reasons(m, s.Reasons)
	e.Member(m, `"metrics": `)
	e.metricSet(m, &s.Metrics)
	e.Member(m, `"checks": `)
	e.Array(m, s.Checks == nil, len(s.Checks), func(i int) { e.check(m+1, &s.Checks[i]) })
	e.Member(m, `"uncertainty": `)
	e.metricSet(m, &s.Uncertainty)
	if s.Predicted != nil {
		e.Member(m, `"predicted": `)
		e.prediction(m, s.Predicted)
	}
	if s.Gap != nil {
		e.Member(m, `"gap": `)
		e.gapSet(m, s.Gap)
	}
	if s.Evidence != nil {
		e.Member(m, `"evidence": `)
		e.evidence(m, s.Evidence)
	}
	e.Member(m, `"unmeasured": `)
	if !e.unmeasured(m, &s.Metrics) {
		e.B = append(e.B, "{}"...)
	}
	e.Close(d, '}')
}

// reasons appends the texts of reasons as an array of strings; null when
// nil.
func (e *encoder) reasons(d int, s []acceptance.Reason) {
	e.Array(d, s == nil, len(s), func(i int) { e.Str(s[i].Text) })
}

// check appends c; d is the depth of the line it opens on.
func (e *encoder) check(d int, c *acceptance.Check) {
	m := d + 1
	e.Open(m, `"metric": `)
	e.Str(string(c.Metric))
	e.Member(m, `"value": `)
	e.FloatPtr(c.Value)
	e.Member(m, `"min": `)
	e.FloatPtr(c.Min)
	e.Member(m, `"max": `)
	e.FloatPtr(c.Max)
	e.Member(m, `"verdict": `)
	e.Str(string(c.Verdict))
	if c.Reason != "" {
		e.Member(m, `"reason": `)
		e.Str(c.Reason)
	}
	e.Member(m, `"u": `)
	e.FloatPtr(c.U)
	e.Member(m, `"conformity": `)
	if c.Conformity == "" {
		e.Null()
	} else {
		e.Str(string(c.Conformity))
	}
	e.Member(m, `"resolution": `)
	e.FloatPtr(c.Resolution)
	if c.GuardBand != nil {
		e.Member(m, `"guard_band": `)
		e.Float(*c.GuardBand)
	}
	e.Close(d, '}')
}

// evidence appends ev; d is the depth of the line it opens on.
func (e *encoder) evidence(d int, ev *acceptance.StepEvidence) {
	e.Open(d+1, `"effort_saturated_pct": `)
	e.value(ev.EffortSaturatedPct)
	e.Member(d+1, `"effort_limit": `)
	e.value(ev.EffortLimit)
	e.Member(d+1, `"final_drift": `)
	e.value(ev.FinalDrift)
	e.Close(d, '}')
}

// prediction appends p, with "unmeasured" only when a metric is unknown.
func (e *encoder) prediction(d int, p *acceptance.Prediction) {
	m := d + 1
	e.Open(m, `"kind": `)
	e.Str(p.Kind)
	e.Member(m, `"metrics": `)
	e.metricSet(m, &p.Metrics)
	// The member is written speculatively and dropped when no metric is
	// unknown.
	n := len(e.B)
	e.Member(m, `"unmeasured": `)
	if !e.unmeasured(m, &p.Metrics) {
		e.B = e.B[:n]
	}
	e.Close(d, '}')
}

// fit appends f; d is the depth of the line it opens on.
func (e *encoder) fit(d int, f *acceptance.Fit) {
	m := d + 1
	e.Open(m, `"step": `)
	e.Int(f.Step)
	e.Member(m, `"static_gain": `)
	e.value(f.StaticGain)
	e.Member(m, `"damping": `)
	e.value(f.Damping)
	e.Member(m, `"natural_frequency_rad_s": `)
	e.value(f.NaturalFrequency)
	e.Member(m, `"dead_time_s": `)
	e.value(f.DeadTime)
	e.Member(m, `"rms_residual": `)
	e.value(f.RMSResidual)
	if f.Why != "" {
		e.Member(m, `"why": `)
		e.Str(f.Why)
	}
	e.Close(d, '}')
}

// metricSet appends s: every metric in key order, null where unknown.
func (e *encoder) metricSet(d int, s *acceptance.MetricSet) {
	e.B = append(e.B, '{')
	for k := range metricKeys {
		if k > 0 {
			e.B = append(e.B, ',')
		}
		e.NL(d + 1)
		e.B = append(e.B, metricKeys[k].member...)
		e.value(s.At(metricKeys[k].index))
	}
	e.Close(d, '}')
}

// gapSet appends g: every metric in key order, null where the gap is
// unknown.
func (e *encoder) gapSet(d int, g *acceptance.GapSet) {
	e.B = append(e.B, '{')
	for k := range metricKeys {
		if k > 0 {
			e.B = append(e.B, ',')
		}
		e.NL(d + 1)
		e.B = append(e.B, metricKeys[k].member...)
		if v, ok := g.At(metricKeys[k].index); ok {
			e.Float(v)
		} else {
			e.Null()
		}
	}
	e.Close(d, '}')
}

// unmeasured appends the object of the reasons of s's unknown metrics, in
// key order, and reports whether there was any; when there was none it
// appends nothing.
func (e *encoder) unmeasured(d int, s *acceptance.MetricSet) bool {
	some := false
	for k := range metricKeys {
		name := metricKeys[k].name
		if v, _ := s.Lookup(name); v.OK {
			continue
		}
		if some {
			e.B = append(e.B, ',')
		} else {
			e.B = append(e.B, '{')
			some = true
		}
		e.NL(d + 1)
		e.B = append(e.B, metricKeys[k].member...)
		e.Str(s.Reason(name))
	}
	if some {
		e.Close(d, '}')
	}
	return some
}

// value appends v: the number, or null when unknown.
func (e *encoder) value(v metrics.Value) {
	if !v.OK {
		e.Null()
		return
	}
	e.Float(v.V)
}
