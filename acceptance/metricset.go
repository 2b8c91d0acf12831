package acceptance

import (
	"encoding/json"
	"fmt"
	"sort"
	"strings"

	"github.com/stepgate/stepgate/metrics"
)

// MetricSet holds one value, measured or unknown, per metric of
// metrics.Names: a fixed array rather than a map, so that a batch of many
// thousand steps stays small. In JSON it is an object keyed by metric name,
// each value a number or null, keys in sorted order (as a map encodes).
type MetricSet struct {
	v [metrics.NumNames]metrics.Value
}

// Set stores the value of metric n; an unknown name is ignored.
func (m *MetricSet) Set(n metrics.Name, v metrics.Value) {
	if i := metrics.Index(n); i >= 0 {
		m.v[i] = v
	}
}

// Lookup returns the value of the named metric; ok is false for a name that
// is not a metric.
func (m *MetricSet) Lookup(name string) (v metrics.Value, ok bool) {
	i := metrics.Index(metrics.Name(name))
	if i < 0 {
		return metrics.Value{}, false
	}
	return m.v[i], true
}

// Get returns the value of the named metric, unknown for a name that is not
// a metric.
func (m *MetricSet) Get(name string) metrics.Value {
	v, _ := m.Lookup(name)
	return v
}

// Reason returns why the named metric is unknown ("" when it is known or not
// a metric).
func (m *MetricSet) Reason(name string) string {
	v, ok := m.Lookup(name)
	if !ok || v.OK {
		return ""
	}
	return verdictWhy(v)
}

// Unmeasured maps every unknown metric to the reason it is unknown.
func (m *MetricSet) Unmeasured() map[string]string {
	out := map[string]string{}
	for i, n := range metrics.Names {
		if !m.v[i].OK {
			out[string(n)] = verdictWhy(m.v[i])
		}
	}
	return out
}

// sortedNames is metrics.Names in the byte order encoding/json sorts map
// keys in.
var sortedNames = func() []int {
	idx := make([]int, len(metrics.Names))
	for i := range idx {
		idx[i] = i
	}
	sort.Slice(idx, func(a, b int) bool { return metrics.Names[idx[a]] < metrics.Names[idx[b]] })
	return idx
}()

// MarshalJSON writes the set as an object: name → number or null.
func (m MetricSet) MarshalJSON() ([]byte, error) {
	return metricObject(func(i int) ([]byte, error) { return json.Marshal(m.v[i]) })
}

// metricObject writes a JSON object with one member per metric, keys in
// sorted order, each value given by value(index into metrics.Names).
func metricObject(value func(i int) ([]byte, error)) ([]byte, error) {
	var b strings.Builder
	b.WriteByte('{')
	for k, i := range sortedNames {
		if k > 0 {
			b.WriteByte(',')
		}
		fmt.Fprintf(&b, "%q:", metrics.Names[i])
		data, err := value(i)
		if err != nil {
			return nil, err
		}
		b.Write(data)
	}
	b.WriteByte('}')
	return []byte(b.String()), nil
}

// UnmarshalJSON reads the object MarshalJSON writes; null is unknown with no
// reason.
func (m *MetricSet) UnmarshalJSON(data []byte) error {
	var raw map[string]*float64
	if err := json.Unmarshal(data, &raw); err != nil {
		return err
	}
	*m = MetricSet{}
	for k, v := range raw {
		if v != nil {
			m.Set(metrics.Name(k), metrics.Known(*v))
		} else {
			m.Set(metrics.Name(k), metrics.Unknown(""))
		}
	}
	return nil
}

// GapSet holds measured − predicted per metric, where both are known.
type GapSet struct {
	v     [metrics.NumNames]float64
	known uint16
}

// Get returns the gap of the named metric, nil where it is unknown. A nil
// set has no gaps.
func (g *GapSet) Get(name string) *float64 {
	if g == nil {
		return nil
	}
	i := metrics.Index(metrics.Name(name))
	if i < 0 || g.known&(1<<i) == 0 {
		return nil
	}
	v := g.v[i]
	return &v
}

// set stores the gap of metric i.
func (g *GapSet) set(i int, v float64) {
	g.v[i] = v
	g.known |= 1 << i
}

// MarshalJSON writes the set as an object: name → number or null.
func (g GapSet) MarshalJSON() ([]byte, error) {
	return metricObject(func(i int) ([]byte, error) {
		if g.known&(1<<i) == 0 {
			return []byte("null"), nil
		}
		return json.Marshal(g.v[i])
	})
}

// MarshalJSON adds the reasons for the unknown metrics under "unmeasured".
func (s StepResult) MarshalJSON() ([]byte, error) {
	type plain StepResult
	return json.Marshal(struct {
		plain
		Unmeasured map[string]string `json:"unmeasured"`
	}{plain(s), s.Metrics.Unmeasured()})
}

// MarshalJSON adds the reasons for the unknown metrics under "unmeasured".
func (p Prediction) MarshalJSON() ([]byte, error) {
	type plain Prediction
	un := p.Metrics.Unmeasured()
	if len(un) == 0 {
		un = nil
	}
	return json.Marshal(struct {
		plain
		Unmeasured map[string]string `json:"unmeasured,omitempty"`
	}{plain(p), un})
}

// MetricsOf returns the set holding the values of m (keys are metric
// names; other keys are ignored). Metrics missing from m are unknown.
func MetricsOf(m map[string]metrics.Value) MetricSet {
	var s MetricSet
	for i := range s.v {
		s.v[i] = metrics.Unknown("not measured")
	}
	for k, v := range m {
		s.Set(metrics.Name(k), v)
	}
	return s
}

// GapsOf returns the set holding the gaps of m; nil values are unknown.
func GapsOf(m map[string]*float64) *GapSet {
	g := &GapSet{}
	for k, v := range m {
		if i := metrics.Index(metrics.Name(k)); i >= 0 && v != nil {
			g.set(i, *v)
		}
	}
	return g
}
