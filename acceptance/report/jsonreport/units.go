package jsonreport

import (
	"math"
	"slices"
	"strconv"
	"unicode/utf8"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/internal/jsonfmt"
	"github.com/stepgate/stepgate/metrics"
)

// unitPrefix is the number of spaces before every line of a unit: a unit is
// an element of the top-level "units" array, so it is indented as
// json.MarshalIndent(&unit, "    ", "  ") indents it.
const unitPrefix = 4

// indentLines is a newline followed by enough spaces for the deepest line of
// a unit; nl slices it.
const indentLines = "\n                                "

// unitEncoder appends units as JSON, indented as they stand in results.json,
// without reflection: the bytes are exactly those of
// json.MarshalIndent(&unit, "    ", "  "), including the output of the
// MarshalJSON methods of acceptance.StepResult, acceptance.Prediction,
// acceptance.MetricSet, acceptance.GapSet and metrics.Value. Field order and
// omitempty follow the struct tags of the acceptance types.
//
// The buffers are kept between units, so a batch costs few allocations.
type unitEncoder struct {
	b    []byte
	keys []string // scratch for sorting map keys
	// bad is set when a number is not finite: encoding/json refuses such a
	// unit, so the caller must not use b.
	bad bool
}

// metricKeys are the metric names in the byte order encoding/json sorts
// map keys in, each with its member prefix ready to append.
var metricKeys = func() []metricKey {
	ks := make([]metricKey, len(metrics.Names))
	for i, n := range metrics.Names {
		ks[i] = metricKey{name: n, member: string(appendString(nil, string(n))) + ": ", index: i}
	}
	slices.SortFunc(ks, func(a, b metricKey) int {
		switch {
		case a.name < b.name:
			return -1
		case a.name > b.name:
			return 1
		}
		return 0
	})
	return ks
}()

// metricKey is one metric name and its member prefix, `"name": `.
type metricKey struct {
	name   metrics.Name
	member string
	index  int // position in metrics.Names
}

// unit appends u as an element of the units array. It starts at the
// opening brace; the caller writes the separator and the line before it.
func (e *unitEncoder) unit(u *acceptance.UnitResult) {
	const d = 1 // depth of the unit's members
	e.open(d, `"unit": `)
	e.str(u.Unit)
	e.member(d, `"file": `)
	e.str(u.File)
	e.member(d, `"sha256": `)
	e.str(u.SHA256)
	e.member(d, `"metadata": `)
	e.stringMap(d, u.Metadata)
	e.member(d, `"verdict": `)
	e.str(string(u.Verdict))
	e.member(d, `"reasons": `)
	e.reasons(d, u.Reasons)
	e.member(d, `"steps": `)
	e.array(d, u.Steps == nil, len(u.Steps), func(i int) { e.step(d+1, &u.Steps[i]) })
	e.member(d, `"samples": `)
	e.int(u.Samples)
	if u.Fit != nil {
		e.member(d, `"fit": `)
		e.fit(d, u.Fit)
	}
	e.close(0, '}')
}

// step appends s as acceptance.StepResult.MarshalJSON writes it: the
// fields, then the reasons of the unknown metrics under "unmeasured". d is
// the depth of the line the step opens on.
func (e *unitEncoder) step(d int, s *acceptance.StepResult) {
	m := d + 1
	e.open(m, `"index": `)
	e.int(s.Index)
	e.member(m, `"start_s": `)
	e.float(s.StartS)
	e.member(m, `"from": `)
	e.float(s.From)
	e.member(m, `"to": `)
	e.float(s.To)
	e.member(m, `"verdict": `)
	e.str(string(s.Verdict))
	e.member(m, `"reasons": `)
	e.reasons(m, s.Reasons)
	e.member(m, `"metrics": `)
	e.metricSet(m, &s.Metrics)
	e.member(m, `"checks": `)
	e.array(m, s.Checks == nil, len(s.Checks), func(i int) { e.check(m+1, &s.Checks[i]) })
	if s.Predicted != nil {
		e.member(m, `"predicted": `)
		e.prediction(m, s.Predicted)
	}
	if s.Gap != nil {
		e.member(m, `"gap": `)
		e.gapSet(m, s.Gap)
	}
	if s.Evidence != nil {
		e.member(m, `"evidence": `)
		ev := s.Evidence
		e.open(m+1, `"effort_saturated_pct": `)
		e.value(ev.EffortSaturatedPct)
		e.member(m+1, `"effort_limit": `)
		e.value(ev.EffortLimit)
		e.member(m+1, `"final_drift": `)
		e.value(ev.FinalDrift)
		e.close(m, '}')
	}
	e.member(m, `"unmeasured": `)
	if !e.unmeasured(m, &s.Metrics) {
		e.b = append(e.b, "{}"...)
	}
	e.close(d, '}')
}

// check appends c; d is the depth of the line it opens on.
func (e *unitEncoder) check(d int, c *acceptance.Check) {
	m := d + 1
	e.open(m, `"metric": `)
	e.str(string(c.Metric))
	e.member(m, `"value": `)
	e.floatPtr(c.Value)
	e.member(m, `"min": `)
	e.floatPtr(c.Min)
	e.member(m, `"max": `)
	e.floatPtr(c.Max)
	e.member(m, `"verdict": `)
	e.str(string(c.Verdict))
	if c.Reason != "" {
		e.member(m, `"reason": `)
		e.str(c.Reason)
	}
	e.close(d, '}')
}

// prediction appends p as acceptance.Prediction.MarshalJSON writes it:
// "unmeasured" only when a metric is unknown.
func (e *unitEncoder) prediction(d int, p *acceptance.Prediction) {
	m := d + 1
	e.open(m, `"kind": `)
	e.str(p.Kind)
	e.member(m, `"metrics": `)
	e.metricSet(m, &p.Metrics)
	// The member is written speculatively and dropped when no metric is
	// unknown.
	n := len(e.b)
	e.member(m, `"unmeasured": `)
	if !e.unmeasured(m, &p.Metrics) {
		e.b = e.b[:n]
	}
	e.close(d, '}')
}

// fit appends f; d is the depth of the line it opens on.
func (e *unitEncoder) fit(d int, f *acceptance.Fit) {
	m := d + 1
	e.open(m, `"step": `)
	e.int(f.Step)
	e.member(m, `"static_gain": `)
	e.value(f.StaticGain)
	e.member(m, `"damping": `)
	e.value(f.Damping)
	e.member(m, `"natural_frequency_rad_s": `)
	e.value(f.NaturalFrequency)
	e.member(m, `"dead_time_s": `)
	e.value(f.DeadTime)
	e.member(m, `"rms_residual": `)
	e.value(f.RMSResidual)
	if f.Why != "" {
		e.member(m, `"why": `)
		e.str(f.Why)
	}
	e.close(d, '}')
}

// metricSet appends s as acceptance.MetricSet.MarshalJSON writes it: every
// metric in sorted key order, null where unknown.
func (e *unitEncoder) metricSet(d int, s *acceptance.MetricSet) {
	e.b = append(e.b, '{')
	for k := range metricKeys {
		if k > 0 {
			e.b = append(e.b, ',')
		}
		e.nl(d + 1)
		e.b = append(e.b, metricKeys[k].member...)
		e.value(s.At(metricKeys[k].index))
	}
	e.close(d, '}')
}

// gapSet appends g as acceptance.GapSet.MarshalJSON writes it.
func (e *unitEncoder) gapSet(d int, g *acceptance.GapSet) {
	e.b = append(e.b, '{')
	for k := range metricKeys {
		if k > 0 {
			e.b = append(e.b, ',')
		}
		e.nl(d + 1)
		e.b = append(e.b, metricKeys[k].member...)
		if v, ok := g.At(metricKeys[k].index); ok {
			e.float(v)
		} else {
			e.b = append(e.b, "null"...)
		}
	}
	e.close(d, '}')
}

// unmeasured appends the object of the reasons of s's unknown metrics, as
// the map MetricSet.Unmeasured returns encodes, and reports whether there
// was any; when there was none it appends nothing.
func (e *unitEncoder) unmeasured(d int, s *acceptance.MetricSet) bool {
	some := false
	for k := range metricKeys {
		name := metricKeys[k].name
		if v, _ := s.Lookup(name); v.OK {
			continue
		}
		if some {
			e.b = append(e.b, ',')
		} else {
			e.b = append(e.b, '{')
			some = true
		}
		e.nl(d + 1)
		e.b = append(e.b, metricKeys[k].member...)
		e.str(s.Reason(name))
	}
	if some {
		e.close(d, '}')
	}
	return some
}

// stringMap appends m with its keys in sorted order; null when nil.
func (e *unitEncoder) stringMap(d int, m map[string]string) {
	if m == nil {
		e.b = append(e.b, "null"...)
		return
	}
	if len(m) == 0 {
		e.b = append(e.b, "{}"...)
		return
	}
	keys := e.keys[:0]
	for k := range m {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	e.b = append(e.b, '{')
	for i, k := range keys {
		if i > 0 {
			e.b = append(e.b, ',')
		}
		e.nl(d + 1)
		e.str(k)
		e.b = append(e.b, ": "...)
		e.str(m[k])
	}
	e.close(d, '}')
	clear(keys) // do not keep the batch's strings alive through the scratch
	e.keys = keys[:0]
}

// strings appends s as an array of strings; null when nil.
func (e *unitEncoder) strings(d int, s []string) {
	e.array(d, s == nil, len(s), func(i int) { e.str(s[i]) })
}

// reasons appends the texts of a slice of reasons, as encoding/json
// indents a []acceptance.Reason at depth d.
func (e *unitEncoder) reasons(d int, s []acceptance.Reason) {
	e.array(d, s == nil, len(s), func(i int) { e.str(s[i].Text) })
}

// array appends a slice of n elements as encoding/json indents it at depth
// d: null for a nil slice, [] for an empty one, else one element per line,
// each appended by elem(i).
func (e *unitEncoder) array(d int, isNil bool, n int, elem func(i int)) {
	switch {
	case isNil:
		e.b = append(e.b, "null"...)
	case n == 0:
		e.b = append(e.b, "[]"...)
	default:
		e.b = append(e.b, '[')
		for i := 0; i < n; i++ {
			if i > 0 {
				e.b = append(e.b, ',')
			}
			e.nl(d + 1)
			elem(i)
		}
		e.close(d, ']')
	}
}

// open appends the opening brace of an object and its first member's key;
// d is the depth of the members.
func (e *unitEncoder) open(d int, key string) {
	e.b = append(e.b, '{')
	e.nl(d)
	e.b = append(e.b, key...)
}

// member appends the separator and key of a member after the first.
func (e *unitEncoder) member(d int, key string) {
	e.b = append(e.b, ',')
	e.nl(d)
	e.b = append(e.b, key...)
}

// close ends a non-empty object or array whose opening line is at depth d.
func (e *unitEncoder) close(d int, c byte) {
	e.nl(d)
	e.b = append(e.b, c)
}

// nl appends a newline and the indentation of depth d.
func (e *unitEncoder) nl(d int) {
	n := 1 + unitPrefix + 2*d
	if n <= len(indentLines) {
		e.b = append(e.b, indentLines[:n]...)
		return
	}
	e.b = append(e.b, indentLines...)
	for n -= len(indentLines); n > 0; n-- {
		e.b = append(e.b, ' ')
	}
}

func (e *unitEncoder) int(v int) {
	e.b = strconv.AppendInt(e.b, int64(v), 10)
}

// value appends v as metrics.Value.MarshalJSON writes it: the number, or
// null when unknown.
func (e *unitEncoder) value(v metrics.Value) {
	if !v.OK {
		e.b = append(e.b, "null"...)
		return
	}
	e.float(v.V)
}

func (e *unitEncoder) floatPtr(p *float64) {
	if p == nil {
		e.b = append(e.b, "null"...)
		return
	}
	e.float(*p)
}

// float appends v as encoding/json writes a float64. A number that is not
// finite sets e.bad, as encoding/json fails on it.
func (e *unitEncoder) float(v float64) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		e.bad = true
		e.b = append(e.b, "null"...)
		return
	}
	e.b = jsonfmt.AppendFloat(e.b, v)
}

func (e *unitEncoder) str(s string) {
	e.b = appendString(e.b, s)
}

const hexDigits = "0123456789abcdef"

// htmlSafe marks the ASCII bytes encoding/json copies into a string as they
// are when it escapes HTML (its default): all but control characters, '"',
// '\\', '<', '>' and '&'.
var htmlSafe = func() (t [utf8.RuneSelf]bool) {
	for c := 0x20; c < utf8.RuneSelf; c++ {
		t[c] = true
	}
	for _, c := range `"\<>&` {
		t[c] = false
	}
	return t
}()

// appendString appends s quoted as encoding/json writes a string by default:
// '"' and '\\' escaped with a backslash, \b \f \n \r \t by name, other
// control characters and '<', '>', '&' as \u00XX, U+2028 and U+2029 as
// \u2028 and \u2029, and each invalid UTF-8 byte as \ufffd.
func appendString(b []byte, s string) []byte {
	b = append(b, '"')
	start := 0
	for i := 0; i < len(s); {
		c := s[i]
		if c < utf8.RuneSelf {
			if htmlSafe[c] {
				i++
				continue
			}
			b = append(b, s[start:i]...)
			switch c {
			case '\\', '"':
				b = append(b, '\\', c)
			case '\b':
				b = append(b, '\\', 'b')
			case '\f':
				b = append(b, '\\', 'f')
			case '\n':
				b = append(b, '\\', 'n')
			case '\r':
				b = append(b, '\\', 'r')
			case '\t':
				b = append(b, '\\', 't')
			default:
				b = append(b, '\\', 'u', '0', '0', hexDigits[c>>4], hexDigits[c&0xF])
			}
			i++
			start = i
			continue
		}
		r, size := utf8.DecodeRuneInString(s[i:])
		if r == utf8.RuneError && size == 1 {
			b = append(b, s[start:i]...)
			b = append(b, `\ufffd`...)
			i++
			start = i
			continue
		}
		if r == '\u2028' || r == '\u2029' {
			b = append(b, s[start:i]...)
			b = append(b, '\\', 'u', '2', '0', '2', hexDigits[r&0xF])
			i += size
			start = i
			continue
		}
		i += size
	}
	b = append(b, s[start:]...)
	return append(b, '"')
}
