package record

import (
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"slices"
)

// RecordRun records a run, the spec its units were judged under, and its
// units, in one transaction: either all of it is recorded or, when the
// context is cancelled, the process dies or the database fails, none of it.
//
// A unit whose file content (FileSHA256) is already recorded under the same
// spec (id, revision and SHA-256), by an earlier run or earlier in units, is
// skipped and counted in the result. The run itself is always recorded.
//
// A busy database is tried again until the store's busy timeout; the error
// then wraps ErrBusy. Invalid input (a missing serial, file hash or verdict, a
// spec whose text does not match its SHA-256, an absent value without a
// reason, a NaN) is reported before anything is written.
func (s *Store) RecordRun(ctx context.Context, run Run, spec Spec, units []Unit) (Result, error) {
	opts, err := validateRun(run, spec, units)
	if err != nil {
		return Result{}, err
	}
	var res Result
	err = s.inTx(ctx, func(tx *sql.Tx) error {
		res = Result{}
		w := newWriter(ctx, tx, s.d)
		runID, err := w.insertRun(run, opts)
		if err != nil {
			return err
		}
		res.RunID = runID
		specRef, err := w.upsertSpec(spec)
		if err != nil {
			return err
		}
		if err := s.recordUnits(w, &res, runID, specRef, units); err != nil {
			return err
		}
		return w.flush()
	})
	if err != nil {
		return Result{}, fmt.Errorf("record: run of %d unit(s) not recorded: %w", len(units), err)
	}
	return res, nil
}

// attemptChunk is how many attempts one multi-row INSERT writes.
const attemptChunk = 200

// recordUnits writes the units chunk by chunk, skipping those whose content
// is already recorded under the spec, and counts what it did in res.
func (s *Store) recordUnits(w *writer, res *Result, runID, specRef int64, units []Unit) error {
	skipped := make([]bool, len(units))
	seen := make(map[string]bool, len(units))
	for start := 0; start < len(units); start += attemptChunk {
		end := min(start+attemptChunk, len(units))
		ids, err := w.insertAttempts(runID, specRef, units[start:end], seen)
		if err != nil {
			return err
		}
		for i, id := range ids {
			u := &units[start+i]
			if id == 0 {
				skipped[start+i] = true
				continue
			}
			if err := w.addSteps(id, u.Steps); err != nil {
				return fmt.Errorf("unit %q (%s): %w", u.Serial, u.File, err)
			}
			if s.afterUnit != nil {
				s.afterUnit(start + i)
			}
		}
	}
	for i, skip := range skipped {
		if skip {
			res.Skipped++
			res.Skips = append(res.Skips, units[i].File)
		} else {
			res.Recorded++
		}
	}
	return nil
}

// validateRun checks the input before a transaction starts, and returns the
// run's options as JSON text.
func validateRun(run Run, spec Spec, units []Unit) (string, error) {
	opts := "{}"
	if len(run.Options) > 0 {
		if !json.Valid(run.Options) {
			return "", errors.New("record: the run's options are not valid JSON")
		}
		opts = string(run.Options)
	}
	if run.Time.IsZero() {
		return "", errors.New("record: the run has no time")
	}
	if spec.ID == "" || spec.SHA256 == "" {
		return "", errors.New("record: the spec has no id or no SHA-256")
	}
	if got := hexSHA256(spec.Text); got != spec.SHA256 {
		return "", fmt.Errorf("record: spec %s revision %s: SHA-256 %s given, but its text hashes to %s", spec.ID, spec.Revision, spec.SHA256, got)
	}
	for i := range units {
		if err := validateUnit(&units[i]); err != nil {
			return "", fmt.Errorf("record: unit %d (%s): %w", i+1, units[i].File, err)
		}
	}
	return opts, nil
}

func validateUnit(u *Unit) error {
	if u.Serial == "" || u.FileSHA256 == "" || u.Verdict == "" {
		return errors.New("a unit needs a serial, a file SHA-256 and a verdict")
	}
	for _, st := range u.Steps {
		if err := validateStep(st); err != nil {
			return fmt.Errorf("step %d: %w", st.Index, err)
		}
	}
	return nil
}

func validateStep(st Step) error {
	lists := [][]Metric{st.Metrics, st.Gaps}
	if st.Predicted != nil {
		lists = append(lists, st.Predicted.Metrics)
	}
	for _, list := range lists {
		for i, m := range list {
			if m.Name == "" || slices.ContainsFunc(list[:i], func(o Metric) bool { return o.Name == m.Name }) {
				return fmt.Errorf("metric name %q is empty or repeated", m.Name)
			}
			if !m.Value.Valid && m.Reason == "" {
				return fmt.Errorf("metric %s has no value and no reason", m.Name)
			}
			if err := checkNumber(m.Value); err != nil {
				return fmt.Errorf("metric %s: %w", m.Name, err)
			}
		}
	}
	for _, c := range st.Checks {
		for _, n := range []Number{c.Value, c.Min, c.Max, c.U} {
			if err := checkNumber(n); err != nil {
				return fmt.Errorf("check of %s: %w", c.Metric, err)
			}
		}
	}
	return nil
}
