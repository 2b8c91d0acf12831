package record

import (
	"context"
	"database/sql"
	"encoding/json"
	"fmt"
	"strings"
	"time"
)

// attemptCols are the columns scanned by scanAttempt, from attempt a, run r
// and spec s.
const attemptCols = `a.id, a.run_id, r.run_at, r.report_id, s.spec_id, s.revision, s.sha256,
	a.serial, a.file_path, a.file_sha256, a.file_mtime, a.metadata, a.station, a.operator,
	a.lot, a.shift, a.started_at, a.verdict, a.reasons`

const attemptFrom = ` FROM attempt a JOIN run r ON r.id = a.run_id JOIN spec s ON s.id = a.spec_ref`

// attemptOrder is the order of attempts: start time, then file time, then
// the order they were recorded; attempts without a start time come last.
const attemptOrder = ` ORDER BY (a.started_at IS NULL), a.started_at, (a.file_mtime IS NULL), a.file_mtime, a.id`

func scanAttempt(rows *sql.Rows) (Attempt, error) {
	var a Attempt
	var runAt, mtime, started timeCol
	var meta, reasons string
	u := &a.Unit
	err := rows.Scan(&a.ID, &a.RunID, &runAt, &a.ReportID, &a.Spec.ID, &a.Spec.Revision, &a.Spec.SHA256,
		&u.Serial, &u.File, &u.FileSHA256, &mtime, &meta, &u.Station, &u.Operator,
		&u.Lot, &u.Shift, &started, &u.Verdict, &reasons)
	if err != nil {
		return a, fmt.Errorf("record: reading an attempt: %w", err)
	}
	a.RunTime, u.FileModTime, u.StartedAt = runAt.t, mtime.t, started.t
	if err := decodeJSON(meta, "{}", &u.Metadata); err != nil {
		return a, fmt.Errorf("record: attempt %d: metadata: %w", a.ID, err)
	}
	if err := decodeJSON(reasons, "[]", &u.Reasons); err != nil {
		return a, fmt.Errorf("record: attempt %d: reasons: %w", a.ID, err)
	}
	return a, nil
}

// queryAttempts runs a query over attemptCols and calls fn for each row.
func (s *Store) queryAttempts(ctx context.Context, q string, args []any, fn func(Attempt) error) error {
	rows, err := s.db.QueryContext(ctx, s.d.render(q), args...)
	if err != nil {
		return fmt.Errorf("record: querying attempts: %w", err)
	}
	defer rows.Close()
	for rows.Next() {
		a, err := scanAttempt(rows)
		if err != nil {
			return err
		}
		if err := fn(a); err != nil {
			return err
		}
	}
	if err := rows.Err(); err != nil {
		return fmt.Errorf("record: querying attempts: %w", err)
	}
	return nil
}

// Attempts returns every recorded attempt of a serial, with its steps,
// ordered by start time, then file modification time, then recording order;
// attempts without a start time come last. The attempt number of
// Attempts(...)[i] is i+1.
func (s *Store) Attempts(ctx context.Context, serial string) ([]Attempt, error) {
	var out []Attempt
	err := s.queryAttempts(ctx, "SELECT "+attemptCols+attemptFrom+" WHERE a.serial = ?"+attemptOrder,
		[]any{serial}, func(a Attempt) error { out = append(out, a); return nil })
	if err != nil {
		return nil, fmt.Errorf("%w (serial %q)", err, serial)
	}
	if err := s.attachSteps(ctx, out, allOfSteps); err != nil {
		return nil, fmt.Errorf("%w (serial %q)", err, serial)
	}
	return out, nil
}

// Judged reports whether the file at path with this content is in the record
// (under any spec) and returns its latest attempt, without steps. A station
// resuming after a restart skips the files it finds there.
func (s *Store) Judged(ctx context.Context, path, sha256 string) (Attempt, bool, error) {
	var found Attempt
	ok := false
	err := s.queryAttempts(ctx, "SELECT "+attemptCols+attemptFrom+
		" WHERE a.file_sha256 = ? AND a.file_path = ? ORDER BY a.id DESC", []any{sha256, path},
		func(a Attempt) error {
			if !ok {
				found, ok = a, true
			}
			return nil
		})
	if err != nil {
		return Attempt{}, false, fmt.Errorf("%w (file %s)", err, path)
	}
	return found, ok, nil
}

// PriorAttempts returns the recorded attempts of each of the serials,
// without steps, in attempt order (as Attempts), so that a batch can number
// its own attempts after them. Serials with no attempt are absent from the map.
func (s *Store) PriorAttempts(ctx context.Context, serials []string) (map[string][]Attempt, error) {
	out := map[string][]Attempt{}
	const chunk = 500
	for start := 0; start < len(serials); start += chunk {
		part := serials[start:min(start+chunk, len(serials))]
		args := make([]any, len(part))
		for i, v := range part {
			args[i] = v
		}
		q := "SELECT " + attemptCols + attemptFrom + " WHERE a.serial IN (" + marks(len(part)) + ")" + attemptOrder
		err := s.queryAttempts(ctx, q, args, func(a Attempt) error {
			out[a.Unit.Serial] = append(out[a.Unit.Serial], a)
			return nil
		})
		if err != nil {
			return nil, fmt.Errorf("%w (earlier attempts of %d serials)", err, len(serials))
		}
	}
	return out, nil
}

// Filter selects attempts for Units. Zero fields select everything.
type Filter struct {
	SpecID   string    // the spec's id, any revision
	Revision string    // with SpecID: one revision
	Since    time.Time // started at or after
	Until    time.Time // started before
	Lot      string
	Station  string

	// Steps loads each attempt's steps with their metrics, predictions and
	// gaps; Metrics, when not nil, limits those to these names; Checks
	// loads the steps' limit checks too.
	// MeasuredOnly leaves out predictions and gaps (a third of the
	// columns a trend reads).
	Steps        bool
	Metrics      []string
	Checks       bool
	MeasuredOnly bool
}

// where renders the filter as a WHERE clause with its arguments.
func (f Filter) where(d dialect) (string, []any) {
	var conds []string
	var args []any
	add := func(cond string, arg any) { conds = append(conds, cond); args = append(args, arg) }
	if f.SpecID != "" {
		add("s.spec_id = ?", f.SpecID)
		if f.Revision != "" {
			add("s.revision = ?", f.Revision)
		}
	}
	if !f.Since.IsZero() {
		add("a.started_at >= ?", d.timeArg(f.Since))
	}
	if !f.Until.IsZero() {
		add("a.started_at < ?", d.timeArg(f.Until))
	}
	if f.Lot != "" {
		add("a.lot = ?", f.Lot)
	}
	if f.Station != "" {
		add("a.station = ?", f.Station)
	}
	if len(conds) == 0 {
		return "", nil
	}
	return " WHERE " + strings.Join(conds, " AND "), args
}

// Units streams the attempts that match the filter to fn, in attempt order
// (start time, file time, recording order; no start time last), without
// holding them all in memory. fn's error stops the stream and is returned.
//
// With Filter.Steps, the attempts are read a page at a time on one
// connection while the steps of the page before are read on another.
func (s *Store) Units(ctx context.Context, f Filter, fn func(Attempt) error) error {
	where, args := f.where(s.d)
	q := "SELECT " + attemptCols + attemptFrom + where + attemptOrder
	if !f.Steps {
		return s.queryAttempts(ctx, q, args, fn)
	}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	pages := make(chan []Attempt, 1)
	scanned := make(chan error, 1)
	go func() {
		defer close(pages)
		scanned <- s.pageAttempts(ctx, q, args, pages)
	}()
	err := s.fillPages(ctx, pages, stepLoad{f.Metrics, f.Checks, f.MeasuredOnly}, fn)
	if err != nil {
		cancel()
		for range pages { // let the scan see the cancellation and end
		}
		<-scanned
		return err
	}
	return <-scanned
}

// unitsPage is how many attempts Units reads the steps of at once.
const unitsPage = 1000

// pageAttempts scans the attempts of a query and sends them in pages.
func (s *Store) pageAttempts(ctx context.Context, q string, args []any, pages chan<- []Attempt) error {
	buf := make([]Attempt, 0, unitsPage)
	send := func() error {
		select {
		case pages <- buf:
			buf = make([]Attempt, 0, unitsPage)
			return nil
		case <-ctx.Done():
			return ctx.Err()
		}
	}
	err := s.queryAttempts(ctx, q, args, func(a Attempt) error {
		buf = append(buf, a)
		if len(buf) == unitsPage {
			return send()
		}
		return nil
	})
	if err == nil && len(buf) > 0 {
		err = send()
	}
	return err
}

// fillPages loads the steps of each page of attempts and passes the
// attempts to fn.
func (s *Store) fillPages(ctx context.Context, pages <-chan []Attempt, load stepLoad, fn func(Attempt) error) error {
	for page := range pages {
		if err := s.attachSteps(ctx, page, load); err != nil {
			return err
		}
		for _, a := range page {
			if err := fn(a); err != nil {
				return err
			}
		}
	}
	return nil
}

// decodeJSON decodes a JSON column into v, leaving v nil when the column
// holds the empty value (which most rows do, and which costs nothing then).
func decodeJSON(text, empty string, v any) error {
	if text == empty || text == "" {
		return nil
	}
	return json.Unmarshal([]byte(text), v)
}

// marks gives n comma-separated placeholders.
func marks(n int) string {
	return strings.TrimSuffix(strings.Repeat("?, ", n), ", ")
}
