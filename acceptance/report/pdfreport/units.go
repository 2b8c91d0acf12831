package pdfreport

import (
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"

	"gonum.org/v1/plot"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/causes"
	"github.com/stepgate/stepgate/acceptance/report/chart"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/metrics"
	"github.com/stepgate/stepgate/templates"
)

// chartPage draws every kept step normalised to its step, with the model's
// prediction.
func (r *report) chartPage() error {
	p, b := r.pdf, r.b
	p.AddPage()
	r.heading("Step responses", 120)
	o := chart.ForBatch(b)
	r.para(fmt.Sprintf("The recorded steps, normalised to each one's own step: 0 is the level before the step, 1 the commanded level; time runs from the step instant. "+
		"The shaded band is the settling band ±%s %% of the step.", num(o.Band*100)), 9, 4.6, black)
	if err := r.drawOverlay(o, 125); err != nil {
		return err
	}
	r.overlayNotes(o)
	return nil
}

// drawOverlay draws the chart, or says why there is none.
func (r *report) drawOverlay(o *chart.Overlay, h float64) error {
	p := r.pdf
	if len(o.Curves) == 0 {
		r.ensure(12)
		p.Ln(2)
		r.para(textNoOverlay, 10, 5, invalidText)
		return nil
	}
	r.ensure(h + 2)
	p.Ln(1)
	y := p.GetY()
	pl, err := o.Plot()
	if err != nil {
		return err
	}
	r.drawPlot(pl, marginL, y, contentW, h)
	p.SetXY(marginL, y+h+1)
	return nil
}

// overlayNotes says which steps the chart leaves out, and why.
func (r *report) overlayNotes(o *chart.Overlay) {
	var notes []string
	notes = append(notes, fmt.Sprintf("%d of %d steps drawn.", o.Shown, o.Steps))
	if o.NoRecord > 0 || o.Thinned > 0 {
		notes = append(notes, "Too many steps to draw each one: the chart shows a sample of the passed steps beside the others, spread evenly over the batch.")
	}
	if o.Clipped {
		notes = append(notes, fmt.Sprintf("Curves beyond %s … %s are cut at the frame.", num(o.YMin), num(o.YMax)))
	}
	if n := len(o.Skipped); n > 0 {
		notes = append(notes, fmt.Sprintf("%d could not be drawn; first: %s", n, o.Skipped[0]))
	}
	if o.PredictionKind != "" {
		notes = append(notes, "Black: the model's "+o.PredictionKind+" prediction of each nominal step.")
	}
	r.para(strings.Join(notes, " "), 8.5, 4.3, grey)
}

func (r *report) unitTable() {
	p := r.pdf
	p.AddPage()
	cols := []column{
		{title: "#", width: 10, align: "R"},
		{title: "unit", width: 36, align: "L"},
		{title: "file", width: 42, align: "L"},
		{title: "steps", width: 12, align: "R"},
		{title: "verdict", width: 18, align: "C"},
		{title: "first reason", width: 62, align: "L", wrap: 2},
	}
	row := func(i int) []cell {
		u := &r.b.Units[i]
		reason := ""
		if u.Verdict != acceptance.Pass {
			reason = digest.FirstReason(u)
		}
		return []cell{
			{text: strconv.Itoa(i + 1), smallerInk: true}, {text: u.Unit, link: r.pageLink[i]}, txt(filepath.Base(u.File)),
			txt(strconv.Itoa(len(u.Steps))), verdictCell(u.Verdict), txt(reason),
		}
	}
	r.retests()
	p.Ln(3)
	if len(r.b.Units) == 0 {
		r.heading("Units", 10)
		r.para("The batch has no units.", 9, 4.6, black)
		return
	}
	var bad, all [][]cell
	nBad := 0
	for i := range r.b.Units {
		pass := r.b.Units[i].Verdict == acceptance.Pass
		if !pass {
			nBad++
		}
		if len(all) < maxTableRows {
			all = append(all, row(i))
			if !pass && len(bad) < maxTableRows {
				bad = append(bad, all[len(all)-1])
			}
		} else if !pass && len(bad) < maxTableRows {
			bad = append(bad, row(i))
		}
	}
	more := func(shown, total int) {
		if total > shown {
			r.para(fmt.Sprintf("%d more not listed here: report.xlsx (Units sheet) and results.json list every unit.", total-shown), 8.5, 4.3, grey)
		}
	}
	if nBad > 0 && nBad < len(r.b.Units) {
		r.heading(fmt.Sprintf("Units that did not pass (%d)", nBad), 20)
		r.table(cols, bad)
		more(len(bad), nBad)
		p.Ln(2)
	}
	r.heading(fmt.Sprintf("All units (%d)", len(r.b.Units)), 20)
	r.table(cols, all)
	more(len(all), len(r.b.Units))
	pages := len(r.b.PageUnits(r.o.AllUnits))
	which := fmt.Sprintf("the %d units that did not pass have", pages)
	if r.o.AllUnits && pages == len(r.b.Units) {
		which = "every unit has"
	} else if r.o.AllUnits {
		which = fmt.Sprintf("the first %d units have", pages)
	} else if pages == nBad {
		which = "each unit that did not pass has"
	} else {
		which = fmt.Sprintf("the first %d of the %d units that did not pass have", pages, nBad)
	}
	r.para("# is the unit's place in the batch. Long texts are shortened with “…”; "+which+" a detail page with all its reasons; its name in blue links to it.", 8, 4.2, grey)
}

// maxTableRows is the most rows a unit table lists; the XLSX lists all.
const maxTableRows = 1000

func (r *report) unitPage(i int, fig *unitFig) error {
	p, u := r.pdf, &r.b.Units[i]
	p.AddPage()
	r.font("B", 13)
	y := p.GetY()
	if link, ok := r.pageLink[i]; ok {
		p.SetLink(link, y, -1)
	}
	if !r.unitMarks {
		r.bookmark("Unit pages", 0)
		r.unitMarks = true
	}
	r.bookmark("Unit "+u.Unit+": "+verdictWord(u.Verdict), 1)
	p.CellFormat(contentW-30, 7, r.fit("Unit "+u.Unit, contentW-30), "", 0, "L", false, 0, "")
	fill, ink := verdictColours(u.Verdict)
	r.fillColour(fill)
	r.textColour(ink)
	r.font("B", 10)
	p.SetXY(marginL+contentW-28, y)
	p.CellFormat(28, 7, r.fit(verdictWord(u.Verdict), 28), "", 1, "C", true, 0, "")
	r.textColour(black)
	p.SetXY(marginL, y+8)

	sha := u.SHA256
	if sha == "" {
		sha = "not computed: the file could not be read"
	}
	kv := [][2]string{{"File", u.File}, {"File SHA-256", sha}, {"Rows read", rowsRead(u)}, {"Steps", strconv.Itoa(len(u.Steps))},
		{"Attempt", fmt.Sprintf("%d of %d", u.Attempt, u.Attempts)}}
	if u.Lot != "" || u.Shift != "" {
		kv = append(kv, [2]string{"Lot and shift", orDash(u.Lot) + " · shift " + orDash(u.Shift)})
	}
	if f := u.Fit; f != nil {
		kv = append(kv, [2]string{"Identified loop", fitText(f, r.unit)})
	}
	if u.Causes != nil {
		kv = append(kv, [2]string{"Likely causes", causesText(u.Causes)})
	}
	if len(u.Metadata) == 0 {
		kv = append(kv, [2]string{"Log header", "no metadata read"})
	} else {
		keys := make([]string, 0, len(u.Metadata))
		for k := range u.Metadata {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		var parts []string
		for _, k := range keys {
			parts = append(parts, k+": "+u.Metadata[k])
		}
		kv = append(kv, [2]string{"Log header", strings.Join(parts, " · ")})
	}
	r.keyValues(34, kv)

	if len(u.Reasons) > 0 {
		r.subheading("Reasons", 10)
		for _, s := range u.Reasons {
			r.bullet(s.Text, 9, 4.6)
		}
	}
	if err := r.unitFigure(i, fig); err != nil {
		return err
	}
	for k := range u.Steps {
		r.stepTable(&u.Steps[k])
	}
	return nil
}

// causesText names a unit's indicated causes, or says plainly that none
// stands out.
func causesText(keys []string) string {
	if len(keys) == 0 {
		return templates.MustPhrase("pdf-unit-causes-none")
	}
	titles := make([]string, 0, len(keys))
	for _, k := range keys {
		if c, ok := causes.ByKey(k); ok {
			titles = append(titles, c.Title())
		} else {
			titles = append(titles, k)
		}
	}
	return strings.Join(titles, ", ") + ": " + templates.MustPhrase("pdf-unit-causes")
}

// rowsRead says how much of a unit's file could be read.
func rowsRead(u *acceptance.UnitResult) string {
	switch {
	case u.Samples > 0:
		return strconv.Itoa(u.Samples) + " data rows"
	case len(u.Steps) == 0 && u.Verdict == acceptance.Invalid:
		return "none used: the reader stops at the first error, so no sample of this file was measured"
	}
	return "0"
}

// bullet prints one bulleted, wrapped line.
func (r *report) bullet(s string, size, lh float64) {
	p := r.pdf
	r.font("", size)
	lines := r.wrap(s, contentW-5, 0)
	r.ensure(float64(len(lines)) * lh)
	r.textColour(black)
	for k, line := range lines {
		p.SetX(marginL)
		mark := ""
		if k == 0 {
			mark = "•"
		}
		p.CellFormat(5, lh, mark, "", 0, "C", false, 0, "")
		p.CellFormat(contentW-5, lh, line, "", 1, "L", false, 0, "")
	}
}

// Unit figure geometry.
const (
	panelGap = 6.0
	panelH   = 68.0
)

// unitFigure draws the unit's steps, or says plainly why there is no chart.
// unitFig is a unit page's figure made ready away from the document: the
// record fetched (kept, or read again), its panels laid out and thinned,
// their plots built.
type unitFig struct {
	f     *chart.UnitFigure
	plots []*plot.Plot
	w     float64 // panel width, mm
	cols  int
	err   error
	// readErr is why the record could not be read again, if it could not.
	readErr error
}

// prepareFigure builds the figure of unit i. It reads the batch and the
// unit's record only, so the figures of the next pages are prepared while
// one page is laid out. A record that cannot be read again gives a figure
// without panels whose error the page states.
func prepareFigure(b *acceptance.Batch, traces digest.TraceStore, i int) *unitFig {
	var tr *metrics.Trace
	var readErr error
	if traces != nil {
		tr, readErr = traces.UnitTrace(&b.Units[i])
	}
	f := chart.ForUnitSteps(b, i, tr)
	fig := &unitFig{f: f, cols: 1, readErr: readErr}
	if len(f.Panels) == 0 {
		return fig
	}
	if len(f.Panels) > 1 {
		fig.cols = 2
	}
	fig.w = (contentW - panelGap*float64(fig.cols-1)) / float64(fig.cols)
	for k := range f.Panels {
		// Each series is reduced to what the panel shows on paper.
		pn := f.Panels[k].Reduced(fig.w, panelH)
		pl, err := pn.Plot(f.ResponseUnit, f.PredictionKind)
		if err != nil {
			fig.err = err
			return fig
		}
		fig.plots = append(fig.plots, pl)
	}
	return fig
}

// safeFigure is prepareFigure with a panic turned into the figure's error,
// since it runs past the report writer's own recovery.
func safeFigure(b *acceptance.Batch, traces digest.TraceStore, i int) (fig *unitFig) {
	defer func() {
		if r := recover(); r != nil {
			fig = &unitFig{err: fmt.Errorf("internal error preparing the figure: %v", r)}
		}
	}()
	return prepareFigure(b, traces, i)
}

// figures prepares the figures of the given units in order, ahead of the
// caller, on one goroutine; stop ends it early. At most three records read
// again are held at once: two prepared figures waiting and one being
// prepared.
func figures(b *acceptance.Batch, traces digest.TraceStore, units []int) (next func() *unitFig, stop func()) {
	const ahead = 2 // prepared figures waiting for their page
	ch := make(chan *unitFig, ahead)
	done := make(chan struct{})
	go func() {
		defer close(ch)
		for _, i := range units {
			select {
			case ch <- safeFigure(b, traces, i):
			case <-done:
				return
			}
		}
	}()
	var once sync.Once
	return func() *unitFig { return <-ch }, func() {
		once.Do(func() { close(done) })
		for range ch { // let the goroutine finish
		}
	}
}

func (r *report) unitFigure(i int, fig *unitFig) error {
	p, u := r.pdf, &r.b.Units[i]
	f := fig.f
	if fig.err != nil {
		return fig.err
	}
	if len(f.Panels) == 0 {
		r.subheading("Record", 8)
		msg := textNoChartKept
		switch {
		case len(u.Steps) == 0 && u.Trace == nil && u.Samples == 0:
			msg = textNoChartUnread
		case len(u.Steps) == 0:
			msg = textNoChartSteps
		case len(u.Axes) > 0:
			msg = textNoChartAxes
		case fig.readErr != nil:
			msg = "No chart: the record could not be read again: " + fig.readErr.Error() + "."
		case len(f.Skipped) > 0:
			msg = "No chart: " + strings.Join(f.Skipped, "; ") + "."
		}
		r.para(msg, 9, 4.6, invalidText)
		return nil
	}
	cols, w := fig.cols, fig.w
	r.subheading("Response, command and prediction", panelH+2)
	y := p.GetY()
	for k := range f.Panels {
		col := k % cols
		if col == 0 && k > 0 {
			y += panelH + 2
			p.SetY(y)
			if r.ensure(panelH + 2) {
				y = p.GetY()
			}
		}
		r.drawPlot(fig.plots[k], marginL+float64(col)*(w+panelGap), y, w, panelH)
	}
	p.SetY(y)
	p.SetXY(marginL, p.GetY()+panelH+1)
	var notes []string
	notes = append(notes, fmt.Sprintf("Time on the record's clock. Shaded: the settling band ±%s %% of the step around the final value. Vertical lines: the step instant plus each time limit.", num(r.d.Band*100)))
	if f.PredictionKind != "" {
		notes = append(notes, "Black: the model's "+f.PredictionKind+" prediction, shifted to the step instant.")
	}
	if f.NotDrawn > 0 {
		notes = append(notes, fmt.Sprintf("%d more steps are not drawn; the tables below list every step.", f.NotDrawn))
	}
	if len(f.Skipped) > 0 {
		notes = append(notes, "Not drawn: "+strings.Join(f.Skipped, "; ")+".")
	}
	r.para(strings.Join(notes, " "), 8, 4.2, grey)
	return nil
}

// fitText describes an identified closed loop.
func fitText(f *acceptance.Fit, unit string) string {
	if f.Why != "" && !f.Damping.OK {
		return "not identified: " + f.Why
	}
	s := fmt.Sprintf("from step %d: ζ = %s, ωn = %s rad/s, static gain %s, dead time %s s, rms residual %s %s",
		f.Step, value(f.Damping), value(f.NaturalFrequency), value(f.StaticGain), value(f.DeadTime), value(f.RMSResidual), unit)
	if f.Why != "" {
		s += " (" + f.Why + ")"
	}
	return strings.TrimSpace(s)
}

func (r *report) stepTable(s *acceptance.StepResult) {
	title := fmt.Sprintf("Step %d: %s → %s %s at t = %s s, %s", s.Index, num(s.From), num(s.To), r.unit, num(s.StartS), verdictWord(s.Verdict))
	if s.Axis != "" {
		title = "Axis " + s.Axis + ", s" + title[1:]
	}
	r.subheading(title, 6+3*lineH)
	checks := map[metrics.Name]acceptance.Check{}
	for _, c := range s.Checks {
		checks[c.Metric] = c
	}
	names := make([]metrics.Name, 0, len(r.d.Shown)+len(checks))
	names = append(names, r.d.Shown...)
	var extra []metrics.Name
	for k := range checks {
		if !slices.Contains(r.d.Shown, k) {
			extra = append(extra, k)
		}
	}
	slices.Sort(extra)
	names = append(names, extra...)
	cols := []column{
		{title: "metric", width: 36, align: "L"},
		{title: "measured", width: 18, align: "R"},
		{title: "predicted", width: 18, align: "R"},
		{title: "gap", width: 17, align: "R"},
		{title: "min", width: 12, align: "R"},
		{title: "max", width: 12, align: "R"},
		{title: "unit", width: 10, align: "L"},
		{title: "check", width: 14, align: "C"},
		{title: "note", width: 43, align: "L", wrap: 3},
	}
	var rows [][]cell
	for _, m := range names {
		if row := r.metricRow(s, m, checks); row != nil {
			rows = append(rows, row)
		}
	}
	r.table(cols, rows)
	// Reasons the table's notes do not already give.
	given := map[string]bool{}
	for _, c := range s.Checks {
		given[c.Reason] = true
	}
	var rest []string
	for _, why := range s.Reasons {
		if !given[why.Text] {
			rest = append(rest, why.Text)
		}
	}
	if len(rest) > 0 {
		r.para("Step reasons: "+strings.Join(rest, "; "), 8.5, 4.3, black)
	}
}

// metricRow is the step table's row of metric m: measured, predicted and
// gap, and for a limited metric its limits and check; nil for a name the
// step neither measured nor checked.
func (r *report) metricRow(s *acceptance.StepResult, m metrics.Name, checks map[metrics.Name]acceptance.Check) []cell {
	v, ok := s.Metrics.Lookup(m)
	c, limited := checks[m]
	if !ok && !limited {
		return nil
	}
	note := ""
	if !v.OK {
		note = s.Metrics.Reason(m)
		if note == "" {
			note = v.Why
		}
	}
	pred, gap := "", ""
	if s.Predicted != nil {
		pred = "—"
		if pv, ok := s.Predicted.Metrics.Lookup(m); ok {
			pred = value(pv)
		}
		gap = "—"
		if g := s.Gap.Get(m); g != nil {
			gap = gapText(*g, v, s.Predicted.Metrics.Get(m))
		}
	}
	row := []cell{txt(digest.MetricLabel(m)), {text: value(v), bold: limited}, txt(pred), txt(gap)}
	if !limited {
		return append(row, txt(""), txt(""), txt(digest.MetricUnit(m, r.unit)), txt(""), txt(note))
	}
	if c.Reason != "" {
		note = c.Reason
	}
	return append(row, txt(bound(c.Min)), txt(bound(c.Max)), txt(digest.MetricUnit(m, r.unit)), verdictCell(c.Verdict), txt(note))
}

// gapText prints measured − predicted. A difference below a billionth of
// the values compared is floating-point rounding of equal numbers and
// prints as 0; the workbook keeps the exact difference.
func gapText(g float64, measured, predicted metrics.Value) string {
	scale := 0.0
	if measured.OK {
		scale = math.Abs(measured.V)
	}
	if predicted.OK {
		scale = math.Max(scale, math.Abs(predicted.V))
	}
	if math.Abs(g) < 1e-9*scale {
		return "0"
	}
	return num(g)
}
