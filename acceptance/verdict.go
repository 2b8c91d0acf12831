package acceptance

import (
	"github.com/stepgate/stepgate/acceptance/spec"
	"math"
	"strconv"
	"strings"

	"github.com/stepgate/stepgate/metrics"
)

// JudgeStep applies the limits of spec s to one step's metrics without an
// uncertainty evaluation: JudgeStepWith with u nil.
func JudgeStep(s *spec.Spec, m metrics.StepMetrics) StepResult {
	return JudgeStepWith(s, m, nil)
}

// JudgeStepWith applies the limits of spec s to one step's metrics m, whose
// uncertainties are u (nil when not evaluated). The result carries every
// metric (null when unmeasured, with the reason in Unmeasured), the
// expanded uncertainty of each, and one check per limit, in LimitNames
// order.
//
// Each value is stated at its resolution (metricResolution) and compared
// with its limits there, so a value on a limit is on it whatever the float
// residue. Each check states its conformity given U (ILAC-G8:09/2019). The
// verdict follows the spec's decision rule (ISO 14253-1:2017; ISO/IEC
// 17025:2017 §7.8.6):
//
//   - simple: a check passes when the value was measured and
//     min ≤ value ≤ max, a value on a limit included, and fails when it
//     lies outside, whatever U;
//   - guarded: a check passes only when the value lies inside the limits
//     narrowed by the guard band w (spec.GuardBand; w = U by default), and
//     fails otherwise; when w depends on an unknown U the check is
//     invalid.
//
// A check is invalid when the value could not be measured. One exception:
// an unmeasured settling time with a max limit fails when the last sample
// outside the settling band already lies later than the max, since the
// record proves the unit too slow. The step fails when any check fails,
// else is invalid when any check is invalid, else passes. Reasons list the
// failures first, then the invalid checks.
func JudgeStepWith(s *spec.Spec, m metrics.StepMetrics, u *metrics.StepUncertainty) StepResult {
	r := StepResult{
		Index:   m.Step.Index,
		StartS:  m.Start,
		From:    m.Step.From,
		To:      m.Step.To,
		Reasons: []Reason{},
		Metrics: MetricSetOf(m),
	}
	if u != nil {
		for _, n := range metrics.Names {
			if v := u.Expanded(n); v.OK {
				r.Uncertainty.Set(n, metrics.Known(v.V))
			}
		}
	}
	var fails, invalids []Reason
	// The checks' numbers live in one array per step rather than one
	// allocation per check: value, u, resolution and guard band.
	r.Checks = make([]Check, 0, len(s.Limits))
	nums := make([]float64, 4*len(s.Limits))
	judge := func(name metrics.Name) {
		k := len(r.Checks)
		c, why := judgeCheck(s, name, m, u, nums[4*k:4*k+4])
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

// judgeCheck applies one limit to one step. The check's numbers are stored
// in slots (value, u, resolution, guard band), which its pointers then
// point to. A check that does not pass comes with its reason, whose text
// is also the check's Reason.
func judgeCheck(s *spec.Spec, name metrics.Name, m metrics.StepMetrics, u *metrics.StepUncertainty, slots []float64) (Check, Reason) {
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
		slots[0] = v.V
		c.Value = &slots[0]
		U := metrics.Unknown("uncertainty not evaluated")
		if u != nil {
			U = u.Expanded(name)
		}
		if U.OK {
			slots[1] = U.V / metrics.CoverageFactor
			c.U = &slots[1]
		}
		cmp := comparer{res: metricResolution(s, name, m, u)}
		if cmp.res > 0 {
			slots[2] = cmp.res
			c.Resolution = &slots[2]
		}
		c.Conformity = cmp.conformity(v.V, lim, U)
		c.Verdict, why = decide(s, name, step, v.V, lim, U, cmp, &c, &slots[3])
	}
	c.Reason = why.Text
	return c, why
}

// decide applies the decision rule to a measured value v: its limits
// first, then, under guarded acceptance, the guard band w, stored in *w
// and pointed to by c.GuardBand.
func decide(s *spec.Spec, name metrics.Name, step int, v float64, lim spec.Limit, U metrics.Value, cmp comparer, c *Check, w *float64) (Verdict, Reason) {
	band, ok := s.GuardBand(lim, U)
	if ok && s.Guarded() {
		*w = band
		c.GuardBand = w
	}
	switch {
	case lim.Min != nil && cmp.excess(v, *lim.Min, -1) > 0:
		return Fail, limitReason(BelowMin, name, step, v, *lim.Min)
	case lim.Max != nil && cmp.excess(v, *lim.Max, 1) > 0:
		return Fail, limitReason(AboveMax, name, step, v, *lim.Max)
	case !s.Guarded():
		return Pass, Reason{}
	case !ok:
		return Invalid, noUncertaintyReason(name, step)
	}
	// Inside the acceptance zone means more than w inside the limit, at
	// the resolution: a value exactly w inside is on the zone's edge and
	// accepted.
	if lim.Max != nil && cmp.excess(v, *lim.Max-band, 1) > 0 {
		return Fail, guardReason(name, step, v, *lim.Max, band, true)
	}
	if lim.Min != nil && cmp.excess(v, *lim.Min+band, -1) > 0 {
		return Fail, guardReason(name, step, v, *lim.Min, band, false)
	}
	return Pass, Reason{}
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

// Count tallies units by verdict, and the units whose worst conformity
// statement is conditional apart (Summary.ConditionalPass,
// ConditionalFail). A unit whose verdict is none of pass,
// fail and invalid could not show pass or fail, and is counted invalid, so
// that Pass + Fail + Invalid = Units.
func Count(units []UnitResult) Summary {
	sum := Summary{Units: len(units)}
	for _, u := range units {
		switch u.Conformity() {
		case ConditionalPass:
			sum.ConditionalPass++
		case ConditionalFail:
			sum.ConditionalFail++
		}
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
