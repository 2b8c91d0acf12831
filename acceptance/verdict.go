package acceptance

import (
	"github.com/stepgate/stepgate/acceptance/spec"
	"math"
	"strconv"
	"strings"

	"github.com/stepgate/stepgate/metrics"
)

// JudgeStep applies the limits of spec s's limits to one step's metrics. The result
// carries every metric (null when unmeasured, with the reason in
// Unmeasured) and one check per limit, in LimitNames order.
//
// Simple acceptance (ISO 14253-1:2017, ILAC-G8:09/2019): a check passes when
// the value was measured and min ≤ value ≤ max, a value on a limit
// included; it fails when the value lies outside; it is invalid when the
// value could not be measured. One exception: an unmeasured settling time
// with a max limit fails when the last sample outside the settling band
// already lies later than the max, since the record proves the unit too
// slow. The step fails when any check fails, else is invalid when any check
// is invalid, else passes. Reasons list the failures first, then the
// invalid checks.
func JudgeStep(s *spec.Spec, m metrics.StepMetrics) StepResult {
	r := StepResult{
		Index:   m.Step.Index,
		StartS:  m.Start,
		From:    m.Step.From,
		To:      m.Step.To,
		Reasons: []Reason{},
		Metrics: MetricSetOf(m),
	}
	var fails, invalids []Reason
	// The checks' values live in one array per step rather than one
	// allocation per check.
	r.Checks = make([]Check, 0, len(s.Limits))
	values := make([]float64, len(s.Limits))
	judge := func(name metrics.Name) {
		c, why := judgeCheck(s, name, m, &values[len(r.Checks)])
		r.Checks = append(r.Checks, c)
		switch c.Verdict {
		case Fail:
			fails = append(fails, why)
		case Invalid:
			invalids = append(invalids, why)
		}
	}
	// In LimitNames order, without building the list for every step: the
	// metrics in report order, then any other name (which the spec loader
	// refuses, but a spec built in code may hold) in sorted order.
	for _, n := range metrics.Names {
		if _, ok := s.Limits[n]; ok {
			judge(n)
		}
	}
	if len(r.Checks) < len(s.Limits) {
		for _, name := range s.LimitNames()[len(r.Checks):] {
			judge(name)
		}
	}
	switch {
	case len(fails) > 0:
		r.Verdict = Fail
	case len(invalids) > 0:
		r.Verdict = Invalid
	default:
		r.Verdict = Pass
	}
	r.Reasons = append(append(r.Reasons, fails...), invalids...)
	return r
}

// judgeCheck applies one limit to one step; a known value is stored in
// *slot, which the check's Value then points to. A check that does not
// pass comes with its reason, whose text is also the check's Reason.
func judgeCheck(s *spec.Spec, name metrics.Name, m metrics.StepMetrics, slot *float64) (Check, Reason) {
	lim := s.Limits[name]
	// The bounds are the spec's own, shared by every check of the batch and
	// never written through.
	c := Check{Metric: name, Min: lim.Min, Max: lim.Max, Verdict: Pass}
	step := m.Step.Index
	v, known := m.Get(name)
	var why Reason
	switch {
	case !known:
		c.Verdict, why = Invalid, notAMetricReason(name, step)
	case !v.OK && name == metrics.SettlingTime && lim.Max != nil && m.LastOutside.OK && m.LastOutside.V > *lim.Max:
		c.Verdict, why = Fail, stillOutsideReason(name, step, m.LastOutside.V, *lim.Max, s.Options().Band)
	case !v.OK:
		c.Verdict, why = Invalid, notMeasuredReason(name, step, v)
	default:
		*slot = v.V
		c.Value = slot
		switch {
		case lim.Min != nil && v.V < *lim.Min:
			c.Verdict, why = Fail, limitReason(BelowMin, name, step, v.V, *lim.Min)
		case lim.Max != nil && v.V > *lim.Max:
			c.Verdict, why = Fail, limitReason(AboveMax, name, step, v.V, *lim.Max)
		}
	}
	c.Reason = why.Text
	return c, why
}

// JudgeUnit combines a unit's step results: invalid when no step was found,
// fail when any step fails, else invalid when any step is invalid, else
// pass. The reasons are every step's reasons, in step order.
func JudgeUnit(s *spec.Spec, steps []StepResult) (Verdict, []Reason) {
	if len(steps) == 0 {
		return Invalid, []Reason{noStepReason(s.Steps.MinChange, s.ResponseUnit)}
	}
	reasons := []Reason{}
	anyFail, anyInvalid := false, false
	for _, st := range steps {
		reasons = append(reasons, st.Reasons...)
		switch st.Verdict {
		case Fail:
			anyFail = true
		case Pass:
		default:
			anyInvalid = true
		}
	}
	switch {
	case anyFail:
		return Fail, reasons
	case anyInvalid:
		return Invalid, reasons
	}
	return Pass, reasons
}

// Count tallies units by verdict. A unit whose verdict is none of pass,
// fail and invalid could not show pass or fail, and is counted invalid, so
// that Pass + Fail + Invalid = Units.
func Count(units []UnitResult) Summary {
	sum := Summary{Units: len(units)}
	for _, u := range units {
		switch u.Verdict {
		case Pass:
			sum.Pass++
		case Fail:
			sum.Fail++
		default:
			sum.Invalid++
		}
	}
	return sum
}

// verdictWhy is a value's reason for being unknown.
func verdictWhy(v metrics.Value) string {
	if strings.TrimSpace(v.Why) == "" {
		return "no reason recorded"
	}
	return v.Why
}

// verdictNumber writes a measured value with up to 4 significant digits,
// adding digits only when 4 would make it read the same as the limit it is
// compared with.
func verdictNumber(v, limit float64) string {
	lim := formatFloat(limit)
	for digits := 4; digits < 17; digits++ {
		if s := verdictSig(v, digits); s != lim || v == limit {
			return s
		}
	}
	return formatFloat(v)
}

// verdictSig writes v rounded to the given significant digits, in plain
// decimal notation between 1e-4 and 1e6 and in exponent notation outside.
func verdictSig(v float64, digits int) string {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	a := math.Abs(v)
	if a < 1e-4 || a >= 1e6 {
		return strconv.FormatFloat(v, 'g', digits, 64)
	}
	// Round to the digits first, then print the rounded number exactly.
	r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'e', digits-1, 64), 64)
	e := int(math.Floor(math.Log10(math.Abs(r))))
	dec := digits - 1 - e
	if dec < 0 {
		dec = 0
	}
	s := strconv.FormatFloat(r, 'f', dec, 64)
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	return s
}

// formatFloat writes a number as the shortest text that reads back to it,
// so a limit appears as written in the spec.
func formatFloat(f float64) string {
	return strconv.FormatFloat(f, 'g', -1, 64)
}

// pct writes a fraction as a percentage without float noise.
func pct(f float64) string {
	return strconv.FormatFloat(f*100, 'g', 10, 64)
}

// unitSuffix is " u", or "" without a unit.
func unitSuffix(u string) string {
	if u == "" {
		return ""
	}
	return " " + u
}

// JoinAxes joins the units judged for each axis of one log (units[i] for
// axis names[i], each read and judged as a single-axis unit) into one unit:
// the file's identity from the first, every axis's steps in axis order,
// each naming its axis, and the axes' verdicts under Axes. The unit fails
// when an axis fails, is invalid when an axis is invalid and none fails,
// and passes only when every axis passes. Each axis's reasons are the
// unit's too, prefixed with the axis's name.
func JoinAxes(names []string, units []UnitResult) UnitResult {
	u := units[0]
	u.Steps, u.Reasons, u.Fit, u.Trace = []StepResult{}, []Reason{}, nil, nil
	u.Axes = make([]AxisResult, len(units))
	anyFail, anyInvalid := false, false
	for i, a := range units {
		ar := AxisResult{Name: names[i], Verdict: a.Verdict, Reasons: make([]Reason, len(a.Reasons))}
		for j, r := range a.Reasons {
			r.Text = "axis " + names[i] + ": " + r.Text
			ar.Reasons[j] = r
		}
		u.Axes[i] = ar
		u.Reasons = append(u.Reasons, ar.Reasons...)
		for _, s := range a.Steps {
			s.Axis = names[i]
			u.Steps = append(u.Steps, s)
		}
		switch a.Verdict {
		case Fail:
			anyFail = true
		case Pass:
		default:
			anyInvalid = true
		}
		if u.Fit == nil {
			u.Fit = a.Fit
		}
	}
	switch {
	case anyFail:
		u.Verdict = Fail
	case anyInvalid:
		u.Verdict = Invalid
	default:
		u.Verdict = Pass
	}
	return u
}
