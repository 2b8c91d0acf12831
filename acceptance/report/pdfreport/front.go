package pdfreport

import (
	"fmt"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/chart"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/metrics"
)

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

// front is the first page: the identification and the one-minute summary
// (result, failure reasons, the limited metrics over the batch).
func (r *report) front() error {
	p, b := r.pdf, r.b
	p.AddPage()
	r.font("B", 17)
	r.bookmark("Summary", 0)
	p.CellFormat(contentW, 9, r.fit(ReportTitle, contentW), "", 1, "L", false, 0, "")
	if b.Spec.Title != "" {
		r.font("", 12)
		p.CellFormat(contentW, 6.5, r.fit(b.Spec.Title, contentW), "", 1, "L", false, 0, "")
	}
	if d := b.SpecDoc; d != nil && strings.TrimSpace(d.Report.Company) != "" {
		r.para(d.Report.Company, 9, 4.6, grey)
	}
	p.Ln(2)
	r.banner()
	p.Ln(1)
	r.heading("Identification", 30)
	r.keyValues(40, r.identification())
	if err := r.pareto(); err != nil {
		return err
	}
	r.statsTable()
	return nil
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
	if r.d.Yield.OK {
		yield = "yield " + digest.Percent(r.d.Yield.V)
	}
	p.CellFormat(contentW*0.35-6, 8, yield, "", 0, "R", false, 0, "")
	r.font("", 10)
	p.SetXY(marginL+3, y+11)
	p.CellFormat(contentW-6, 5.5, fmt.Sprintf("%d passed · %d failed · %d invalid (the data could not show pass or fail)",
		s.Pass, s.Fail, s.Invalid), "", 0, "L", false, 0, "")
	r.textColour(black)
	p.SetXY(marginL, y+19)
}

// identification lists what ISO/IEC 17025:2017 §7.8.2.1 asks a test report
// to identify (references §7).
func (r *report) identification() [][2]string {
	b := r.b
	dates, _ := digest.TestDates(b)
	kv := [][2]string{
		{"Report", r.id},
		{"Date of issue", b.ReportDate},
		{"Test dates", dates},
		{"Specification", strings.TrimSpace(fmt.Sprintf("%s, revision %s", b.Spec.SpecID, b.Spec.Revision))},
		{"Spec SHA-256", b.Spec.SHA256},
	}
	if b.SpecDoc != nil && b.SpecDoc.Source != "" {
		kv = append(kv, [2]string{"Spec file", filepath.Base(b.SpecDoc.Source)})
	}
	kv = append(kv,
		[2]string{"Tool", strings.TrimSpace(b.Tool.Name + " " + b.Tool.Version)},
		[2]string{"Items tested", fmt.Sprintf("%d units, one step-test log file each, identified by serial and file SHA-256 in the unit table", b.Summary.Units)},
	)
	if d := b.SpecDoc; d != nil {
		for _, f := range [][2]string{
			{"Laboratory", d.Report.Company}, {"Address", d.Report.Address},
			{"Test site", d.Report.Site}, {"Customer", d.Report.Customer},
		} {
			if s := strings.TrimSpace(f[1]); s != "" {
				kv = append(kv, [2]string{f[0], s})
			}
		}
	}
	return kv
}

// pareto draws the failure reasons as bars, or says that there are none.
func (r *report) pareto() error {
	p := r.pdf
	causes := r.d.Causes
	if len(causes) == 0 {
		r.heading("Why units did not pass", 12)
		msg := "Every unit passed: there is no failure reason to show."
		if r.b.Summary.Units == 0 {
			msg = "No unit was tested."
		}
		r.para(msg, 9, 4.6, black)
		return nil
	}
	bars := min(len(causes), chart.MaxBars)
	h := 16 + 6.5*float64(bars)
	r.heading(fmt.Sprintf("Why units did not pass (%d of %d units)", r.d.NotPassed, r.b.Summary.Units), h+10)
	pl, err := chart.Pareto(causes, r.b.Summary.Units)
	if err != nil {
		return err
	}
	y := p.GetY()
	r.drawPlot(pl, marginL, y, contentW, h)
	p.SetXY(marginL, y+h+0.5)
	note := textCausesKey
	if n := len(causes) - bars; n > 0 {
		note += fmt.Sprintf(" %d less frequent reasons are not drawn; the workbook lists them all.", n)
	}
	r.para(note, 8, 4.2, grey)
	return nil
}

// statsTable prints the limited metrics over the measured steps.
func (r *report) statsTable() {
	st := r.d.Stats
	r.heading("Limited metrics over the measured steps", 6+lineH*float64(len(st)+2))
	if len(st) == 0 {
		r.para("The spec sets no limits, so no unit can pass.", 9, 4.6, black)
		return
	}
	cols := []column{
		{title: "metric", width: 33, align: "L", wrap: 2},
		{title: "n", width: 14, align: "R"},
		{title: "mean", width: 15, align: "R"},
		{title: "sd", width: 15, align: "R"},
		{title: "min", width: 15, align: "R"},
		{title: "max", width: 14, align: "R"},
		{title: "limit", width: 16, align: "R"},
		{title: "predicted", width: 16, align: "R"},
		{title: "gap", width: 15, align: "R"},
		{title: "Cp", width: 9, align: "R"},
		{title: "capability", width: 18, align: "R"},
	}
	var rows [][]cell
	var foot []string
	flagged := false
	for _, s := range st {
		label := s.Label
		if s.Unit != "" {
			label += " (" + s.Unit + ")"
		}
		n := strconv.Itoa(s.N)
		if s.N != s.Steps {
			n = fmt.Sprintf("%d of %d", s.N, s.Steps)
		}
		c := s.Capability
		idx := "—"
		if c.Value.OK {
			idx = c.Index + " " + strconv.FormatFloat(c.Value.V, 'f', 2, 64)
			if c.Indicative {
				idx += "*"
				flagged = true
			}
		} else if c.Index != "" {
			foot = append(foot, fmt.Sprintf("%s: %s not computed, %s.", s.Label, c.Index, c.Value.Why))
		}
		cp := "—"
		if c.Cp.OK {
			cp = strconv.FormatFloat(c.Cp.V, 'f', 2, 64)
		}
		rows = append(rows, []cell{
			{text: label, bold: true}, txt(n), txt(value(s.Mean)), txt(value(s.SD)), txt(value(s.Lowest)), txt(value(s.Highest)),
			txt(s.Limit(num)), txt(value(s.Predicted)), txt(gapValue(s.Gap)), txt(cp), {text: idx, bold: c.Value.OK},
		})
	}
	r.table(cols, rows)
	legend := textStatsKey
	if flagged {
		legend += " * indicative only, n < 30."
	}
	r.para(legend, 8, 4.2, grey)
	for _, f := range foot {
		r.para(f, 8, 4.2, grey)
	}
}

// gapValue prints a gap with its sign, "—" when it is unknown.
func gapValue(v metrics.Value) string {
	switch {
	case !v.OK:
		return "—"
	case v.V > 0:
		return "+" + num(v.V)
	}
	return num(v.V)
}
