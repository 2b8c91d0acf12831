package pdfreport

import (
	"fmt"
	"strings"

	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/metrics"
	"github.com/stepgate/stepgate/templates"
)

// gapSection compares the model with what the line achieved: prediction
// against batch per metric, the identified loop against the model's, the
// notes on likely causes and the designed gains. Without a model it prints
// only the notes the evidence supports.
func (r *report) gapSection() error {
	p := r.pdf
	m := r.b.Model
	p.AddPage()
	if m == nil {
		r.heading("Likely causes: indications, not proof", 20)
		r.para(textNoModel, 9, 4.6, black)
		r.causes(false, true)
		return nil
	}
	r.heading("Model against the line", 40)
	if m.Plant != "" {
		r.para("Plant: "+m.Plant+controllerText(m.Config), 9, 4.6, black)
	}
	for _, w := range m.Warnings {
		r.para("Model warning: "+w, 9, 4.6, invalidText)
	}
	r.comparisonTable()
	r.loopTable()
	// The designed gains close with the gain caution, which says what the
	// closing advice says; one box, not two.
	r.causes(true, len(m.Designs) == 0)
	r.designs()
	return nil
}

// controllerText describes the controller, the loop and the actuator of
// the model, to follow the plant.
func controllerText(c model.Config) string {
	k := c.Controller
	s := "; controller kp " + num(k.Kp)
	if k.Ki != 0 {
		s += ", ki " + num(k.Ki)
	}
	if k.Kd != 0 {
		s += ", kd " + num(k.Kd) + " filtered at " + num(k.DerivativeFilterHz) + " Hz"
	}
	if c.PlantDeadTime > 0 {
		s += "; plant dead time " + num(c.PlantDeadTime) + " s"
	}
	if l := c.Loop; l != nil {
		s += "; loop sampled every " + num(l.SamplePeriod) + " s, delay " + num(l.Delay) + " s"
	}
	if a := c.Actuator; a != nil {
		if a.EffortLimit > 0 {
			s += "; effort limit " + num(a.EffortLimit)
		}
		if a.Deadband > 0 {
			s += ", deadband " + num(a.Deadband)
		}
	}
	return s + "."
}

func (r *report) comparisonTable() {
	cmp := r.d.Comparisons
	r.subheading("Predicted against achieved", 6+lineH*3)
	if len(cmp) == 0 {
		r.para(textNoComparison, 9, 4.6, black)
		return
	}
	cols := []column{
		{title: "metric", width: 38, align: "L"},
		{title: "unit", width: 10, align: "L"},
		{title: "predicted", width: 22, align: "R"},
		{title: "batch mean", width: 22, align: "R"},
		{title: "gap", width: 20, align: "R"},
		{title: "lowest", width: 22, align: "R"},
		{title: "highest", width: 22, align: "R"},
		{title: "steps", width: 24, align: "R"},
	}
	for i := 0; i < len(cmp); {
		j := i
		for j < len(cmp) && cmp[j].From == cmp[i].From && cmp[j].To == cmp[i].To {
			j++
		}
		r.subheading(fmt.Sprintf("Step %s → %s %s, %s prediction", num(cmp[i].From), num(cmp[i].To), r.unit, cmp[i].Kind), 6+lineH*2)
		var rows [][]cell
		for _, c := range cmp[i:j] {
			rows = append(rows, []cell{
				txt(digest.MetricLabel(c.Metric)), txt(digest.MetricUnit(c.Metric, r.unit)),
				{text: value(c.Predicted), bold: true}, txt(value(c.Mean)), txt(gapValue(c.Gap())), txt(value(c.Min)), txt(value(c.Max)),
				txt(fmt.Sprintf("%d of %d", c.Measured, c.Steps)),
			})
		}
		r.table(cols, rows)
		i = j
	}
	r.para("gap: batch mean − predicted. — : not predicted or not measured on any matching step. Steps match a prediction when both levels lie within 1 % of the step size.", 8, 4.2, grey)
}

// loopTable sets the identified effective loop of the units beside the
// model's.
func (r *report) loopTable() {
	l := r.d.Loop
	if l == nil {
		return
	}
	r.subheading("Identified loop against the model", 6+lineH*5)
	r.para(fmt.Sprintf("Each unit's first step is fitted with an effective closed loop G·ωn²/(s² + 2ζωn s + ωn²) behind a dead time θ; %d of %d units gave a fit. "+
		"The model's values are those of its %s; the same fit applied to the model's %s prediction gives the like-for-like values.",
		l.Fitted, l.Units, orDash(l.ModelNote), orDash(l.FitKind)), 8.5, 4.3, black)
	cols := []column{
		{title: "quantity", width: 46, align: "L"},
		{title: "model", width: 19, align: "R"},
		{title: "model, fitted", width: 22, align: "R"},
		{title: "batch mean", width: 20, align: "R"},
		{title: "sd", width: 17, align: "R"},
		{title: "lowest", width: 17, align: "R"},
		{title: "highest", width: 17, align: "R"},
		{title: "spread (CV)", width: 22, align: "R"},
	}
	var rows [][]cell
	for _, q := range l.Quantities() {
		label := q.Label
		if q.Unit != "" {
			label += " (" + q.Unit + ")"
		}
		cv := "—"
		if q.CV.OK {
			cv = num(100*q.CV.V) + " %"
		}
		rows = append(rows, []cell{{text: label, bold: true}, txt(value(q.Model)), txt(value(q.ModelFit)),
			{text: value(q.Mean), bold: true}, txt(value(q.SD)), txt(value(q.Min)), txt(value(q.Max)), txt(cv)})
	}
	r.table(cols, rows)
	var foot []string
	if l.FitWhy != "" {
		foot = append(foot, "Model, fitted: "+l.FitWhy+".")
	}
	if l.DeadTime.Model.OK {
		foot = append(foot, textModelDeadTime)
	}
	if len(foot) > 0 {
		r.para(strings.Join(foot, " "), 8, 4.2, grey)
	}
}

// causes prints the notes on likely causes, worded as indications, under a
// subheading of their own when titled, and the closing advice when advise
// is set.
func (r *report) causes(titled, advise bool) {
	p := r.pdf
	if titled {
		r.subheading("Likely causes: indications, not proof", 20)
	}
	r.para(digest.Phrase("causes-intro"), 8.5, 4.3, grey)
	if len(r.d.Notes) == 0 {
		r.para(digest.Phrase("causes-none"), 9, 4.6, black)
	}
	for _, n := range r.d.Notes {
		r.font("B", 9)
		r.textColour(black)
		r.ensure(14)
		p.Ln(1)
		p.SetX(marginL)
		p.CellFormat(contentW, 5, r.fit(n.Title, contentW), "", 1, "L", false, 0, "")
		r.para(n.Evidence, 9, 4.5, black)
		r.para(n.Meaning, 9, 4.5, grey)
	}
	p.Ln(1.5)
	if advise {
		r.cautionBox(r.d.Advice)
	}
}

// cautionBox prints a caution in a framed box.
func (r *report) cautionBox(text string) {
	p := r.pdf
	r.font("B", 9)
	lines := r.wrap(text, contentW-6, 0)
	h := float64(len(lines))*4.5 + 3
	r.ensure(h + 1)
	y := p.GetY()
	r.fillColour(invalidFill)
	r.drawColour(invalidText)
	p.SetLineWidth(0.3)
	p.Rect(marginL, y, contentW, h, "DF")
	r.textColour(invalidText)
	for k, line := range lines {
		p.SetXY(marginL+3, y+1.5+float64(k)*4.5)
		p.CellFormat(contentW-6, 4.5, line, "", 0, "L", false, 0, "")
	}
	r.textColour(black)
	p.SetXY(marginL, y+h+1)
}

// designs prints the gains the model gives for reference, with the caution
// that a computed gain is optimistic.
func (r *report) designs() {
	ds := r.b.Model.Designs
	if len(ds) == 0 {
		return
	}
	r.subheading("Gains the model gives, for reference", 6+lineH*float64(len(ds)+2)+30)
	cols := []column{
		{title: "target", width: 40, align: "L"},
		{title: "kp, ideal loop", width: 28, align: "R"},
		{title: "kp, realised loop", width: 30, align: "R"},
		{title: "kp in the spec", width: 26, align: "R"},
		{title: "note", width: 56, align: "L", wrap: 8},
	}
	var rows [][]cell
	inUse := num(r.b.Model.Config.Controller.Kp)
	for _, g := range ds {
		target := g.Target
		switch g.Target {
		case string(metrics.Overshoot):
			target = "overshoot " + num(g.Value) + " % (the limit)"
		case "damping":
			target = "damping ζ = " + num(g.Value)
			if g.Value == 1 {
				target += " (critical)"
			}
		}
		rows = append(rows, []cell{txt(target), {text: ptrValue(g.KpIdeal), bold: true}, {text: ptrValue(g.KpRealised), bold: true}, txt(inUse), txt(g.Why)})
	}
	r.table(cols, rows)
	r.pdf.Ln(1.5)
	r.cautionBox(strings.Join(strings.Fields(templates.GainCaution), " "))
}

func ptrValue(v *float64) string {
	if v == nil {
		return "—"
	}
	return num(*v)
}
