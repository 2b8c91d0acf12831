package pdfreport

import (
	"strings"

	"github.com/stepgate/stepgate/acceptance/spec"

	"github.com/stepgate/stepgate/acceptance/report/digest"
)

// method prints how the results were obtained and judged, and the sign-off:
// the metric definitions with their references, the limits, the decision
// rule, the statements ISO/IEC 17025:2017 §7.8.2.1 asks for and the
// authorisation block.
func (r *report) method() {
	p := r.pdf
	p.AddPage()
	r.heading("Method", 40)
	change := "steps.min_change"
	if d := r.b.SpecDoc; d != nil && d.Steps.MinChange > 0 {
		change = strings.TrimSpace(num(d.Steps.MinChange)+"\u00a0"+r.unit) + " (steps.min_change)"
	}
	r.para("Each log is read as a record of time, command, response and, when present, drive effort. Every command change of at least "+change+
		" starts a step, measured up to the next step or the end of the record. "+
		textMeasuredHow, 9, 4.6, black)
	p.Ln(1)
	cols := []column{
		{title: "metric", width: 34, align: "L", wrap: 3},
		{title: "how it is measured", width: 96, align: "L", wrap: 5},
		{title: "reference", width: 50, align: "L", wrap: 4},
	}
	var rows [][]cell
	for _, d := range digest.Definitions(r.b) {
		rows = append(rows, []cell{{text: d.Label, bold: true}, txt(d.Definition), txt(d.Reference)})
	}
	r.table(cols, rows)

	r.limitsTable()

	r.heading("Decision rule", 15)
	r.para(digest.DecisionRuleOf(r.b), 9, 4.6, black)
	p.Ln(1)
	r.para(digest.Phrase("results-relate"), 8.5, 4.3, grey)

	r.authorisation()
}

func (r *report) limitsTable() {
	names := r.d.Limited
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
		rows = append(rows, []cell{txt(digest.MetricLabel(m)), {text: string(m), smallerInk: true}, txt(bound(l.Min)), txt(bound(l.Max)), txt(digest.MetricUnit(m, r.unit))})
	}
	r.table(cols, rows)
	r.para("— : no bound on that side.", 8, 4.2, grey)
}

// authorisation prints the sign-off block: prepared, reviewed and approved,
// each with name, role, and blank lines for signature and date.
func (r *report) authorisation() {
	var sig [3]spec.Signatory
	if d := r.b.SpecDoc; d != nil {
		sig = [3]spec.Signatory{d.Report.PreparedBy, d.Report.ReviewedBy, d.Report.ApprovedBy}
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
		name := strings.TrimSpace(sig[i].Name)
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
