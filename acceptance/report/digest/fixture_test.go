package digest

import (
	"github.com/stepgate/stepgate/acceptance/spec"
	"math"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/metrics"
)

func ptr(v float64) *float64 { return &v }

// step is a judged step 0 → 10 with the given metrics; the checks follow
// the limits the way acceptance.JudgeStep reports them.
func step(index int, limits map[metrics.Name]spec.Limit, m map[metrics.Name]float64, unmeasured ...metrics.Name) acceptance.StepResult {
	s := acceptance.StepResult{Index: index, StartS: 0.5, From: 0, To: 10, Verdict: acceptance.Pass,
		Metrics: acceptance.MetricsOf(nil)}
	for k, v := range m {
		s.Metrics.Set(k, metrics.Known(v))
	}
	for _, k := range unmeasured {
		s.Metrics.Set(k, metrics.Unknown("the record ends before the response stays in the band"))
	}
	for _, name := range LimitedMetrics(&acceptance.Batch{Limits: limits}) {
		l := limits[name]
		c := acceptance.Check{Metric: name, Min: l.Min, Max: l.Max, Verdict: acceptance.Pass}
		v, ok := s.Metrics.Lookup(name)
		switch {
		case !ok || !v.OK:
			c.Verdict, c.Reason = acceptance.Invalid, string(name)+" not measured at step"
		case l.Max != nil && v.V > *l.Max:
			c.Value, c.Verdict, c.Reason = ptr(v.V), acceptance.Fail, string(name)+" > max at step"
		case l.Min != nil && v.V < *l.Min:
			c.Value, c.Verdict, c.Reason = ptr(v.V), acceptance.Fail, string(name)+" < min at step"
		default:
			c.Value = ptr(v.V)
		}
		s.Checks = append(s.Checks, c)
		if c.Reason != "" {
			s.Reasons = append(s.Reasons, acceptance.Reason{Metric: name, Step: index, Text: c.Reason})
		}
		switch {
		case c.Verdict == acceptance.Fail:
			s.Verdict = acceptance.Fail
		case c.Verdict == acceptance.Invalid && s.Verdict == acceptance.Pass:
			s.Verdict = acceptance.Invalid
		}
	}
	return s
}

// unit wraps steps into a unit judged the way acceptance.JudgeUnit
// does: fail when a step fails, else invalid when one is invalid.
func unit(id string, steps ...acceptance.StepResult) acceptance.UnitResult {
	u := acceptance.UnitResult{Unit: id, File: id + ".csv", SHA256: "00" + id, Verdict: acceptance.Pass, Steps: steps, Reasons: []acceptance.Reason{}}
	for _, s := range steps {
		u.Reasons = append(u.Reasons, s.Reasons...)
		switch {
		case s.Verdict == acceptance.Fail:
			u.Verdict = acceptance.Fail
		case s.Verdict == acceptance.Invalid && u.Verdict == acceptance.Pass:
			u.Verdict = acceptance.Invalid
		}
	}
	if len(steps) == 0 {
		u.Verdict = acceptance.Invalid
	}
	return u
}

// batch collects units under limits and counts their verdicts.
func batch(limits map[metrics.Name]spec.Limit, units ...acceptance.UnitResult) *acceptance.Batch {
	b := &acceptance.Batch{
		Tool:       acceptance.ToolInfo{Name: "stepgate", Version: "0.1.0"},
		Spec:       acceptance.SpecInfo{SpecID: "ACT-25", Revision: "C", SHA256: "ab"},
		Limits:     limits,
		ReportDate: "2024-05-17",
		Units:      units,
		Summary:    acceptance.Count(units),
		SpecDoc:    &spec.Spec{ResponseUnit: "mm", Limits: limits},
	}
	return b
}

// closedForm samples the unit-step response of the closed loop
// G·ωn²/(s² + 2ζωn s + ωn²) behind a dead time θ from 0 to `to`, with the
// step at t = at: y = G·to·[1 − e^(−στ)(cos ωd τ + (σ/ωd) sin ωd τ)],
// τ = t − at − θ, σ = ζωn, ωd = ωn√(1−ζ²) (K. Ogata, Modern Control
// Engineering, 5th ed., §5-3).
func closedForm(g, zeta, wn, theta, to, at, dt, end float64) *metrics.Trace {
	tr := &metrics.Trace{}
	sigma, wd := zeta*wn, wn*math.Sqrt(1-zeta*zeta)
	for k := 0; float64(k)*dt <= end+1e-12; k++ {
		t := float64(k) * dt
		cmd, y := 0.0, 0.0
		if t >= at-1e-12 {
			cmd = to
			if tau := t - at - theta; tau > 0 {
				y = g * to * (1 - math.Exp(-sigma*tau)*(math.Cos(wd*tau)+sigma/wd*math.Sin(wd*tau)))
			}
		}
		tr.Time = append(tr.Time, t)
		tr.Command = append(tr.Command, cmd)
		tr.Response = append(tr.Response, y)
	}
	return tr
}

// plantModel is the plant K/(s(s + a)) under proportional gain kp.
func plantModel(k, a, kp float64) model.Config {
	return model.Config{
		Plant:      &model.TransferFunc{Numerator: []float64{k}, Denominator: []float64{1, a, 0}},
		Controller: model.Controller{Kp: kp},
	}
}
