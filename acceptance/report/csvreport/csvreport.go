// Package csvreport owns steps.csv: one row per step of every unit, one
// column per metric, for spreadsheets and database loaders that take the
// results without a JSON parser. It is written from the digest, as the
// other reports are, and holds the same values as results.json at the same
// precision.
//
// The file is RFC 4180 CSV (comma-separated, CRLF line ends, fields quoted
// where needed) in UTF-8. The header names each column; a column holding a
// quantity names its unit in parentheses, e.g. "rise_time_s (s)" or
// "peak_value (mm)". A metric that could not be measured is an empty field
// (results.json holds the reason). A unit without steps (an unreadable log)
// still has one row, with its step fields empty, so that every file judged
// appears.
package csvreport

import (
	"bufio"
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"strconv"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/internal/jsonfmt"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/metrics"
)

// Header returns the columns of steps.csv for a spec whose response unit is
// responseUnit: the unit's id, file and verdict, the step's index, axis
// (empty with a spec of one axis), start, levels and verdict, then every metric in the order of metrics.Names.
func Header(responseUnit string) []string {
	h := []string{"unit", "file", "unit_verdict", "step", "axis", withUnit("start_s", "s"),
		withUnit("from", responseUnit), withUnit("to", responseUnit), "step_verdict"}
	for _, n := range metrics.Names {
		h = append(h, withUnit(string(n), n.Unit(responseUnit)))
	}
	return h
}

// withUnit is a column name with its unit in parentheses, or the name alone
// when the unit is unknown.
func withUnit(name, unit string) string {
	if unit == "" {
		return name
	}
	return name + " (" + unit + ")"
}

// Write writes steps.csv of the digested batch to w.
func Write(w io.Writer, d *digest.Digest) error {
	if d == nil || d.Batch == nil {
		return fmt.Errorf("steps.csv: no batch to report")
	}
	bw := bufio.NewWriterSize(w, 1<<16)
	cw := csv.NewWriter(bw)
	cw.UseCRLF = true
	if err := cw.Write(Header(digest.ResponseUnit(d.Batch))); err != nil {
		return fmt.Errorf("steps.csv: %w", err)
	}
	row := make([]string, 0, 8+len(metrics.Names))
	for i := range d.Batch.Units {
		u := &d.Batch.Units[i]
		if len(u.Steps) == 0 {
			row = append(unitFields(row[:0], u), "", "", "", "", "", "")
			for range metrics.Names {
				row = append(row, "")
			}
			if err := cw.Write(row); err != nil {
				return fmt.Errorf("steps.csv: unit %q: %w", u.Unit, err)
			}
			continue
		}
		for j := range u.Steps {
			row = stepFields(unitFields(row[:0], u), &u.Steps[j])
			if err := cw.Write(row); err != nil {
				return fmt.Errorf("steps.csv: unit %q step %d: %w", u.Unit, u.Steps[j].Index, err)
			}
		}
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return fmt.Errorf("steps.csv: %w", err)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("steps.csv: %w", err)
	}
	return nil
}

// unitFields appends the unit's columns to row.
func unitFields(row []string, u *acceptance.UnitResult) []string {
	return append(row, u.Unit, u.File, string(u.Verdict))
}

// stepFields appends the step's columns and its metrics to row.
func stepFields(row []string, s *acceptance.StepResult) []string {
	row = append(row, strconv.Itoa(s.Index), s.Axis, Number(s.StartS), Number(s.From), Number(s.To), string(s.Verdict))
	for i := range metrics.Names {
		if v := s.Metrics.At(i); v.OK {
			row = append(row, Number(v.V))
		} else {
			row = append(row, "")
		}
	}
	return row
}

// Number formats v as results.json writes it: at most jsonfmt.Digits
// significant digits, the shortest form that reads back exactly; empty
// for a number that is not finite.
func Number(v float64) string {
	r := jsonfmt.Round(v, jsonfmt.Digits)
	if math.IsNaN(r) || math.IsInf(r, 0) {
		return ""
	}
	return string(jsonfmt.AppendFloat(nil, r))
}
