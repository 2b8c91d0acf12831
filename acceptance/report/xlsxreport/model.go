package xlsxreport

import (
	"strings"

	"github.com/xuri/excelize/v2"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/metrics"
	"github.com/stepgate/stepgate/templates"
)

func limits(f *excelize.File, st *styles, d *digest.Digest) error {
	const sh = SheetLimits
	if _, err := f.NewSheet(sh); err != nil {
		return err
	}
	defs := digest.Definitions(d.Batch)
	def := func(m metrics.Name) (string, string) {
		for _, x := range defs {
			for _, k := range x.Metrics {
				if k == m {
					return x.Definition, x.Reference
				}
			}
		}
		return "", ""
	}
	rows := [][]interface{}{{"metric", "min", "max", "unit", "how it is measured", "reference"}}
	for _, m := range d.Limited {
		l := d.Batch.Limits[m]
		how, ref := def(m)
		rows = append(rows, []interface{}{m, bound(l.Min), bound(l.Max), orNil(digest.MetricUnit(m, d.ResponseUnit)), orNil(how), orNil(ref)})
	}
	if _, err := table(f, sh, st, 1, rows); err != nil {
		return err
	}
	if len(rows) > 1 {
		if err := f.SetCellStyle(sh, "E2", cellRef(6, len(rows)), st.wrap); err != nil {
			return err
		}
	}
	if err := widths(f, sh, []float64{26, 12, 12, 8, 70, 40}); err != nil {
		return err
	}
	return freeze(f, sh)
}

// modelSheet writes the model's parameters, its nominal predictions ideal
// and realised beside the batch, the identified loop against the model's,
// and the designed gains.
func modelSheet(f *excelize.File, st *styles, d *digest.Digest) error {
	const sh = SheetModel
	if _, err := f.NewSheet(sh); err != nil {
		return err
	}
	w := &sheetWriter{f: f, sh: sh, st: st, row: 1}
	w.set(1, "Model parameters", st.bold)
	w.row++
	modelParameters(w, d.Batch.Model)
	modelNominal(w, d)
	if d.Loop != nil {
		modelLoop(w, d.Loop)
	}
	if len(d.Batch.Model.Designs) > 0 {
		modelDesigns(w, d.Batch.Model)
	}
	if w.err != nil {
		return w.err
	}
	return widths(f, sh, []float64{30, 10, 22, 12, 12, 12, 12, 12, 14, 12, 12, 14, 14, 50})
}

// modelParameters writes the model section of the spec as the batch ran
// it, one label and value per row.
func modelParameters(w *sheetWriter, m *acceptance.ModelSummary) {
	c := m.Config
	w.pair("plant", orNil(m.Plant), 0)
	if rt := c.ReferenceTest; rt != nil {
		w.pair("reference test: gain", rt.Gain, 0)
		w.pair("reference test: static gain G", rt.StaticGain, 0)
		w.pair("reference test: damping ζ", rt.Damping, 0)
		w.pair("reference test: ωn (rad/s)", rt.NaturalFrequency, 0)
	}
	if p := c.Plant; p != nil {
		w.pair("plant numerator", floats(p.Numerator), 0)
		w.pair("plant denominator", floats(p.Denominator), 0)
	}
	w.pair("plant dead time (s)", c.PlantDeadTime, 0)
	w.pair("controller kp", c.Controller.Kp, 0)
	w.pair("controller ki", c.Controller.Ki, 0)
	w.pair("controller kd", c.Controller.Kd, 0)
	w.pair("derivative filter (Hz)", c.Controller.DerivativeFilterHz, 0)
	if l := c.Loop; l != nil {
		w.pair("loop sample period (s)", l.SamplePeriod, 0)
		w.pair("loop delay (s)", l.Delay, 0)
	} else {
		w.pair("loop", "not given: the ideal loop is used", 0)
	}
	if a := c.Actuator; a != nil {
		w.pair("actuator effort limit", a.EffortLimit, 0)
		w.pair("actuator deadband", a.Deadband, 0)
	} else {
		w.pair("actuator", "not given: no saturation or deadband", 0)
	}
	kind := "ideal"
	if m.Realised {
		kind = "realised"
	}
	w.pair("prediction compared", kind, 0)
	for _, wm := range m.Warnings {
		w.pair("model warning", wm, 0)
	}
}

// modelNominal writes every metric of every nominal step, predicted ideal
// and realised, beside the batch's steps that match it.
func modelNominal(w *sheetWriter, d *digest.Digest) {
	m := d.Batch.Model
	w.head("Nominal predictions")
	w.header("from", "to", "metric", "unit", "ideal", "realised", "compared", "batch mean", "gap (mean − compared)", "lowest", "highest",
		"steps measured", "matching steps", "note")
	cmp := map[[2]float64]map[metrics.Name]digest.Comparison{}
	for _, x := range d.Comparisons {
		k := [2]float64{x.From, x.To}
		if cmp[k] == nil {
			cmp[k] = map[metrics.Name]digest.Comparison{}
		}
		cmp[k][x.Metric] = x
	}
	for _, n := range m.Nominal {
		for _, k := range d.Shown {
			iv, rv := n.Ideal.Metrics.Get(k), n.Realised.Metrics.Get(k)
			compared := iv
			if m.Realised {
				compared = rv
			}
			vals := []interface{}{n.From, n.To, k, orNil(digest.MetricUnit(k, d.ResponseUnit)), known(iv), known(rv), known(compared)}
			note := ""
			if !compared.OK {
				note = "not predicted: " + orWhy(compared.Why, "")
			}
			if x, ok := cmp[[2]float64{n.From, n.To}][k]; ok {
				vals = append(vals, known(x.Mean), known(x.Gap()), known(x.Min), known(x.Max), x.Measured, x.Steps)
				if note == "" && !x.Mean.OK {
					note = x.Mean.Why
				}
			} else {
				vals = append(vals, nil, nil, nil, nil, nil, nil)
			}
			w.values(append(vals, orNil(note))...)
		}
	}
}

// modelLoop writes the batch's identified closed loops against the
// model's.
func modelLoop(w *sheetWriter, l *digest.LoopSummary) {
	w.head("Identified loop against the model")
	w.header("quantity", "unit", "model", "model, fitted", "batch mean", "sd (n − 1)", "lowest", "highest", "coefficient of variation", "units fitted", "note")
	for _, q := range l.Quantities() {
		note := l.ModelNote
		if l.FitWhy != "" {
			note += "; model, fitted: " + l.FitWhy
		}
		w.values(q.Label, orNil(q.Unit), known(q.Model), known(q.ModelFit), known(q.Mean), known(q.SD), known(q.Min), known(q.Max),
			known(q.CV), q.N, orNil(note))
	}
}

// modelDesigns writes the gains the model gives, with the caution that
// goes with a computed gain.
func modelDesigns(w *sheetWriter, m *acceptance.ModelSummary) {
	w.head("Gains the model gives, for reference")
	w.header("target", "value", "kp ideal", "kp realised", "kp in the spec", "note")
	for _, g := range m.Designs {
		w.values(g.Target, g.Value, bound(g.KpIdeal), bound(g.KpRealised), m.Config.Controller.Kp, orNil(g.Why))
	}
	w.row++
	w.set(1, strings.Join(strings.Fields(templates.GainCaution), " "), w.st.note)
	if w.err == nil {
		w.err = w.f.MergeCell(w.sh, cellRef(1, w.row), cellRef(11, w.row))
	}
	if w.err == nil {
		w.err = w.f.SetRowHeight(w.sh, w.row, 48)
	}
}

// floats joins coefficients for a text cell.
func floats(v []float64) string {
	parts := make([]string, len(v))
	for i, x := range v {
		parts[i] = digest.Num(x)
	}
	return "[" + strings.Join(parts, ", ") + "]"
}
