package digest

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math"
	"slices"
	"strings"
	"time"
	"unicode"
	"unicode/utf8"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
	"github.com/stepgate/stepgate/templates"
)

// Title is the title every report page and the workbook carry.
var Title = templates.MustPhrase("report-title")

// Digest is everything the reports show about one batch beyond its units'
// own rows. Make one with New.
type Digest struct {
	// Batch is the batch digested; the digest does not change it.
	Batch *acceptance.Batch
	// ID is the report id (see ReportID); Date the report date.
	ID   string
	Date time.Time
	// ResponseUnit is the spec's response unit, "" when it names none.
	ResponseUnit string
	// Yield is the fraction of units that passed; unknown without units.
	Yield metrics.Value
	// NotPassed counts the units that failed or were invalid.
	NotPassed int
	// Band is the settling band half-width, a fraction of the step size.
	Band float64
	// Limited lists the limited metrics in report order (LimitedMetrics).
	Limited []metrics.Name
	// Shown lists the metrics the reports' step tables and columns carry,
	// in report order (ShownMetrics).
	Shown []metrics.Name
	// Stats holds one entry per limited metric, in Limited order.
	Stats []MetricStats
	// Causes is the failure-reason Pareto, most frequent first.
	Causes []Cause
	// Comparisons sets each nominal prediction beside the batch; nil
	// without a model.
	Comparisons []Comparison
	// Loop compares the identified closed loops with the model's; nil
	// without a model.
	Loop *LoopSummary
	// Notes are the indications of likely causes, in rule order; empty
	// when the evidence supports none.
	Notes []Note
	// Advice closes the notes, whether there are any or not: reduce a
	// computed gain and verify it on the machine with the guards in place.
	Advice string

	all map[metrics.Name]*MetricStats // statistics of every metric, limited or not
}

// New digests the batch. It fails only when the batch is nil or its report
// date is not a YYYY-MM-DD date.
func New(b *acceptance.Batch) (*Digest, error) {
	if b == nil {
		return nil, fmt.Errorf("digest: no batch to report")
	}
	date, err := reportTime(b)
	if err != nil {
		return nil, fmt.Errorf("digest: %w", err)
	}
	d := &Digest{
		Batch:        b,
		ID:           ReportID(b),
		Date:         date,
		ResponseUnit: ResponseUnit(b),
		Band:         SettlingBand(b),
		Limited:      LimitedMetrics(b),
		Shown:        ShownMetrics(b),
	}
	if y, ok := yieldOf(b.Summary); ok {
		d.Yield = metrics.Known(y)
	} else {
		d.Yield = metrics.Unknown("the batch has no units")
	}
	for i := range b.Units {
		if b.Units[i].Verdict != acceptance.Pass {
			d.NotPassed++
		}
	}
	d.all = statistics(b, d.Limited, d.ResponseUnit)
	for _, m := range d.Limited {
		d.Stats = append(d.Stats, *d.all[m])
	}
	d.Causes = Pareto(b)
	d.Comparisons = compare(b)
	d.Loop = summariseLoop(b)
	d.Notes = notes(d)
	d.Advice = Phrase("causes-advice")
	return d, nil
}

// Metric returns the statistics of any metric over the batch's measured
// steps, limited or not, and false for a name the batch never measured or
// limited.
func (d *Digest) Metric(name metrics.Name) (MetricStats, bool) {
	s, ok := d.all[name]
	if !ok {
		return MetricStats{}, false
	}
	return *s, true
}

// ReportID returns the identification that every page of the report and the
// workbook carry: spec id, revision and the first 8 hex digits of a SHA-256
// over the spec's SHA-256, the report date, the tool name and version, and
// every unit's id and file SHA-256 in report order, e.g.
// "ACT-25-C-8f3a01bc". The same inputs give the same id wherever the files
// lie; a change in any input file, the spec, the tool or the date gives
// another. Control and format characters are dropped from the spec id and
// revision, so the id prints as it reads.
func ReportID(b *acceptance.Batch) string {
	h := sha256.New()
	fmt.Fprintf(h, "stepgate report id 1\nspec %s\ndate %s\ntool %s %s\n",
		b.Spec.SHA256, b.ReportDate, b.Tool.Name, b.Tool.Version)
	for _, u := range b.Units {
		fmt.Fprintf(h, "unit %q %s\n", u.Unit, u.SHA256)
	}
	sum := hex.EncodeToString(h.Sum(nil))[:8]
	var parts []string
	for _, p := range []string{b.Spec.SpecID, b.Spec.Revision} {
		if p = strings.TrimSpace(printable(p)); p != "" {
			parts = append(parts, p)
		}
	}
	return strings.Join(append(parts, sum), "-")
}

// printable drops control and invisible format characters and bytes that
// are not UTF-8, and turns white space into plain spaces.
func printable(s string) string {
	return strings.Map(func(r rune) rune {
		switch {
		case unicode.IsSpace(r):
			return ' '
		case r == utf8.RuneError, unicode.IsControl(r), unicode.Is(unicode.Cf, r):
			return -1
		}
		return r
	}, s)
}

// reportTime parses the batch's report date (YYYY-MM-DD) as midnight UTC,
// the time stamped into document properties so that the same batch gives the
// same bytes.
func reportTime(b *acceptance.Batch) (time.Time, error) {
	t, err := time.Parse("2006-01-02", b.ReportDate)
	if err != nil {
		return time.Time{}, fmt.Errorf("report date %q: want YYYY-MM-DD", b.ReportDate)
	}
	return t, nil
}

// ShownMetrics returns the metrics the reports list for the batch, in the
// report order of metrics.Names: every metric, except that the
// profiled-move metrics (metrics.Metric.Move) are left out of a batch in
// which no step is a profiled move (a known move time above 0) and no
// limit names them. results.json carries every metric whatever this says.
func ShownMetrics(b *acceptance.Batch) []metrics.Name {
	moves := hasMoves(b)
	limits := []map[metrics.Name]spec.Limit{b.Limits}
	if b.SpecDoc != nil {
		for _, a := range b.SpecDoc.Axes {
			limits = append(limits, a.Limits)
		}
	}
	for _, l := range limits {
		for n := range l {
			if m, ok := metrics.Lookup(n); ok && m.Move {
				moves = true
			}
		}
	}
	out := make([]metrics.Name, 0, metrics.NumNames)
	for i, n := range metrics.Names {
		if !metrics.At(i).Move || moves {
			out = append(out, n)
		}
	}
	return out
}

// hasMoves reports whether a step of the batch is a profiled move.
func hasMoves(b *acceptance.Batch) bool {
	for i := range b.Units {
		for j := range b.Units[i].Steps {
			if v, _ := b.Units[i].Steps[j].Metrics.Lookup(metrics.MoveTime); v.OK && v.V > 0 {
				return true
			}
		}
	}
	return false
}

// LimitedMetrics returns the metrics the batch's limits bound, in the
// report order of metrics.Names, followed by any other limited name in
// alphabetical order.
func LimitedMetrics(b *acceptance.Batch) []metrics.Name {
	var out []metrics.Name
	for _, n := range metrics.Names {
		if _, ok := b.Limits[n]; ok {
			out = append(out, n)
		}
	}
	var rest []metrics.Name
	for k := range b.Limits {
		if metrics.Index(k) < 0 {
			rest = append(rest, k)
		}
	}
	slices.Sort(rest)
	return append(out, rest...)
}

// MetricUnit returns the unit a metric is expressed in: seconds for times,
// percent for the percentages, and the spec's response unit for levels and
// errors (empty when the spec names none). It reads the metrics catalogue.
func MetricUnit(name metrics.Name, responseUnit string) string {
	return name.Unit(responseUnit)
}

// MetricLabel returns the readable name of a metric, e.g. "rise time" for
// rise_time_s, from the metrics catalogue.
func MetricLabel(m metrics.Name) string { return m.Label() }

// ResponseUnit returns the spec's response unit, or "" without a spec.
func ResponseUnit(b *acceptance.Batch) string {
	if b.SpecDoc == nil {
		return ""
	}
	return b.SpecDoc.ResponseUnit
}

// SettlingBand returns the settling band half-width, as a fraction of the
// step size, that the batch was measured with.
func SettlingBand(b *acceptance.Batch) float64 {
	if b.SpecDoc != nil && b.SpecDoc.Metrics.SettlingBandPct > 0 {
		return b.SpecDoc.Metrics.SettlingBandPct / 100
	}
	return metrics.DefaultOptions().Band
}

// yieldOf returns the fraction of units that passed; ok is false when the
// batch has no units, where a yield means nothing.
func yieldOf(s acceptance.Summary) (y float64, ok bool) {
	if s.Units <= 0 {
		return 0, false
	}
	return float64(s.Pass) / float64(s.Units), true
}

// FirstReason returns the unit's first reason, or the first reason of its
// first step that has one, or "" when nothing was reported.
func FirstReason(u *acceptance.UnitResult) string {
	if len(u.Reasons) > 0 {
		return u.Reasons[0].Text
	}
	for _, s := range u.Steps {
		if len(s.Reasons) > 0 {
			return s.Reasons[0].Text
		}
	}
	return ""
}

// TestDates returns the span of test dates as printed, "2026-11-30" or
// "2026-11-28 to 2026-11-30", and false when no log carried a date.
func TestDates(b *acceptance.Batch) (string, bool) {
	r := b.TestDates
	switch {
	case r.First == "" && r.Last == "":
		return "not recorded: no log carries a started_at date", false
	case r.First == r.Last || r.Last == "":
		return r.First, true
	case r.First == "":
		return r.Last, true
	}
	return r.First + " to " + r.Last, true
}

// finite reports whether v is a finite number.
func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
