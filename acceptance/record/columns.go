package record

import (
	"encoding/json"
	"fmt"
	"strings"
)

// stepMetrics are the metrics that have columns of their own in the step
// table: m_NAME (measured), p_NAME (predicted) and g_NAME (gap). They are
// the step metrics stepgate measured when the schema was made; a metric
// outside this list is stored in the long-form metric table, and a later
// schema version may give it columns. The list is part of schema version 1
// and never changes.
var stepMetrics = []string{
	"dead_time_s", "final_value", "initial_value", "overshoot_pct", "peak_time_s", "peak_value",
	"rise_time_s", "settling_time_s", "steady_state_error", "steady_state_error_pct", "step_size",
}

// stepMetricIndex maps a metric name to its position in stepMetrics.
var stepMetricIndex = func() map[string]int {
	m := make(map[string]int, len(stepMetrics))
	for i, n := range stepMetrics {
		m[n] = i
	}
	return m
}()

// slotPrefix names the three values of a metric: measured, predicted, gap.
var slotPrefix = [3]string{"m_", "p_", "g_"}

// stepMetricColumns gives the column definitions (with a type token) or,
// when def is false, the column names of the step metrics, in the order
// measured, predicted, gap of each metric.
func stepMetricColumns(def bool) []string {
	var cols []string
	for _, n := range stepMetrics {
		for _, p := range slotPrefix {
			c := p + n
			if def {
				c += " {{float}}"
			}
			cols = append(cols, c)
		}
	}
	return cols
}

// unknownReasons is the JSON of the step table's unknown column: why a
// value in a metric column is NULL, keyed by metric name. The column is NULL
// when no value is unknown.
type unknownReasons struct {
	Measured  map[string]string `json:"measured,omitempty"`
	Predicted map[string]string `json:"predicted,omitempty"`
	Gap       map[string]string `json:"gap,omitempty"`
}

func (u *unknownReasons) slot(i int) *map[string]string {
	return [3]*map[string]string{&u.Measured, &u.Predicted, &u.Gap}[i]
}

func (u *unknownReasons) set(i int, name, reason string) {
	m := u.slot(i)
	if *m == nil {
		*m = map[string]string{}
	}
	(*m)[name] = reason
}

// encode gives the column's value: NULL when no reason is held.
func (u *unknownReasons) encode() (any, error) {
	if u.Measured == nil && u.Predicted == nil && u.Gap == nil {
		return nil, nil
	}
	b, err := json.Marshal(u)
	if err != nil {
		return nil, fmt.Errorf("reasons of unknown values: %w", err)
	}
	return string(b), nil
}

// stepValues gives a step's metric column values (in stepMetricColumns
// order), the unknown column, and the metrics that have no column.
func stepValues(st Step) (cols []any, unknown any, others []metricRow, err error) {
	cols = make([]any, 3*len(stepMetrics))
	var why unknownReasons
	var rest Step // the metrics without columns
	lists := [3][]Metric{st.Metrics, nil, st.Gaps}
	if st.Predicted != nil {
		lists[1] = st.Predicted.Metrics
		rest.Predicted = &Prediction{Kind: st.Predicted.Kind}
	}
	for k, list := range lists {
		for _, m := range list {
			i, ok := stepMetricIndex[m.Name]
			if !ok {
				rest.addTo(k, m)
				continue
			}
			sl := slot{m: m, ok: true}
			cols[3*i+k] = sl.value()
			if reason, ok := sl.reason().(string); ok {
				why.set(k, m.Name, reason)
			}
		}
	}
	if len(rest.Metrics)+len(rest.Gaps) > 0 || (rest.Predicted != nil && len(rest.Predicted.Metrics) > 0) {
		others = mergeMetrics(rest)
	}
	unknown, err = why.encode()
	return cols, unknown, others, err
}

// addTo appends m to the step's measured (k = 0), predicted (1) or gap (2)
// metrics.
func (st *Step) addTo(k int, m Metric) {
	switch k {
	case 0:
		st.Metrics = append(st.Metrics, m)
	case 1:
		st.Predicted.Metrics = append(st.Predicted.Metrics, m)
	default:
		st.Gaps = append(st.Gaps, m)
	}
}

// placeColumns puts a step row's metric columns into the step's lists.
// chosen are indexes into stepMetrics; vals holds the first slots values
// (measured, then predicted and gap when slots is 3) of each chosen metric.
func placeColumns(st *Step, chosen []int, slots int, vals []Number, unknown *string) error {
	var why unknownReasons
	if unknown != nil {
		if err := json.Unmarshal([]byte(*unknown), &why); err != nil {
			return fmt.Errorf("step %d: reasons of unknown values: %w", st.Index, err)
		}
	}
	for j, mi := range chosen {
		name := stepMetrics[mi]
		var v [3]Number
		var reasons [3]*string
		for k := range slots {
			v[k] = vals[slots*j+k]
			if r, ok := (*why.slot(k))[name]; ok {
				reasons[k] = &r
			}
		}
		placeMetric(st, name, v, reasons)
	}
	return nil
}

// splitNames sorts the metric names a reader asks for into those with
// columns (as indexes into stepMetrics) and the others. nil asks for all.
func splitNames(names []string) (chosen []int, others []string, all bool) {
	if names == nil {
		for i := range stepMetrics {
			chosen = append(chosen, i)
		}
		return chosen, nil, true
	}
	for _, n := range names {
		if i, ok := stepMetricIndex[n]; ok {
			chosen = append(chosen, i)
		} else {
			others = append(others, n)
		}
	}
	return chosen, others, false
}

// chosenColumns gives the column names of the chosen step metrics: the
// first slots of measured, predicted, gap.
func chosenColumns(chosen []int, slots int) string {
	var b strings.Builder
	for _, i := range chosen {
		for _, p := range slotPrefix[:slots] {
			b.WriteString(", ")
			b.WriteString(p + stepMetrics[i])
		}
	}
	return b.String()
}
