package record

import (
	"context"
	"fmt"
	"slices"
	"strings"
)

type stepKey struct {
	attempt int64
	index   int
}

// stepLoad says what attachSteps loads.
type stepLoad struct {
	names        []string // the metrics; nil for all
	checks       bool     // the limit checks too
	measuredOnly bool     // no predictions or gaps
}

// allOfSteps loads everything.
var allOfSteps = stepLoad{checks: true}

// attachSteps loads the steps of the attempts and sets them on each
// attempt's Unit. Attempt rows are never changed once recorded, so the steps
// read here belong to the attempts read before.
func (s *Store) attachSteps(ctx context.Context, as []Attempt, load stepLoad) error {
	if len(as) == 0 {
		return nil
	}
	ids := make([]any, len(as))
	for i, a := range as {
		ids[i] = a.ID
	}
	steps := map[stepKey]*Step{}
	byAttempt := map[int64][]*Step{}
	chosen, others, all := splitNames(load.names)
	slots := 3
	if load.measuredOnly {
		slots = 1
	}
	if err := s.loadStepRows(ctx, ids, chosen, slots, steps, byAttempt); err != nil {
		return err
	}
	if all || len(others) > 0 {
		if all {
			others = nil
		}
		if err := s.loadMetricRows(ctx, ids, others, slots, steps); err != nil {
			return err
		}
	}
	if load.checks {
		if err := s.loadCheckRows(ctx, ids, steps); err != nil {
			return err
		}
	}
	for i := range as {
		list := byAttempt[as[i].ID]
		if len(list) == 0 {
			continue
		}
		as[i].Unit.Steps = make([]Step, len(list))
		for j, st := range list {
			sortMetrics(st)
			as[i].Unit.Steps[j] = *st
		}
	}
	return nil
}

// loadStepRows reads the steps of the attempts with the chosen metric
// columns (indexes into stepMetrics).
func (s *Store) loadStepRows(ctx context.Context, ids []any, chosen []int, slots int, steps map[stepKey]*Step, by map[int64][]*Step) error {
	q := `SELECT attempt_id, step_index, start_s, from_level, to_level, verdict, reasons, predicted_kind` +
		chosenColumns(chosen, slots) + `, unknown FROM step WHERE attempt_id IN (` + marks(len(ids)) + `)
		ORDER BY attempt_id, step_index`
	rows, err := s.db.QueryContext(ctx, s.d.render(q), ids...)
	if err != nil {
		return fmt.Errorf("record: querying steps: %w", err)
	}
	defer rows.Close()
	vals := make([]Number, slots*len(chosen))
	for rows.Next() {
		st := &Step{}
		var id int64
		var reasons string
		var kind, unknown *string
		dest := []any{&id, &st.Index, &st.StartS, &st.From, &st.To, &st.Verdict, &reasons, &kind}
		for i := range vals {
			dest = append(dest, &vals[i])
		}
		if err := rows.Scan(append(dest, &unknown)...); err != nil {
			return fmt.Errorf("record: reading a step: %w", err)
		}
		if err := decodeJSON(reasons, "[]", &st.Reasons); err != nil {
			return fmt.Errorf("record: attempt %d step %d: reasons: %w", id, st.Index, err)
		}
		if kind != nil {
			st.Predicted = &Prediction{Kind: *kind}
		}
		if err := placeColumns(st, chosen, slots, vals, unknown); err != nil {
			return fmt.Errorf("record: attempt %d: %w", id, err)
		}
		steps[stepKey{id, st.Index}] = st
		by[id] = append(by[id], st)
	}
	if err := rows.Err(); err != nil {
		return fmt.Errorf("record: querying steps: %w", err)
	}
	return nil
}

func (s *Store) loadMetricRows(ctx context.Context, ids []any, names []string, slots int, steps map[stepKey]*Step) error {
	q := `SELECT attempt_id, step_index, name, measured, measured_reason, predicted, predicted_reason,
		gap, gap_reason FROM metric WHERE attempt_id IN (` + marks(len(ids)) + `)`
	args := ids
	if names != nil {
		if len(names) == 0 {
			return nil
		}
		q += ` AND name IN (` + marks(len(names)) + `)`
		args = slices.Clone(ids)
		for _, n := range names {
			args = append(args, n)
		}
	}
	rows, err := s.db.QueryContext(ctx, s.d.render(q), args...)
	if err != nil {
		return fmt.Errorf("record: querying metrics: %w", err)
	}
	defer rows.Close()
	for rows.Next() {
		var k stepKey
		var name string
		var v [3]Number
		var why [3]*string
		if err := rows.Scan(&k.attempt, &k.index, &name, &v[0], &why[0], &v[1], &why[1], &v[2], &why[2]); err != nil {
			return fmt.Errorf("record: reading a metric: %w", err)
		}
		st := steps[k]
		if st == nil {
			return fmt.Errorf("record: metric %s of attempt %d step %d has no step", name, k.attempt, k.index)
		}
		for k := slots; k < 3; k++ {
			v[k], why[k] = None, nil
		}
		placeMetric(st, name, v, why)
	}
	if err := rows.Err(); err != nil {
		return fmt.Errorf("record: querying metrics: %w", err)
	}
	return nil
}

// placeMetric puts a metric row's measured, predicted and gap values into
// the step's lists; a NULL value with a NULL reason is absent.
func placeMetric(st *Step, name string, v [3]Number, why [3]*string) {
	get := func(i int) (Metric, bool) {
		if !v[i].Valid && why[i] == nil {
			return Metric{}, false
		}
		m := Metric{Name: name, Value: v[i]}
		if why[i] != nil {
			m.Reason = *why[i]
		}
		return m, true
	}
	if m, ok := get(0); ok {
		st.Metrics = append(st.Metrics, m)
	}
	if m, ok := get(1); ok && st.Predicted != nil {
		st.Predicted.Metrics = append(st.Predicted.Metrics, m)
	}
	if m, ok := get(2); ok {
		st.Gaps = append(st.Gaps, m)
	}
}

func (s *Store) loadCheckRows(ctx context.Context, ids []any, steps map[stepKey]*Step) error {
	q := `SELECT attempt_id, step_index, metric, value, min_value, max_value, verdict, reason,
		uncertainty, decision_rule FROM step_check WHERE attempt_id IN (` + marks(len(ids)) + `)
		ORDER BY attempt_id, step_index, position`
	rows, err := s.db.QueryContext(ctx, s.d.render(q), ids...)
	if err != nil {
		return fmt.Errorf("record: querying checks: %w", err)
	}
	defer rows.Close()
	for rows.Next() {
		var k stepKey
		var c Check
		if err := rows.Scan(&k.attempt, &k.index, &c.Metric, &c.Value, &c.Min, &c.Max, &c.Verdict,
			&c.Reason, &c.U, &c.Rule); err != nil {
			return fmt.Errorf("record: reading a check: %w", err)
		}
		st := steps[k]
		if st == nil {
			return fmt.Errorf("record: check of %s, attempt %d step %d, has no step", c.Metric, k.attempt, k.index)
		}
		st.Checks = append(st.Checks, c)
	}
	if err := rows.Err(); err != nil {
		return fmt.Errorf("record: querying checks: %w", err)
	}
	return nil
}

// sortMetrics puts a step's metric lists in name order (byte order, the
// same on every backend).
func sortMetrics(st *Step) {
	byName := func(a, b Metric) int { return strings.Compare(a.Name, b.Name) }
	slices.SortFunc(st.Metrics, byName)
	slices.SortFunc(st.Gaps, byName)
	if st.Predicted != nil {
		slices.SortFunc(st.Predicted.Metrics, byName)
	}
}
