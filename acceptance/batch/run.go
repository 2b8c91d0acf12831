package batch

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"runtime"
	"sort"
	"strings"
	"sync"
	"time"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/causes"
	"github.com/stepgate/stepgate/acceptance/logs"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// TracePolicy says which units keep their full record in memory for the
// report's unit pages.
type TracePolicy int

// Trace policies.
const (
	// KeepPageTraces keeps the records of the units that get a detail page
	// in the PDF, at most MaxUnitPages of them and at most 48 MiB, and no
	// other: memory stays flat in the batch size. A unit with a page but no
	// kept record (beyond the first MaxUnitPages pages or the budget, or
	// made invalid after judging by a duplicate serial) has its log read
	// again when its page is drawn (see Records.UnitTrace).
	KeepPageTraces TracePolicy = iota
	KeepAllTraces              // every unit keeps its record
	KeepNoTraces               // none
)

// MaxUnitPages is the default for Options.MaxUnitPages (see
// DefaultOptions): the most units that get a detail page in the PDF. The
// XLSX and results.json hold every unit. It also bounds the page records
// Run keeps in memory, whatever the cap.
const MaxUnitPages = 200

// Options control a batch run.
type Options struct {
	Workers  int         // concurrent workers; 0 means one per core
	Traces   TracePolicy // which traces to keep
	AllUnits bool        // every unit, not only those that did not pass, gets a detail page
	// MaxUnitPages caps the units that get a detail page; 0 (or less)
	// means no cap, as `stepgate run --max-unit-pages 0` does.
	// DefaultOptions sets it to MaxUnitPages.
	MaxUnitPages int
	Tool         acceptance.ToolInfo // name and version printed in the reports
	ReportDate   string              // YYYY-MM-DD; empty means the newest test date in the logs
	// Open makes the Source a worker reads logs with; nil reads every
	// registered layout with the spec's Format (logs.Open).
	Open func(o logs.Options) logs.Source
	// Progress, when set, is called after each file with the count done, the
	// total and the bytes read so far. It is called from one goroutine at a
	// time.
	Progress func(done, total int, bytes int64)
}

// DefaultOptions returns the options `stepgate run` starts from: one
// worker per core, the records of the page units kept, and at most
// MaxUnitPages detail pages.
func DefaultOptions() Options {
	return Options{Traces: KeepPageTraces, MaxUnitPages: MaxUnitPages}
}

// Run reads every file, measures and judges every step, and returns the
// batch ordered by unit id, then file, with the store of the records the
// run kept for the reports. A file that cannot be read becomes an invalid
// unit with the reason; it never stops the batch. Run returns an error
// only when ctx is cancelled.
func Run(ctx context.Context, sp *spec.Spec, files []string, o Options) (*acceptance.Batch, *Records, error) {
	r := newRunner(sp, len(files), o)
	results, err := r.judgeAll(ctx, files)
	if err != nil {
		return nil, nil, err
	}
	if r.pred != nil {
		spreadCauses(results)
	}
	b := r.assemble(results)
	recs := &Records{}
	if o.Traces == KeepPageTraces {
		recs.kept = r.pages.traces()
		recs.src = r.open(logs.Options{})
	}
	return b, recs, nil
}

// runner holds what every worker of one run shares.
type runner struct {
	sp      *spec.Spec
	o       Options
	open    func(logs.Options) logs.Source
	opts    metrics.Options
	pred    *predictor
	predErr error
	sampler *curveSampler
	pages   *pageKeeper // nil unless the page units' records are kept
	// axes holds one spec per axis under a spec with several axes (each
	// reads and judges its axis alone), nil under a single-axis spec.
	axes  []*spec.Spec
	names []string
}

func newRunner(sp *spec.Spec, files int, o Options) *runner {
	r := &runner{sp: sp, o: o, open: o.Open, opts: sp.Options(), sampler: newCurveSampler(sp, files)}
	if r.open == nil {
		format := sp.Format()
		r.open = func(lo logs.Options) logs.Source { return logs.Open(format, lo) }
	}
	if len(sp.Axes) > 0 {
		r.axes, r.names = sp.ForAxes(), sp.AxisNames()
	}
	r.pred, r.predErr = newPredictor(sp)
	if o.Traces == KeepPageTraces {
		limit := o.MaxUnitPages
		if limit <= 0 || limit > MaxUnitPages {
			limit = MaxUnitPages
		}
		r.pages = newPageKeeper(limit, o.AllUnits, pageRecordBudget)
	}
	return r
}

// judgeAll judges the files on the workers and returns the units in the
// order of files.
func (r *runner) judgeAll(ctx context.Context, files []string) ([]acceptance.UnitResult, error) {
	workers := r.o.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	if workers > len(files) && len(files) > 0 {
		workers = len(files)
	}
	results := make([]acceptance.UnitResult, len(files))
	jobs := make(chan int)
	var wg sync.WaitGroup
	var mu sync.Mutex
	done, bytes := 0, int64(0)
	for range workers {
		wg.Go(func() {
			// Each trace is measured before the next file is read, so the
			// worker's source lends its buffers instead of copying them.
			src := r.open(logs.Options{Shared: true})
			axisSrc := r.axisSources()
			for i := range jobs {
				var n int64
				if axisSrc != nil {
					results[i], n = r.judgeAxes(axisSrc, files[i])
				} else {
					results[i], n = r.judge(src, files[i])
				}
				if r.o.Progress != nil {
					mu.Lock()
					done++
					bytes += n
					r.o.Progress(done, len(files), bytes)
					mu.Unlock()
				}
			}
		})
	}
	var cancelled error
feed:
	for i := range files {
		select {
		case <-ctx.Done():
			cancelled = context.Cause(ctx)
			break feed
		case jobs <- i:
		}
	}
	close(jobs)
	wg.Wait()
	if cancelled != nil {
		return nil, fmt.Errorf("batch interrupted: %w", cancelled)
	}
	return results, nil
}

// judge judges one file and offers its record to the page keeper. Every
// unit takes its place among those with a page, with or without a record
// to draw; a record is copied out of the source's buffers before the next
// file is read.
func (r *runner) judge(src logs.Source, path string) (acceptance.UnitResult, int64) {
	u, n, tr := judgeFile(src, r.sp, r.opts, r.pred, r.sampler, path, r.o.Traces)
	u.Lot = r.sp.Line.LotOf(u.File, u.Metadata)
	u.Shift = r.sp.Line.ShiftOf(acceptance.StartedAt(u.Metadata))
	var size int64
	if tr != nil && len(u.Steps) > 0 {
		size = recordSize(tr)
	}
	if r.pages.admit(u.Unit, u.File, u.Verdict, size) {
		t := tr.Clone()
		r.pages.store(u.File, &t)
	}
	return u, n
}

// axisSources returns one source per axis under a spec with several axes,
// each reading that axis's columns; nil under a single-axis spec.
func (r *runner) axisSources() []logs.Source {
	if r.axes == nil {
		return nil
	}
	out := make([]logs.Source, len(r.axes))
	for i, a := range r.axes {
		out[i] = logs.Open(a.Format(), logs.Options{Shared: true})
	}
	return out
}

// judgeAxes judges one file axis by axis, each read with its own columns
// and judged by its own limits, and joins the axes into one unit. The
// unit's record is not kept for its page: the page of a unit with several
// axes lists the steps of every axis without drawing one axis's record.
func (r *runner) judgeAxes(srcs []logs.Source, path string) (acceptance.UnitResult, int64) {
	units := make([]acceptance.UnitResult, len(r.axes))
	var n int64
	for i, a := range r.axes {
		var m int64
		units[i], m, _ = judgeFile(srcs[i], a, r.opts, r.pred, r.sampler, path, KeepNoTraces)
		n = max(n, m)
	}
	return acceptance.JoinAxes(r.names, units), n
}

// assemble orders the units by serial and, within a serial, as attempts
// (start time, else file time, then file), flags copies and clashing
// attempts, numbers the attempts and builds the batch around them.
func (r *runner) assemble(results []acceptance.UnitResult) *acceptance.Batch {
	sort.SliceStable(results, func(i, j int) bool {
		if results[i].Unit != results[j].Unit {
			return results[i].Unit < results[j].Unit
		}
		return acceptance.CompareAttempts(&results[i], &results[j]) < 0
	})
	flagDuplicates(results)
	sp := r.sp
	b := &acceptance.Batch{
		Tool:      r.o.Tool,
		Spec:      acceptance.SpecInfo{SpecID: sp.SpecID, Revision: sp.Revision, SHA256: sp.SHA256, Title: sp.Title},
		Summary:   acceptance.Count(results),
		Units:     results,
		Limits:    sp.Limits,
		SpecDoc:   sp,
		Notice:    acceptance.Notice,
		TestDates: testDates(results),
		MaxPages:  r.o.MaxUnitPages,
		// A spec built in code may leave the rule empty: simple is the
		// default.
		DecisionRule: sp.DecisionRule,
	}
	if b.DecisionRule == "" {
		b.DecisionRule = spec.RuleSimple
	}
	if b.Limits == nil {
		b.Limits = map[metrics.Name]spec.Limit{}
	}
	acceptance.ChainAttempts(b, nil)
	b.ReportDate = r.o.ReportDate
	if b.ReportDate == "" {
		b.ReportDate = b.TestDates.Last
	}
	if r.pred != nil {
		b.Model = r.pred.summary()
	} else if r.predErr != nil {
		b.Model = &acceptance.ModelSummary{Config: *sp.Model, Warnings: []string{r.predErr.Error()}}
	}
	return b
}

// judgeFile is processFile guarded so that one log can never stop the
// batch: should judging it panic, the log becomes an invalid unit whose
// reason carries the internal error, and the other logs are judged as
// usual.
func judgeFile(rd logs.Source, sp *spec.Spec, opts metrics.Options, pred *predictor, cs *curveSampler, path string, policy TracePolicy) (u acceptance.UnitResult, n int64, tr *metrics.Trace) {
	defer func() {
		if r := recover(); r != nil {
			u = acceptance.UnitResult{File: path, Unit: unitFromPath(path), Metadata: map[string]string{}, Steps: []acceptance.StepResult{}, Verdict: acceptance.Invalid,
				Reasons: []acceptance.Reason{acceptance.InternalReason(r)}}
			n, tr = 0, nil
		}
	}()
	return processFile(rd, sp, opts, pred, cs, path, policy)
}

// processFile reads and judges one file; it returns the unit, the bytes
// read and the record measured (nil when none was), which lives in the
// reader's buffers until its next file.
func processFile(rd logs.Source, sp *spec.Spec, opts metrics.Options, pred *predictor, cs *curveSampler, path string, policy TracePolicy) (acceptance.UnitResult, int64, *metrics.Trace) {
	u := acceptance.UnitResult{File: path, Unit: unitFromPath(path), Metadata: map[string]string{}, Reasons: []acceptance.Reason{}, Steps: []acceptance.StepResult{}}
	if fi, err := os.Stat(path); err == nil {
		u.FileTime = fi.ModTime().UTC()
	}
	lg, err := rd.ReadFile(path)
	if lg != nil {
		u.SHA256 = lg.SHA256
		if lg.Metadata != nil {
			u.Metadata = lg.Metadata // a new map per file, not one of the reader's buffers
		}
		if s := strings.TrimSpace(lg.Metadata["serial"]); s != "" {
			u.Unit = s
		}
	}
	if err != nil {
		u.Verdict = acceptance.Invalid
		u.Reasons = []acceptance.Reason{acceptance.UnreadableReason(readReason(err))}
		if u.SHA256 == "" {
			// The digest identifies the file even when it cannot be parsed.
			u.SHA256 = fileDigest(path)
		}
		var n int64
		if lg != nil {
			n = lg.Size
		} else if fi, serr := os.Stat(path); serr == nil {
			n = fi.Size()
		}
		return u, n, nil
	}
	u.Samples = lg.Rows
	tr := lg.Trace
	if verr := tr.Validate(); verr != nil {
		u.Verdict = acceptance.Invalid
		u.Reasons = []acceptance.Reason{acceptance.UnusableReason(verr)}
		return u, lg.Size, nil
	}
	steps := metrics.FindMoves(tr, sp.Steps.MinChange, opts.SteadyTime)
	u.Steps = make([]acceptance.StepResult, 0, len(steps))
	limit := metrics.Unknown("the log has no effort column")
	if tr.Effort != nil {
		limit = effortLimit(tr, sp)
	}
	uo := metrics.UncertaintyOptions{Resolution: sp.ResponseResolution, Seed: uncertaintySeed}
	var found causes.Cause
	for _, st := range steps {
		m := metrics.MeasureStep(tr, st, opts)
		mu := metrics.MeasureUncertainty(tr, m, opts, uo)
		sr := acceptance.JudgeStepWith(sp, m, &mu)
		sr.Evidence = stepEvidence(tr, m, opts, limit)
		if pred != nil {
			pred.attach(&sr, m, tr)
			found |= pred.causes(tr, m)
		}
		u.Steps = append(u.Steps, sr)
	}
	u.Verdict, u.Reasons = acceptance.JudgeUnit(sp, u.Steps)
	for i, st := range steps {
		if cs.keep(path, st.Index, u.Steps[i].Verdict) {
			u.Steps[i].Curve = normalisedCurve(tr, st, cs.window)
		}
	}
	if pred != nil && len(steps) > 0 {
		u.Fit = pred.fit(tr, steps[0])
	}
	if pred != nil {
		u.Causes = append([]string{}, found.Keys()...)
	}
	if policy == KeepAllTraces {
		t := tr.Clone()
		u.Trace = &t
	}
	return u, lg.Size, &tr
}

// uncertaintySeed seeds the Monte Carlo evaluations of every step's
// uncertainty, so that a batch run twice gives the same numbers.
const uncertaintySeed = 0x5eed1

// readReason is a read error without the file name, which the unit carries.
func readReason(err error) string {
	var pe *logs.ParseError
	if !errors.As(err, &pe) || pe.Err == nil {
		return err.Error()
	}
	var b strings.Builder
	if pe.Line > 0 {
		fmt.Fprintf(&b, "line %d", pe.Line)
		if pe.Column > 0 {
			fmt.Fprintf(&b, ", field %d", pe.Column)
		}
		b.WriteString(": ")
	}
	if pe.Field != "" {
		fmt.Fprintf(&b, "column %q: ", pe.Field)
	}
	b.WriteString(pe.Err.Error())
	return b.String()
}

// fileDigest returns the hex SHA-256 of a file's bytes, or "" when the file
// cannot be opened as a regular file or is larger than a log may be.
func fileDigest(path string) string {
	st, err := os.Stat(path)
	if err != nil || !st.Mode().IsRegular() || st.Size() > logs.DefaultMaxBytes {
		return ""
	}
	f, err := os.Open(path)
	if err != nil {
		return ""
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return ""
	}
	return hex.EncodeToString(h.Sum(nil))
}

// unitFromPath is the file (or archive member) name without its
// directories and extensions (logs.UnitName).
func unitFromPath(path string) string { return logs.UnitName(path) }

// flagDuplicates flags, within each serial (units are sorted by serial,
// then as attempts, so a serial's files are adjacent):
//
//   - a second copy of a log (the same SHA-256 as an earlier file of the
//     serial): one test filed twice, which counts as one attempt; the copy
//     gets a DuplicateFile reason;
//   - two different logs claiming the same start time: they cannot both be
//     attempts of one unit, a traceability problem; each gets a
//     DuplicateUnit reason naming the others.
//
// Other files of one serial are retests, not duplicates. Flagged files are
// kept, and a flagged unit that would pass is made invalid.
func flagDuplicates(units []acceptance.UnitResult) {
	for i := 0; i < len(units); {
		j := i + 1
		for j < len(units) && units[j].Unit == units[i].Unit {
			j++
		}
		if j-i > 1 {
			flagSerial(units[i:j])
		}
		i = j
	}
}

// flagSerial flags the copies and start-time clashes among the files of
// one serial.
func flagSerial(us []acceptance.UnitResult) {
	first := map[string]string{}
	var attempts []int
	for k := range us {
		u := &us[k]
		if f, ok := first[u.SHA256]; ok && u.SHA256 != "" {
			flag(u, acceptance.DuplicateFileReason(u.Unit, f))
			continue
		}
		first[u.SHA256] = u.File
		attempts = append(attempts, k)
	}
	byStart := map[time.Time][]int{}
	for _, k := range attempts {
		if t := acceptance.StartedAt(us[k].Metadata); !t.IsZero() {
			byStart[t] = append(byStart[t], k)
		}
	}
	for _, k := range attempts {
		same := byStart[acceptance.StartedAt(us[k].Metadata)]
		if len(same) < 2 {
			continue
		}
		var others []string
		for _, m := range same {
			if m != k {
				others = append(others, us[m].File)
			}
		}
		flag(&us[k], acceptance.DuplicateReason(us[k].Unit, others))
	}
}

// flag adds a traceability reason to u; a unit that would pass is made
// invalid.
func flag(u *acceptance.UnitResult, r acceptance.Reason) {
	u.Reasons = append(u.Reasons, r)
	if u.Verdict == acceptance.Pass {
		u.Verdict = acceptance.Invalid
	}
}

// testDates returns the earliest and latest date part of the logs'
// started_at (or date, tested_at) metadata; empty when none carries one.
func testDates(units []acceptance.UnitResult) acceptance.DateRange {
	var r acceptance.DateRange
	for _, u := range units {
		for _, key := range []string{"started_at", "date", "tested_at"} {
			v := u.Metadata[key]
			if len(v) < 10 || !isDate(v[:10]) {
				continue
			}
			d := v[:10]
			if r.First == "" || d < r.First {
				r.First = d
			}
			if d > r.Last {
				r.Last = d
			}
			break
		}
	}
	return r
}

// isDate reports whether s is a calendar date written YYYY-MM-DD (ISO
// 8601); a metadata value such as 2026-13-45 is no date, and must not
// become the date a report carries.
func isDate(s string) bool {
	if len(s) != 10 || s[4] != '-' || s[7] != '-' {
		return false
	}
	if _, err := time.Parse("2006-01-02", s); err != nil {
		return false
	}
	for i, c := range s {
		if i == 4 || i == 7 {
			continue
		}
		if c < '0' || c > '9' {
			return false
		}
	}
	return true
}
