package pdfreport

import (
	"fmt"
	"io"
	"math"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"codeberg.org/go-fonts/liberation/liberationsansbold"
	"codeberg.org/go-fonts/liberation/liberationsansregular"
	"github.com/jung-kurt/gofpdf"
	"gonum.org/v1/plot/vg/draw"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/chart"
	"github.com/stepgate/stepgate/metrics"
	"github.com/stepgate/stepgate/templates"
)

// Options choose what the PDF report contains.
type Options struct {
	// AllUnits gives every unit a detail page. By default only the units
	// that did not pass get one; the unit table always lists every unit.
	AllUnits bool
	// Uncompressed leaves the page contents uncompressed, so that text
	// tools and tests can read them. The document is otherwise the same.
	Uncompressed bool
}

// ReportTitle is the title printed on every page.
const ReportTitle = "Step-response acceptance report"

// Write writes the PDF report of the batch to w. The same batch and options
// give the same bytes: the document dates are the report date and nothing
// depends on the clock or on map order.
func Write(w io.Writer, b *acceptance.Batch, o Options) error {
	if b == nil {
		return fmt.Errorf("pdfreport: no batch to report")
	}
	date, err := ReportTime(b)
	if err != nil {
		return fmt.Errorf("pdfreport: %w", err)
	}
	pdf := gofpdf.New("P", "mm", "A4", "")
	pdf.SetCompression(!o.Uncompressed)
	pdf.SetCatalogSort(true)
	pdf.SetCreationDate(date)
	pdf.SetModificationDate(date)
	// The page-count alias must be set before the fonts are added: gofpdf
	// sizes the font subsets by it.
	pdf.AliasNbPages("{nb}")
	pdf.AddUTF8FontFromBytes(fontFamily, "", liberationsansregular.TTF)
	pdf.AddUTF8FontFromBytes(fontFamily, "B", liberationsansbold.TTF)
	if err := pdf.Error(); err != nil {
		return fmt.Errorf("pdfreport: embedding the font: %w", err)
	}

	r := &report{layout: layout{pdf: pdf}, b: b, o: o, id: ReportID(b), unit: ResponseUnit(b)}
	tool := strings.TrimSpace(b.Tool.Name + " " + b.Tool.Version)
	pdf.SetProducer(Clean(tool), true)
	pdf.SetCreator(Clean(tool), true)
	pdf.SetTitle(Clean(ReportTitle+": "+b.Spec.Title), true)
	pdf.SetSubject(Clean(fmt.Sprintf("spec %s rev %s, report %s", b.Spec.SpecID, b.Spec.Revision, r.id)), true)
	pdf.SetKeywords(Clean(fmt.Sprintf("report %s; spec %s; revision %s; units %d; pass %d; fail %d; invalid %d",
		r.id, b.Spec.SpecID, b.Spec.Revision, b.Summary.Units, b.Summary.Pass, b.Summary.Fail, b.Summary.Invalid)), true)
	if b.SpecDoc != nil && b.SpecDoc.Report.PreparedBy.Name != "" {
		pdf.SetAuthor(Clean(b.SpecDoc.Report.PreparedBy.Name), true)
	}
	pdf.SetMargins(marginL, bodyTop, marginR)
	pdf.SetAutoPageBreak(true, pageH-bodyEnd)
	pdf.SetHeaderFuncMode(r.header, true)
	pdf.SetFooterFunc(r.footer)

	if err := r.logo(); err != nil {
		return fmt.Errorf("pdfreport: %w", err)
	}
	r.summary()
	if err := r.chartPage(); err != nil {
		return fmt.Errorf("pdfreport: %w", err)
	}
	r.unitTable()
	for i := range b.Units {
		if o.AllUnits || b.Units[i].Verdict != acceptance.Pass {
			if err := r.unitPage(i); err != nil {
				return fmt.Errorf("pdfreport: unit %q: %w", b.Units[i].Unit, err)
			}
		}
	}
	r.cautions()
	if err := pdf.Error(); err != nil {
		return fmt.Errorf("pdfreport: laying out the report: %w", err)
	}
	if err := pdf.Output(w); err != nil {
		return fmt.Errorf("pdfreport: writing the report: %w", err)
	}
	return nil
}

// report holds what every page needs.
type report struct {
	layout
	b        *acceptance.Batch
	o        Options
	id       string
	unit     string // response unit
	logoName string // registered logo image, "" without one
	logoInfo *gofpdf.ImageInfoType
}

func (r *report) header() {
	p := r.pdf
	p.SetXY(marginL, 8)
	r.font("B", 9)
	r.textColour(black)
	left := contentW * 0.62
	right := contentW - left
	if r.logoName != "" {
		// A small logo at the right edge of the header band.
		h := 8.0
		w := h * r.logoInfo.Width() / r.logoInfo.Height()
		if w > 30 {
			w, h = 30, 30*r.logoInfo.Height()/r.logoInfo.Width()
		}
		p.ImageOptions(r.logoName, pageW-marginR-w, 8, w, h, false, gofpdf.ImageOptions{}, 0, "")
		right -= w + 2
	}
	p.CellFormat(left, 5, r.fit(ReportTitle, left), "", 0, "L", false, 0, "")
	p.CellFormat(right, 5, r.fit("spec "+r.b.Spec.SpecID+" rev "+r.b.Spec.Revision, right), "", 1, "R", false, 0, "")
	r.font("", 8)
	r.textColour(grey)
	p.SetX(marginL)
	p.CellFormat(left, 4, r.fit(r.b.Spec.Title, left), "", 0, "L", false, 0, "")
	p.CellFormat(right, 4, r.fit("report "+r.id, right), "", 1, "R", false, 0, "")
	r.drawColour(ruleGrey)
	p.SetLineWidth(0.3)
	p.Line(marginL, 18.5, pageW-marginR, 18.5)
	r.textColour(black)
}

func (r *report) footer() {
	p := r.pdf
	r.drawColour(ruleGrey)
	p.SetLineWidth(0.3)
	p.Line(marginL, 283, pageW-marginR, 283)
	p.SetXY(marginL, 284.5)
	r.font("", 8)
	r.textColour(grey)
	p.CellFormat(contentW*0.7, 4, r.fit("report "+r.id+" · issued "+r.b.ReportDate, contentW*0.7), "", 0, "L", false, 0, "")
	p.CellFormat(contentW*0.3, 4, "page "+strconv.Itoa(p.PageNo())+" of {nb}", "", 0, "R", false, 0, "")
	r.textColour(black)
}

// logo registers the spec's logo image, when it names one.
func (r *report) logo() error {
	if r.b.SpecDoc == nil || r.b.SpecDoc.Report.Logo == "" {
		return nil
	}
	path := r.b.SpecDoc.Report.Logo
	if !filepath.IsAbs(path) && r.b.SpecDoc.Source != "" {
		path = filepath.Join(filepath.Dir(r.b.SpecDoc.Source), path)
	}
	kind := strings.TrimPrefix(strings.ToLower(filepath.Ext(path)), ".")
	if kind == "jpeg" {
		kind = "jpg"
	}
	if kind != "png" && kind != "jpg" {
		return fmt.Errorf("logo %s (report.logo in spec %s): want a .png or .jpg file", path, r.b.SpecDoc.Source)
	}
	info := r.pdf.RegisterImageOptions(path, gofpdf.ImageOptions{ImageType: kind})
	if err := r.pdf.Error(); err != nil || info == nil {
		return fmt.Errorf("logo %s (report.logo in spec %s): %v", path, r.b.SpecDoc.Source, err)
	}
	r.logoName, r.logoInfo = path, info
	return nil
}

// overall is the colour of the batch's result banner: red with any failure,
// amber with any invalid unit (or none tested), else green.
func overall(s acceptance.Summary) acceptance.Verdict {
	switch {
	case s.Fail > 0:
		return acceptance.Fail
	case s.Invalid > 0 || s.Units == 0:
		return acceptance.Invalid
	}
	return acceptance.Pass
}

func (r *report) summary() {
	p, b := r.pdf, r.b
	p.AddPage()
	r.font("B", 17)
	p.CellFormat(contentW, 9, r.fit(ReportTitle, contentW), "", 1, "L", false, 0, "")
	if b.Spec.Title != "" {
		r.font("", 12)
		p.CellFormat(contentW, 6.5, r.fit(b.Spec.Title, contentW), "", 1, "L", false, 0, "")
	}
	if d := b.SpecDoc; d != nil {
		var who []string
		for _, s := range []string{d.Report.Company, d.Report.Site, d.Report.Address} {
			if s = strings.TrimSpace(s); s != "" {
				who = append(who, s)
			}
		}
		if len(who) > 0 {
			r.para(strings.Join(who, " · "), 9, 4.6, grey)
		}
		if d.Report.Customer != "" {
			r.para("Customer: "+d.Report.Customer, 9, 4.6, grey)
		}
	}
	p.Ln(3)
	r.banner()
	p.Ln(3)

	r.heading("Identification", 30)
	r.keyValues(42, r.identification())

	r.limitsTable()

	r.heading("Decision rule", 15)
	r.para(decisionRule(b), 9, 4.6, black)

	r.authorisation()
	p.Ln(2)
	r.para("The results relate only to the items tested, identified by the log files and their SHA-256 digests listed in this report. "+
		"Measurement uncertainty is not evaluated; values are compared with the limits as measured. "+
		"The safety cautions at the end of the report are part of it.", 8.5, 4.3, grey)

	r.comparisonTable()
}

// banner prints the one-line result a reader takes away.
func (r *report) banner() {
	p, s := r.pdf, r.b.Summary
	fill, ink := verdictColours(overall(s))
	y := p.GetY()
	r.fillColour(fill)
	p.Rect(marginL, y, contentW, 19, "F")
	r.textColour(ink)
	r.font("B", 15)
	p.SetXY(marginL+3, y+2.5)
	head := fmt.Sprintf("%d of %d units passed", s.Pass, s.Units)
	if s.Units == 0 {
		head = "No units were tested"
	}
	p.CellFormat(contentW*0.65, 8, head, "", 0, "L", false, 0, "")
	yield := "yield: not defined"
	if v, ok := Yield(s); ok {
		yield = "yield " + strconv.FormatFloat(v*100, 'f', 1, 64) + " %"
	}
	p.CellFormat(contentW*0.35-6, 8, yield, "", 0, "R", false, 0, "")
	r.font("", 10)
	p.SetXY(marginL+3, y+11)
	p.CellFormat(contentW-6, 5.5, fmt.Sprintf("%d passed · %d failed · %d invalid (the data could not show pass or fail)",
		s.Pass, s.Fail, s.Invalid), "", 0, "L", false, 0, "")
	r.textColour(black)
	p.SetXY(marginL, y+19)
}

func (r *report) identification() [][2]string {
	b := r.b
	kv := [][2]string{
		{"Report", r.id},
		{"Date of issue", b.ReportDate},
		{"Specification", strings.TrimSpace(fmt.Sprintf("%s, revision %s", b.Spec.SpecID, b.Spec.Revision))},
		{"Spec title", b.Spec.Title},
		{"Spec SHA-256", b.Spec.SHA256},
	}
	if b.SpecDoc != nil && b.SpecDoc.Source != "" {
		kv = append(kv, [2]string{"Spec file", filepath.Base(b.SpecDoc.Source)})
	}
	kv = append(kv,
		[2]string{"Tool", strings.TrimSpace(b.Tool.Name + " " + b.Tool.Version)},
		[2]string{"Items tested", fmt.Sprintf("%d units, one step-test log file each", b.Summary.Units)},
	)
	if b.SpecDoc != nil && b.SpecDoc.Report.Site != "" {
		kv = append(kv, [2]string{"Test site", b.SpecDoc.Report.Site})
	}
	return kv
}

// decisionRule states how the verdicts were reached and at which levels the
// metrics were measured.
func decisionRule(b *acceptance.Batch) string {
	lo, hi := 10.0, 90.0
	band := chart.SettlingBand(b) * 100
	dead := metrics.DefaultOptions().DeadTimeLevel * 100
	final := metrics.DefaultOptions().FinalWindow * 100
	if d := b.SpecDoc; d != nil {
		if len(d.Metrics.RiseLevelsPct) == 2 {
			lo, hi = d.Metrics.RiseLevelsPct[0], d.Metrics.RiseLevelsPct[1]
		}
		if d.Metrics.DeadTimeLevelPct > 0 {
			dead = d.Metrics.DeadTimeLevelPct
		}
		if d.Metrics.FinalWindowPct > 0 {
			final = d.Metrics.FinalWindowPct
		}
	}
	return "Simple acceptance (ISO 14253-1:2017; ILAC-G8:09/2019): each measured value is compared with its limit, with no guard band. " +
		"A unit passes only when it has at least one step and every limited metric of every step was measured and lies within its limits. " +
		"A limited metric that could not be measured makes the step invalid, unless the record already proves a failure. " +
		fmt.Sprintf("Rise time between the %s %% and %s %% levels of the transition; settling band ±%s %% of the step; dead time ends at a %s %% departure; final value from the last %s %% of each step's record. ",
			Num(lo), Num(hi), Num(band), Num(dead), Num(final)) +
		"Times are measured from the step instant, the first sample at the new command."
}

// metricLabel is the readable name of a metric.
func metricLabel(m string) string {
	switch metrics.Name(m) {
	case metrics.StepSize:
		return "step size"
	case metrics.InitialValue:
		return "initial value"
	case metrics.FinalValue:
		return "final value"
	case metrics.DeadTime:
		return "dead time"
	case metrics.RiseTime:
		return "rise time"
	case metrics.PeakValue:
		return "peak value"
	case metrics.PeakTime:
		return "peak time"
	case metrics.Overshoot:
		return "overshoot"
	case metrics.SettlingTime:
		return "settling time"
	case metrics.SteadyStateError:
		return "steady-state error"
	case metrics.SteadyStateErrorPct:
		return "steady-state error (rel.)"
	}
	return strings.ReplaceAll(m, "_", " ")
}

func bound(v *float64) string {
	if v == nil {
		return "—"
	}
	return Num(*v)
}

func value(v metrics.Value) string {
	if !v.OK {
		return "—"
	}
	return Num(v.V)
}

func (r *report) limitsTable() {
	names := LimitedMetrics(r.b)
	r.heading("Limits", 6+lineH*2)
	if len(names) == 0 {
		r.para("The spec sets no limits, so no unit can pass.", 9, 4.6, black)
		return
	}
	cols := []column{
		{title: "metric", width: 52, align: "L"},
		{title: "spec key", width: 52, align: "L"},
		{title: "min", width: 28, align: "R"},
		{title: "max", width: 28, align: "R"},
		{title: "unit", width: 20, align: "L"},
	}
	var rows [][]cell
	for _, m := range names {
		l := r.b.Limits[m]
		rows = append(rows, []cell{txt(metricLabel(m)), {text: m, smallerInk: true}, txt(bound(l.Min)), txt(bound(l.Max)), txt(MetricUnit(m, r.unit))})
	}
	r.table(cols, rows)
	r.para("— : no bound on that side.", 8, 4.2, grey)
}

func (r *report) comparisonTable() {
	cmp := Compare(r.b)
	if r.b.Model == nil {
		return
	}
	r.heading("Predicted versus achieved", 6+lineH*3)
	if pl := r.b.Model.Plant; pl != "" {
		r.para("Plant: "+pl, 9, 4.6, black)
	}
	for _, wmsg := range r.b.Model.Warnings {
		r.para("Model warning: "+wmsg, 9, 4.6, invalidText)
	}
	if len(cmp) == 0 {
		r.para("The model predicted no nominal step, or the spec limits no metric.", 9, 4.6, black)
		return
	}
	cols := []column{
		{title: "metric", width: 42, align: "L"},
		{title: "unit", width: 12, align: "L"},
		{title: "predicted", width: 24, align: "R"},
		{title: "batch mean", width: 24, align: "R"},
		{title: "lowest", width: 24, align: "R"},
		{title: "highest", width: 24, align: "R"},
		{title: "steps measured", width: 30, align: "R"},
	}
	for i := 0; i < len(cmp); {
		j := i
		for j < len(cmp) && cmp[j].From == cmp[i].From && cmp[j].To == cmp[i].To {
			j++
		}
		r.subheading(fmt.Sprintf("Step %s → %s %s, %s prediction", Num(cmp[i].From), Num(cmp[i].To), r.unit, cmp[i].Kind), 6+lineH*2)
		var rows [][]cell
		for _, c := range cmp[i:j] {
			rows = append(rows, []cell{
				txt(metricLabel(c.Metric)), txt(MetricUnit(c.Metric, r.unit)),
				{text: value(c.Predicted), bold: true}, txt(value(c.Mean)), txt(value(c.Min)), txt(value(c.Max)),
				txt(fmt.Sprintf("%d of %d", c.Measured, c.Steps)),
			})
		}
		r.table(cols, rows)
		i = j
	}
	r.para("— : not predicted or not measured on any matching step. Steps match a prediction when both levels lie within 1 % of the step size.", 8, 4.2, grey)
}

// authorisation prints the signature block of ISO/IEC 17025:2017 §7.8.2.1:
// who prepared, reviewed and approved the report.
func (r *report) authorisation() {
	var sig [3]acceptance.Signatory
	if d := r.b.SpecDoc; d != nil {
		sig = [3]acceptance.Signatory{d.Report.PreparedBy, d.Report.ReviewedBy, d.Report.ApprovedBy}
	}
	titles := [3]string{"Prepared by", "Reviewed by", "Approved by"}
	r.heading("Authorisation", 34)
	p := r.pdf
	y := p.GetY()
	w := (contentW - 8) / 3
	for i := 0; i < 3; i++ {
		x := marginL + float64(i)*(w+4)
		r.drawColour(ruleGrey)
		p.SetLineWidth(0.3)
		p.Rect(x, y, w, 32, "D")
		p.SetXY(x+2, y+1.5)
		r.font("B", 9)
		r.textColour(grey)
		p.CellFormat(w-4, 4.6, titles[i], "", 2, "L", false, 0, "")
		p.SetX(x + 2)
		r.font("B", 9.5)
		r.textColour(black)
		name := sig[i].Name
		if name == "" {
			name = "name: ____________________"
		}
		p.CellFormat(w-4, 5, r.fit(name, w-4), "", 2, "L", false, 0, "")
		p.SetX(x + 2)
		r.font("", 8.5)
		p.CellFormat(w-4, 4.4, r.fit(sig[i].Role, w-4), "", 2, "L", false, 0, "")
		r.textColour(grey)
		p.SetXY(x+2, y+21)
		p.CellFormat(w-4, 4.4, "signature", "", 2, "L", false, 0, "")
		p.SetXY(x+2, y+26.5)
		p.CellFormat(w-4, 4.4, "date", "", 0, "L", false, 0, "")
		r.drawColour(grey)
		p.SetLineWidth(0.2)
		p.Line(x+18, y+24.6, x+w-2, y+24.6)
		p.Line(x+18, y+30.1, x+w-2, y+30.1)
	}
	r.textColour(black)
	p.SetXY(marginL, y+32)
}

func (r *report) chartPage() error {
	p, b := r.pdf, r.b
	p.AddPage()
	r.heading("Step responses", 120)
	o := chart.ForBatch(b)
	r.para(fmt.Sprintf("Every recorded step, normalised to its own step: 0 is the level before the step, 1 the commanded level; time runs from the step instant. "+
		"The shaded band is the settling band ±%s %% of the step.", Num(o.Band*100)), 9, 4.6, black)
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
		r.para("No step response can be drawn: no record of a step was kept for this report.", 10, 5, invalidText)
		return nil
	}
	r.ensure(h + 2)
	p.Ln(1)
	y := p.GetY()
	pl, err := o.Plot()
	if err != nil {
		return err
	}
	c := NewCanvas(p, marginL, y, contentW, h, fontFamily)
	pl.Draw(draw.New(c))
	// Restore what the canvas changed.
	p.SetDashPattern([]float64{}, 0)
	p.SetLineWidth(0.2)
	r.textColour(black)
	p.SetXY(marginL, y+h+1)
	return nil
}

// overlayNotes says which steps the chart leaves out, and why.
func (r *report) overlayNotes(o *chart.Overlay) {
	var notes []string
	notes = append(notes, fmt.Sprintf("%d of %d steps drawn.", o.Shown, o.Steps))
	if o.NoRecord > 0 {
		notes = append(notes, fmt.Sprintf("%d steps belong to units whose record was not kept for the report.", o.NoRecord))
	}
	if o.Thinned > 0 {
		notes = append(notes, fmt.Sprintf("%d steps left out to keep the chart readable (passed steps first; at most %d curves).", o.Thinned, chart.MaxCurves))
	}
	if o.Clipped {
		notes = append(notes, fmt.Sprintf("Curves beyond %s … %s are cut at the frame.", Num(o.YMin), Num(o.YMax)))
	}
	if n := len(o.Skipped); n > 0 {
		s := fmt.Sprintf("%d could not be drawn; first: %s", n, o.Skipped[0])
		notes = append(notes, s)
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
			reason = FirstReason(u)
		}
		return []cell{
			{text: strconv.Itoa(i + 1), smallerInk: true}, txt(u.Unit), txt(filepath.Base(u.File)),
			txt(strconv.Itoa(len(u.Steps))), verdictCell(u.Verdict), txt(reason),
		}
	}
	if len(r.b.Units) == 0 {
		r.heading("Units", 10)
		r.para("The batch has no units.", 9, 4.6, black)
		return
	}
	var bad [][]cell
	all := make([][]cell, 0, len(r.b.Units))
	for i := range r.b.Units {
		all = append(all, row(i))
		if r.b.Units[i].Verdict != acceptance.Pass {
			bad = append(bad, all[i])
		}
	}
	if len(bad) > 0 && len(bad) < len(all) {
		r.heading(fmt.Sprintf("Units that did not pass (%d)", len(bad)), 20)
		r.table(cols, bad)
		p.Ln(2)
	}
	r.heading(fmt.Sprintf("All units (%d)", len(all)), 20)
	r.table(cols, all)
	which := "each unit that did not pass has"
	if r.o.AllUnits {
		which = "every unit has"
	}
	r.para("# is the unit's place in the batch. Long texts are shortened with “…”; "+which+" a detail page with all its reasons.", 8, 4.2, grey)
}

func (r *report) unitPage(i int) error {
	p, u := r.pdf, &r.b.Units[i]
	p.AddPage()
	r.font("B", 13)
	y := p.GetY()
	p.CellFormat(contentW-30, 7, r.fit("Unit "+u.Unit, contentW-30), "", 0, "L", false, 0, "")
	fill, ink := verdictColours(u.Verdict)
	r.fillColour(fill)
	r.textColour(ink)
	r.font("B", 10)
	p.SetXY(marginL+contentW-28, y)
	p.CellFormat(28, 7, r.fit(verdictWord(u.Verdict), 28), "", 1, "C", true, 0, "")
	r.textColour(black)
	p.SetXY(marginL, y+8)

	kv := [][2]string{
		{"File", u.File},
		{"File SHA-256", u.SHA256},
		{"Samples read", strconv.Itoa(u.Samples)},
		{"Steps", strconv.Itoa(len(u.Steps))},
	}
	if f := u.Fit; f != nil {
		kv = append(kv, [2]string{"Identified loop", fitText(f, r.unit)})
	}
	r.keyValues(42, kv)
	if len(u.Metadata) > 0 {
		keys := make([]string, 0, len(u.Metadata))
		for k := range u.Metadata {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		kv = kv[:0]
		for _, k := range keys {
			kv = append(kv, [2]string{k, u.Metadata[k]})
		}
		r.subheading("From the log header", 5)
		r.keyValues(42, kv)
	}

	if len(u.Reasons) > 0 {
		r.subheading("Reasons", 10)
		for _, s := range u.Reasons {
			r.font("", 9)
			lines := r.wrap(s, contentW-5, 0)
			r.ensure(float64(len(lines)) * 4.6)
			r.textColour(black)
			for k, line := range lines {
				p.SetX(marginL)
				mark := ""
				if k == 0 {
					mark = "•"
				}
				p.CellFormat(5, 4.6, mark, "", 0, "C", false, 0, "")
				p.CellFormat(contentW-5, 4.6, line, "", 1, "L", false, 0, "")
			}
		}
	}
	for _, s := range u.Steps {
		r.stepTable(&s)
	}
	if u.Trace != nil && len(u.Steps) > 0 {
		o := chart.ForUnit(r.b, i)
		r.heading("Step responses of this unit", 75)
		if err := r.drawOverlay(o, 72); err != nil {
			return err
		}
		r.overlayNotes(o)
	}
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
	title := fmt.Sprintf("Step %d: %s → %s %s at t = %s s, %s", s.Index, Num(s.From), Num(s.To), r.unit, Num(s.StartS), verdictWord(s.Verdict))
	r.subheading(title, 6+3*lineH)
	checks := map[string]acceptance.Check{}
	for _, c := range s.Checks {
		checks[c.Metric] = c
	}
	names := make([]string, 0, len(metrics.Names)+len(checks))
	seen := map[string]bool{}
	for _, n := range metrics.Names {
		names = append(names, string(n))
		seen[string(n)] = true
	}
	var extra []string
	for k := range checks {
		if !seen[k] {
			extra = append(extra, k)
		}
	}
	sort.Strings(extra)
	names = append(names, extra...)

	havePred := s.Predicted != nil
	cols := []column{
		{title: "metric", width: 42, align: "L"},
		{title: "measured", width: 19, align: "R"},
		{title: "predicted", width: 19, align: "R"},
		{title: "gap", width: 18, align: "R"},
		{title: "min", width: 14, align: "R"},
		{title: "max", width: 14, align: "R"},
		{title: "unit", width: 10, align: "L"},
		{title: "check", width: 14, align: "C"},
		{title: "note", width: 30, align: "L", wrap: 3},
	}
	var rows [][]cell
	for _, m := range names {
		v, ok := s.Metrics[m]
		c, limited := checks[m]
		if !ok && !limited {
			continue
		}
		note := ""
		if !v.OK {
			note = s.Unmeasured[m]
			if note == "" {
				note = v.Why
			}
		}
		pred, gap := "", ""
		if havePred {
			pred = "—"
			if pv, ok := s.Predicted.Metrics[m]; ok {
				pred = value(pv)
			}
			gap = "—"
			if g := s.Gap[m]; g != nil {
				gap = gapText(*g, v, s.Predicted.Metrics[m])
			}
		}
		row := []cell{txt(metricLabel(m)), {text: value(v), bold: limited}, txt(pred), txt(gap)}
		if limited {
			if c.Reason != "" {
				note = c.Reason
			}
			row = append(row, txt(bound(c.Min)), txt(bound(c.Max)), txt(MetricUnit(m, r.unit)), verdictCell(c.Verdict), txt(note))
		} else {
			row = append(row, txt(""), txt(""), txt(MetricUnit(m, r.unit)), txt(""), txt(note))
		}
		rows = append(rows, row)
	}
	r.table(cols, rows)
	// Reasons the table's notes do not already give.
	given := map[string]bool{}
	for _, c := range s.Checks {
		given[c.Reason] = true
	}
	var rest []string
	for _, why := range s.Reasons {
		if !given[why] {
			rest = append(rest, why)
		}
	}
	if len(rest) > 0 {
		r.para("Step reasons: "+strings.Join(rest, "; "), 8.5, 4.3, black)
	}
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
	return Num(g)
}

// cautions prints the safety cautions and marks the end of the report.
func (r *report) cautions() {
	p := r.pdf
	p.AddPage()
	for _, blk := range Blocks(templates.Cautions) {
		switch blk.Kind {
		case BlockHeading:
			r.heading(blk.Lines[0], 15)
		case BlockList:
			for _, item := range blk.Lines {
				r.font("", 9)
				lines := r.wrap(item, contentW-6, 0)
				r.ensure(float64(len(lines)) * 4.5)
				r.textColour(black)
				for k, line := range lines {
					p.SetX(marginL)
					mark := ""
					if k == 0 {
						mark = "•"
					}
					p.CellFormat(6, 4.5, mark, "", 0, "C", false, 0, "")
					p.CellFormat(contentW-6, 4.5, line, "", 1, "L", false, 0, "")
				}
			}
			p.Ln(1.5)
		default:
			r.para(strings.Join(blk.Lines, " "), 9, 4.5, black)
			p.Ln(1.2)
		}
	}
	r.ensure(14)
	p.Ln(4)
	r.drawColour(ruleGrey)
	p.SetLineWidth(0.3)
	p.Line(marginL, p.GetY(), pageW-marginR, p.GetY())
	p.Ln(2)
	r.font("B", 9)
	r.textColour(grey)
	p.CellFormat(contentW, 5, r.fit("End of report "+r.id, contentW), "", 1, "C", false, 0, "")
	r.textColour(black)
}
