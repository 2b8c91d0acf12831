package acceptance

import (
	"github.com/stepgate/stepgate/metrics"
)

// MetricSet holds one value, measured or unknown, per metric of
// metrics.Names: fixed arrays rather than a map, so that a batch of many
// thousand steps stays small. The reasons of unknown metrics are held
// apart, since most sets have none. (results.json's form of a set is
// written by package jsonreport.)
type MetricSet struct {
	v     [metrics.NumNames]float64
	known uint16                    // bit i: metric i is known
	why   *[metrics.NumNames]string // reasons of unknown metrics; nil when none has one; shared by copies, never written through
}

// The bit masks of MetricSet and GapSet hold one bit per metric.
var _ [16 - metrics.NumNames]struct{} // a 17th metric needs wider masks

// Set stores the value of metric n; an unknown name is ignored.
func (m *MetricSet) Set(n metrics.Name, v metrics.Value) {
	i := metrics.Index(n)
	if i < 0 {
		return
	}
	m.v[i] = v.V
	if v.OK {
		m.known |= 1 << i
	} else {
		m.known &^= 1 << i
	}
	if m.why == nil && v.Why == "" || m.why != nil && m.why[i] == v.Why {
		return
	}
	// Copies of a set share its reasons, so a change writes a new array
	// rather than through the shared one.
	why := new([metrics.NumNames]string)
	if m.why != nil {
		*why = *m.why
	}
	why[i] = v.Why
	m.why = why
}

// MetricSetOf returns the set of the metrics of one measured step, its
// reasons gathered into one array.
func MetricSetOf(m metrics.StepMetrics) MetricSet {
	var s MetricSet
	var why [metrics.NumNames]string
	someWhy := false
	for i, n := range metrics.Names {
		v, _ := m.Get(n)
		s.v[i] = v.V
		if v.OK {
			s.known |= 1 << i
		}
		if v.Why != "" {
			why[i], someWhy = v.Why, true
		}
	}
	if someWhy {
		s.why = &why
	}
	return s
}

// Lookup returns the value of the named metric; ok is false for a name that
// is not a metric.
func (m *MetricSet) Lookup(name metrics.Name) (v metrics.Value, ok bool) {
	i := metrics.Index(name)
	if i < 0 {
		return metrics.Value{}, false
	}
	return m.At(i), true
}

// Get returns the value of the named metric, unknown for a name that is not
// a metric.
func (m *MetricSet) Get(name metrics.Name) metrics.Value {
	v, _ := m.Lookup(name)
	return v
}

// At returns the value of metric i of metrics.Names.
func (m *MetricSet) At(i int) metrics.Value {
	v := metrics.Value{V: m.v[i], OK: m.known&(1<<i) != 0}
	if m.why != nil {
		v.Why = m.why[i]
	}
	return v
}

// Reason returns why the named metric is unknown ("" when it is known or not
// a metric).
func (m *MetricSet) Reason(name metrics.Name) string {
	v, ok := m.Lookup(name)
	if !ok || v.OK {
		return ""
	}
	return verdictWhy(v)
}

// Unmeasured maps every unknown metric to the reason it is unknown.
func (m *MetricSet) Unmeasured() map[metrics.Name]string {
	out := map[metrics.Name]string{}
	for i, n := range metrics.Names {
		if v := m.At(i); !v.OK {
			out[n] = verdictWhy(v)
		}
	}
	return out
}

// GapSet holds measured − predicted per metric, where both are known.
type GapSet struct {
	v     [metrics.NumNames]float64
	known uint16
}

// Get returns the gap of the named metric, nil where it is unknown. A nil
// set has no gaps.
func (g *GapSet) Get(name metrics.Name) *float64 {
	if g == nil {
		return nil
	}
	i := metrics.Index(name)
	if i < 0 || g.known&(1<<i) == 0 {
		return nil
	}
	v := g.v[i]
	return &v
}

// At returns the gap of metric i of metrics.Names; ok is false where it is
// unknown. A nil set has no gaps.
func (g *GapSet) At(i int) (gap float64, ok bool) {
	if g == nil || g.known&(1<<i) == 0 {
		return 0, false
	}
	return g.v[i], true
}

// GapBetween returns measured − predicted for every metric known in both
// sets.
func GapBetween(measured, predicted *MetricSet) *GapSet {
	g := &GapSet{}
	for i := range metrics.Names {
		meas, pred := measured.At(i), predicted.At(i)
		if meas.OK && pred.OK {
			g.set(i, meas.V-pred.V)
		}
	}
	return g
}

// set stores the gap of metric i.
func (g *GapSet) set(i int, v float64) {
	g.v[i] = v
	g.known |= 1 << i
}

// MetricsOf returns the set holding the values of m (keys are metric
// names; other keys are ignored). Metrics missing from m are unknown.
func MetricsOf(m map[metrics.Name]metrics.Value) MetricSet {
	var s MetricSet
	for _, n := range metrics.Names {
		s.Set(n, metrics.Unknown("not measured"))
	}
	for k, v := range m {
		s.Set(k, v)
	}
	return s
}

// GapsOf returns the set holding the gaps of m; nil values are unknown.
func GapsOf(m map[metrics.Name]*float64) *GapSet {
	g := &GapSet{}
	for k, v := range m {
		if i := metrics.Index(k); i >= 0 && v != nil {
			g.set(i, *v)
		}
	}
	return g
}
