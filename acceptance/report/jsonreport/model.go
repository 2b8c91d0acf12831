package jsonreport

import (
	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/model"
)

// modelSummary appends m, the model's predictions for the batch; d is the
// depth of the line it opens on.
func (e *encoder) modelSummary(d int, m *acceptance.ModelSummary) {
	n := d + 1
	e.Open(n, `"config": `)
	e.config(n, &m.Config)
	e.Member(n, `"plant": `)
	e.Str(m.Plant)
	e.Member(n, `"realised": `)
	e.Bool(m.Realised)
	e.Member(n, `"nominal": `)
	e.Array(n, m.Nominal == nil, len(m.Nominal), func(i int) { e.nominal(n+1, &m.Nominal[i]) })
	if len(m.Designs) > 0 {
		e.Member(n, `"designs": `)
		e.Array(n, false, len(m.Designs), func(i int) { e.design(n+1, &m.Designs[i]) })
	}
	if len(m.Warnings) > 0 {
		e.Member(n, `"warnings": `)
		e.Strings(n, m.Warnings)
	}
	e.Close(d, '}')
}

// config appends the spec's model section as the batch ran it.
func (e *encoder) config(d int, c *model.Config) {
	n := d + 1
	e.B = append(e.B, '{')
	first := true
	member := func(key string) {
		if first {
			e.NL(n)
			e.B = append(e.B, key...)
			first = false
			return
		}
		e.Member(n, key)
	}
	if r := c.ReferenceTest; r != nil {
		member(`"reference_test": `)
		e.Open(n+1, `"gain": `)
		e.Float(r.Gain)
		e.Member(n+1, `"static_gain": `)
		e.Float(r.StaticGain)
		e.Member(n+1, `"damping": `)
		e.Float(r.Damping)
		e.Member(n+1, `"natural_frequency_rad_s": `)
		e.Float(r.NaturalFrequency)
		e.Close(n, '}')
	}
	if p := c.Plant; p != nil {
		member(`"plant": `)
		e.Open(n+1, `"numerator": `)
		e.Floats(n+1, p.Numerator)
		e.Member(n+1, `"denominator": `)
		e.Floats(n+1, p.Denominator)
		e.Close(n, '}')
	}
	member(`"plant_dead_time_s": `)
	e.Float(c.PlantDeadTime)
	member(`"controller": `)
	e.Open(n+1, `"kp": `)
	e.Float(c.Controller.Kp)
	e.Member(n+1, `"ki": `)
	e.Float(c.Controller.Ki)
	e.Member(n+1, `"kd": `)
	e.Float(c.Controller.Kd)
	e.Member(n+1, `"derivative_filter_hz": `)
	e.Float(c.Controller.DerivativeFilterHz)
	e.Close(n, '}')
	if l := c.Loop; l != nil {
		member(`"loop": `)
		e.Open(n+1, `"sample_period_s": `)
		e.Float(l.SamplePeriod)
		e.Member(n+1, `"delay_s": `)
		e.Float(l.Delay)
		e.Close(n, '}')
	}
	if a := c.Actuator; a != nil {
		member(`"actuator": `)
		e.Open(n+1, `"effort_limit": `)
		e.Float(a.EffortLimit)
		e.Member(n+1, `"deadband": `)
		e.Float(a.Deadband)
		e.Close(n, '}')
	}
	e.Close(d, '}')
}

// nominal appends the model's response to one distinct command change.
func (e *encoder) nominal(d int, p *acceptance.NominalPrediction) {
	n := d + 1
	e.Open(n, `"from": `)
	e.Float(p.From)
	e.Member(n, `"to": `)
	e.Float(p.To)
	e.Member(n, `"ideal": `)
	e.prediction(n, &p.Ideal)
	e.Member(n, `"realised": `)
	e.prediction(n, &p.Realised)
	e.Close(d, '}')
}

// design appends a gain designed for one target.
func (e *encoder) design(d int, g *acceptance.GainDesign) {
	n := d + 1
	e.Open(n, `"target": `)
	e.Str(g.Target)
	e.Member(n, `"value": `)
	e.Float(g.Value)
	e.Member(n, `"kp_ideal": `)
	e.FloatPtr(g.KpIdeal)
	e.Member(n, `"kp_realised": `)
	e.FloatPtr(g.KpRealised)
	if g.Why != "" {
		e.Member(n, `"why": `)
		e.Str(g.Why)
	}
	e.Close(d, '}')
}
