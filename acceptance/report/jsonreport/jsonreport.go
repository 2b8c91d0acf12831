package jsonreport

import (
	"bufio"
	"fmt"
	"io"
	"slices"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// Write writes the digested batch as results.json to w: indented JSON
// followed by a newline, streamed unit by unit, so that a batch of many
// thousand units is never held in memory as one text. The same batch
// always gives the same bytes. A number that is not finite, which JSON
// cannot hold, fails the report with an error naming where it is.
func Write(w io.Writer, d *digest.Digest) error {
	if d == nil || d.Batch == nil {
		return fmt.Errorf("results.json: no batch to report")
	}
	return writeBatch(w, d.Batch, d.ID)
}

// SchemaVersion is the version of the results.json contract written under
// "schema_version". Keys are added without raising it; it is raised only
// if a key ever changes its meaning.
const SchemaVersion = 1

// writeBatch streams b, whose report id is id, to w through a buffer.
func writeBatch(w io.Writer, b *acceptance.Batch, id string) error {
	bw := bufio.NewWriterSize(w, 1<<16)
	if err := write(bw, b, id); err != nil {
		return fmt.Errorf("results.json: %w", err)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("results.json: %w", err)
	}
	return nil
}

// write writes the document's members in their defined order, flushing the
// encoder's buffer to w after each part.
func write(w *bufio.Writer, b *acceptance.Batch, id string) error {
	e := &encoder{}
	e.B = make([]byte, 0, 16<<10)
	flush := func(what string) error {
		if e.NonFinite {
			return fmt.Errorf("encoding %s: json: unsupported value: a number that is not finite", what)
		}
		_, err := w.Write(e.B)
		e.B = e.B[:0]
		return err
	}
	e.head(b, id)
	if err := flush("the batch"); err != nil {
		return err
	}
	if err := e.units(w, b.Units); err != nil {
		return err
	}
	e.tail(b)
	e.B = append(e.B, "\n}\n"...)
	return flush("the batch")
}

// head appends the members before the units: the contract's version, the
// report id, the tool, the spec, the run's options, the metrics' units and
// the counts.
func (e *encoder) head(b *acceptance.Batch, id string) {
	e.Open(1, `"schema_version": `)
	e.Int(SchemaVersion)
	e.Member(1, `"report_id": `)
	e.Str(id)
	e.Member(1, `"tool": `)
	e.Open(2, `"name": `)
	e.Str(b.Tool.Name)
	e.Member(2, `"version": `)
	e.Str(b.Tool.Version)
	e.Close(1, '}')
	e.Member(1, `"spec": `)
	e.Open(2, `"spec_id": `)
	e.Str(b.Spec.SpecID)
	e.Member(2, `"revision": `)
	e.Str(b.Spec.Revision)
	e.Member(2, `"sha256": `)
	e.Str(b.Spec.SHA256)
	e.Member(2, `"title": `)
	e.Str(b.Spec.Title)
	e.specPaths(b.Run)
	e.Close(1, '}')
	e.Member(1, `"run": `)
	e.run(1, b.Run)
	e.Member(1, `"metric_units": `)
	e.metricUnits(1, digest.ResponseUnit(b))
	e.Member(1, `"summary": `)
	e.Open(2, `"units": `)
	e.Int(b.Summary.Units)
	e.Member(2, `"pass": `)
	e.Int(b.Summary.Pass)
	e.Member(2, `"fail": `)
	e.Int(b.Summary.Fail)
	e.Member(2, `"invalid": `)
	e.Int(b.Summary.Invalid)
	e.Member(2, `"serials": `)
	e.Int(b.Summary.Serials)
	e.Member(2, `"retested": `)
	e.Int(b.Summary.Retested)
	e.Member(2, `"first_pass_yield_pct": `)
	e.FloatPtr(b.Summary.FirstPassYieldPct)
	e.Member(2, `"final_yield_pct": `)
	e.FloatPtr(b.Summary.FinalYieldPct)
	e.Member(2, `"conditional_pass": `)
	e.Int(b.Summary.ConditionalPass)
	e.Member(2, `"conditional_fail": `)
	e.Int(b.Summary.ConditionalFail)
	e.Close(1, '}')
	e.Member(1, `"units": `)
}

// units writes the units array, one unit at a time through the encoder's
// buffer.
func (e *encoder) units(w *bufio.Writer, units []acceptance.UnitResult) error {
	if units == nil || len(units) == 0 {
		e.Array(1, units == nil, 0, nil)
		_, err := w.Write(e.B)
		e.B = e.B[:0]
		return err
	}
	w.WriteString("[")
	for i := range units {
		if i > 0 {
			e.B = append(e.B, ',')
		}
		e.NL(2)
		e.unit(2, &units[i])
		if e.NonFinite {
			return fmt.Errorf("encoding unit %q (%s): json: unsupported value: a number that is not finite", units[i].Unit, units[i].File)
		}
		if _, err := w.Write(e.B); err != nil {
			return err
		}
		e.B = e.B[:0]
	}
	e.Close(1, ']')
	return nil
}

// tail appends the members after the units: the model, the limits, the
// report date, the notice, the test dates and, when patterns left files
// out, the files excluded.
func (e *encoder) tail(b *acceptance.Batch) {
	if b.Model != nil {
		e.Member(1, `"model": `)
		e.modelSummary(1, b.Model)
	}
	e.Member(1, `"limits": `)
	e.limits(1, b.Limits)
	e.Member(1, `"report_date": `)
	e.Str(b.ReportDate)
	e.Member(1, `"notice": `)
	e.Str(b.Notice)
	e.Member(1, `"test_dates": `)
	e.Open(2, `"first": `)
	e.Str(b.TestDates.First)
	e.Member(2, `"last": `)
	e.Str(b.TestDates.Last)
	e.Close(1, '}')
	e.Member(1, `"decision_rule": `)
	e.Str(b.DecisionRule)
	if len(b.Excluded) > 0 {
		e.Member(1, `"excluded": [`)
		for i, x := range b.Excluded {
			if i > 0 {
				e.B = append(e.B, ',')
			}
			e.NL(2)
			e.Open(3, `"file": `)
			e.Str(x.File)
			e.Member(3, `"pattern": `)
			e.Str(x.Pattern)
			e.Close(2, '}')
		}
		e.Close(1, ']')
	}
}

// specPaths appends the spec's path as given and resolved, members of the
// spec object; null without run information.
func (e *encoder) specPaths(r *acceptance.RunInfo) {
	e.Member(2, `"path": `)
	if r == nil {
		e.Null()
		e.Member(2, `"resolved_path": `)
		e.Null()
		return
	}
	e.Str(r.SpecPath)
	e.Member(2, `"resolved_path": `)
	e.Str(r.SpecResolved)
}

// run appends the options the run was asked with; null without them.
func (e *encoder) run(d int, r *acceptance.RunInfo) {
	if r == nil {
		e.Null()
		return
	}
	n := d + 1
	e.Open(n, `"inputs": `)
	e.Strings(n, r.Inputs)
	e.Member(n, `"report_date": `)
	if r.ReportDate == "" {
		e.Null()
	} else {
		e.Str(r.ReportDate)
	}
	e.Member(n, `"report_date_from": `)
	e.Str(r.ReportDateFrom)
	e.Member(n, `"all_units": `)
	e.Bool(r.AllUnits)
	e.Member(n, `"max_unit_pages": `)
	e.Int(r.MaxUnitPages)
	e.Close(d, '}')
}

// metricUnits appends the unit of every metric, in key order: "s", "%" or
// the spec's response unit; null where the spec names no response unit.
func (e *encoder) metricUnits(d int, responseUnit string) {
	e.B = append(e.B, '{')
	for k := range metricKeys {
		if k > 0 {
			e.B = append(e.B, ',')
		}
		e.NL(d + 1)
		e.B = append(e.B, metricKeys[k].member...)
		if u := metricKeys[k].name.Unit(responseUnit); u != "" {
			e.Str(u)
		} else {
			e.Null()
		}
	}
	e.Close(d, '}')
}

// limits appends the spec's limits by metric name in key order; null when
// the batch has none.
func (e *encoder) limits(d int, m map[metrics.Name]spec.Limit) {
	if m == nil {
		e.Null()
		return
	}
	if len(m) == 0 {
		e.B = append(e.B, "{}"...)
		return
	}
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, string(k))
	}
	slices.Sort(keys)
	e.B = append(e.B, '{')
	for i, k := range keys {
		if i > 0 {
			e.B = append(e.B, ',')
		}
		e.NL(d + 1)
		e.Str(k)
		e.B = append(e.B, ": "...)
		l := m[metrics.Name(k)]
		e.Open(d+2, `"min": `)
		e.FloatPtr(l.Min)
		e.Member(d+2, `"max": `)
		e.FloatPtr(l.Max)
		e.Close(d+1, '}')
	}
	e.Close(d, '}')
}
