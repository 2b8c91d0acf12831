package record

import (
	"context"
	"crypto/sha256"
	"database/sql"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"strings"
)

// writer inserts one run's rows inside a transaction. Steps, metrics and
// checks are buffered and written as multi-row INSERTs, which cuts the
// statements per unit from dozens to a fraction of one.
type writer struct {
	ctx     context.Context
	tx      *sql.Tx
	d       dialect
	steps   *batch
	metrics *batch
	checks  *batch
}

func newWriter(ctx context.Context, tx *sql.Tx, d dialect) *writer {
	return &writer{
		ctx: ctx, tx: tx, d: d,
		steps: newBatch(d, "step", append(append([]string{"attempt_id", "step_index", "start_s", "from_level",
			"to_level", "verdict", "reasons", "predicted_kind"}, stepMetricColumns(false)...), "unknown")...),
		metrics: newBatch(d, "metric", "attempt_id", "step_index", "name", "measured", "measured_reason",
			"predicted", "predicted_reason", "gap", "gap_reason"),
		checks: newBatch(d, "step_check", "attempt_id", "step_index", "position", "metric", "value",
			"min_value", "max_value", "verdict", "reason", "uncertainty", "decision_rule"),
	}
}

func (w *writer) insertRun(r Run, opts string) (int64, error) {
	var id int64
	err := w.tx.QueryRowContext(w.ctx, w.d.render(
		`INSERT INTO run (run_at, tool_version, options, ran_by, report_id) VALUES (?, ?, ?, ?, ?) RETURNING id`),
		w.d.timeArg(r.Time), r.ToolVersion, opts, r.RanBy, r.ReportID).Scan(&id)
	if err != nil {
		return 0, fmt.Errorf("inserting the run: %w", err)
	}
	return id, nil
}

// upsertSpec returns the row id of the spec, inserting it when it is new.
func (w *writer) upsertSpec(sp Spec) (int64, error) {
	_, err := w.tx.ExecContext(w.ctx, w.d.render(
		`INSERT INTO spec (spec_id, revision, sha256, body) VALUES (?, ?, ?, ?)
		 ON CONFLICT (spec_id, revision, sha256) DO NOTHING`),
		sp.ID, sp.Revision, sp.SHA256, sp.Text)
	if err != nil {
		return 0, fmt.Errorf("inserting spec %s revision %s: %w", sp.ID, sp.Revision, err)
	}
	var id int64
	err = w.tx.QueryRowContext(w.ctx, w.d.render(
		`SELECT id FROM spec WHERE spec_id = ? AND revision = ? AND sha256 = ?`),
		sp.ID, sp.Revision, sp.SHA256).Scan(&id)
	if err != nil {
		return 0, fmt.Errorf("finding spec %s revision %s: %w", sp.ID, sp.Revision, err)
	}
	return id, nil
}

var attemptInsertCols = []string{"run_id", "spec_ref", "serial", "file_path", "file_sha256", "file_mtime",
	"metadata", "station", "operator", "lot", "shift", "started_at", "verdict", "reasons"}

// insertAttempts inserts the attempt rows of a chunk of units and returns
// their ids, 0 for a unit whose content is already recorded under the spec
// (by an earlier run, earlier in this run, or by a concurrent writer). seen
// holds the content hashes met so far in this run.
func (w *writer) insertAttempts(runID, specRef int64, units []Unit, seen map[string]bool) ([]int64, error) {
	ids := make([]int64, len(units))
	known, err := w.recorded(specRef, units)
	if err != nil {
		return nil, err
	}
	b := newBatch(w.d, "attempt", attemptInsertCols...)
	for i := range units {
		u := &units[i]
		if known[u.FileSHA256] || seen[u.FileSHA256] {
			continue
		}
		seen[u.FileSHA256] = true
		meta := "{}"
		if len(u.Metadata) > 0 {
			m, err := json.Marshal(u.Metadata)
			if err != nil {
				return nil, fmt.Errorf("unit %q (%s): metadata: %w", u.Serial, u.File, err)
			}
			meta = string(m)
		}
		b.add(runID, specRef, u.Serial, u.File, u.FileSHA256, w.d.timeArg(u.FileModTime), meta,
			u.Station, u.Operator, u.Lot, u.Shift, w.d.timeArg(u.StartedAt), u.Verdict, jsonList(u.Reasons))
	}
	if len(b.args) == 0 {
		return ids, nil
	}
	got, err := w.returning(b.statement(len(b.args)/len(attemptInsertCols))+
		" ON CONFLICT (file_sha256, spec_ref) DO NOTHING RETURNING file_sha256, id", b.args)
	if err != nil {
		return nil, fmt.Errorf("inserting %d attempts: %w", len(b.args)/len(attemptInsertCols), err)
	}
	for i := range units {
		if id, ok := got[units[i].FileSHA256]; ok {
			ids[i] = id
			delete(got, units[i].FileSHA256) // a repeat later in the chunk is skipped
		}
	}
	return ids, nil
}

// recorded returns which of the units' content hashes are already recorded
// under the spec.
func (w *writer) recorded(specRef int64, units []Unit) (map[string]bool, error) {
	args := []any{specRef}
	for i := range units {
		args = append(args, units[i].FileSHA256)
	}
	q := w.d.render("SELECT file_sha256, 0 FROM attempt WHERE spec_ref = ? AND file_sha256 IN (" + marks(len(units)) + ")")
	got, err := w.returning(q, args)
	if err != nil {
		return nil, fmt.Errorf("looking up recorded files: %w", err)
	}
	known := make(map[string]bool, len(got))
	for sha := range got {
		known[sha] = true
	}
	return known, nil
}

// returning runs a rendered query whose rows are (text, integer) pairs.
func (w *writer) returning(q string, args []any) (map[string]int64, error) {
	rows, err := w.tx.QueryContext(w.ctx, q, args...)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	out := map[string]int64{}
	for rows.Next() {
		var k string
		var v int64
		if err := rows.Scan(&k, &v); err != nil {
			return nil, err
		}
		out[k] = v
	}
	return out, rows.Err()
}

// addSteps buffers the rows of a unit's steps.
func (w *writer) addSteps(id int64, steps []Step) error {
	for _, st := range steps {
		var kind any
		if st.Predicted != nil {
			kind = st.Predicted.Kind
		}
		cols, unknown, others, err := stepValues(st)
		if err != nil {
			return fmt.Errorf("step %d: %w", st.Index, err)
		}
		w.steps.add(id, st.Index, st.StartS, st.From, st.To, st.Verdict, jsonList(st.Reasons), kind)
		w.steps.add(cols...)
		w.steps.add(unknown)
		for _, r := range others {
			w.metrics.add(id, st.Index, r.name, r.vals[0].value(), r.vals[0].reason(),
				r.vals[1].value(), r.vals[1].reason(), r.vals[2].value(), r.vals[2].reason())
		}
		for i, c := range st.Checks {
			w.checks.add(id, st.Index, i+1, c.Metric, c.Value.driverValue(), c.Min.driverValue(),
				c.Max.driverValue(), c.Verdict, c.Reason, c.U.driverValue(), c.Rule)
		}
		// Each table is written when its batch is full; the foreign keys
		// between them are checked at commit (DEFERRABLE INITIALLY DEFERRED).
		for _, b := range []*batch{w.steps, w.metrics, w.checks} {
			if b.isFull() {
				if err := b.flush(w.ctx, w.tx); err != nil {
					return err
				}
			}
		}
	}
	return nil
}

// flush writes the rows still buffered.
func (w *writer) flush() error {
	for _, b := range []*batch{w.steps, w.metrics, w.checks} {
		if err := b.flush(w.ctx, w.tx); err != nil {
			return err
		}
	}
	return nil
}

// slot is one of a metric row's three values: measured, predicted, gap.
type slot struct {
	m  Metric
	ok bool // present in the step
}

func (s slot) value() any {
	if !s.ok {
		return nil
	}
	return s.m.Value.driverValue()
}

func (s slot) reason() any {
	if !s.ok || s.m.Value.Valid {
		return nil
	}
	return s.m.Reason
}

type metricRow struct {
	name string
	vals [3]slot
}

// mergeMetrics joins a step's measured, predicted and gap values by metric
// name, in the order the names first appear.
func mergeMetrics(st Step) []metricRow {
	var rows []metricRow
	at := map[string]int{}
	put := func(which int, list []Metric) {
		for _, m := range list {
			i, ok := at[m.Name]
			if !ok {
				i = len(rows)
				at[m.Name] = i
				rows = append(rows, metricRow{name: m.Name})
			}
			rows[i].vals[which] = slot{m: m, ok: true}
		}
	}
	put(0, st.Metrics)
	if st.Predicted != nil {
		put(1, st.Predicted.Metrics)
	}
	put(2, st.Gaps)
	return rows
}

// batch buffers rows for one table and writes them as multi-row INSERTs.
type batch struct {
	d       dialect
	table   string
	cols    []string
	args    []any
	maxRows int
	full    *sql.Stmt // the statement for maxRows rows, prepared once per transaction
}

func newBatch(d dialect, table string, cols ...string) *batch {
	return &batch{d: d, table: table, cols: cols, maxRows: min(500, d.maxArgs/len(cols))}
}

func (b *batch) add(vals ...any) { b.args = append(b.args, vals...) }

func (b *batch) isFull() bool { return len(b.args) >= b.maxRows*len(b.cols) }

func (b *batch) flush(ctx context.Context, tx *sql.Tx) error {
	width := len(b.cols)
	for rest := b.args; len(rest) > 0; {
		n := min(len(rest)/width, b.maxRows)
		if err := b.exec(ctx, tx, n, rest[:n*width]); err != nil {
			return fmt.Errorf("inserting %d %s rows: %w", n, b.table, err)
		}
		rest = rest[n*width:]
	}
	clear(b.args)
	b.args = b.args[:0]
	return nil
}

// exec inserts n rows; a full chunk reuses the prepared statement.
func (b *batch) exec(ctx context.Context, tx *sql.Tx, n int, args []any) error {
	if n < b.maxRows {
		_, err := tx.ExecContext(ctx, b.statement(n), args...)
		return err
	}
	if b.full == nil {
		st, err := tx.PrepareContext(ctx, b.statement(n))
		if err != nil {
			return err
		}
		b.full = st
	}
	_, err := b.full.ExecContext(ctx, args...)
	return err
}

func (b *batch) statement(rows int) string {
	one := "(" + strings.TrimSuffix(strings.Repeat("?, ", len(b.cols)), ", ") + ")"
	q := "INSERT INTO " + b.table + " (" + strings.Join(b.cols, ", ") + ") VALUES " +
		strings.TrimSuffix(strings.Repeat(one+", ", rows), ", ")
	return b.d.render(q)
}

// jsonList encodes reasons as a JSON array; nil is [].
func jsonList(l []string) string {
	if len(l) == 0 {
		return "[]"
	}
	b, _ := json.Marshal(l) // a []string always encodes
	return string(b)
}

func hexSHA256(s string) string {
	sum := sha256.Sum256([]byte(s))
	return hex.EncodeToString(sum[:])
}
