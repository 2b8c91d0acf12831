package acceptance

import (
	"math"
	"strconv"

	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// Conformity is a check's statement of conformity with its limits, taking
// the value's expanded uncertainty U into account (ILAC-G8:09/2019 §4.2,
// its four statements; ISO/IEC 17025:2017 §7.8.6):
//
//   - pass: the value lies inside the limits by more than U;
//   - conditional_pass: inside the limits, but within U of one;
//   - conditional_fail: outside the limits, but within U of one;
//   - fail: outside the limits by more than U.
//
// It is "" when the value or U is unknown. The check's verdict follows the
// spec's decision rule: under simple acceptance the value alone decides,
// under guarded acceptance a value must lie inside the limits narrowed by
// the guard band, so a conditional pass (with w = U) is not accepted.
type Conformity string

// The four conformity statements.
const (
	Conforms        Conformity = "pass"
	ConditionalPass Conformity = "conditional_pass"
	ConditionalFail Conformity = "conditional_fail"
	NotConforms     Conformity = "fail"
)

// rank orders the statements from best to worst.
func (c Conformity) rank() int {
	switch c {
	case Conforms:
		return 1
	case ConditionalPass:
		return 2
	case ConditionalFail:
		return 3
	case NotConforms:
		return 4
	}
	return 0
}

// Worse returns the worse of c and d; "" counts as neither.
func (c Conformity) Worse(d Conformity) Conformity {
	if d.rank() > c.rank() {
		return d
	}
	return c
}

// Conditional reports whether c is a conditional statement.
func (c Conformity) Conditional() bool { return c == ConditionalPass || c == ConditionalFail }

// comparer compares values with limits at a resolution: the value is
// stated in whole steps of the resolution when it is known, and a
// difference within float residue of the limit (a relative 1e-9 of the
// resolution, or 1e-12 of the numbers without one) is no difference, so
// a value on its limit is on it.
type comparer struct{ res float64 }

// stated returns v rounded to the resolution (v itself without one).
func (c comparer) stated(v float64) float64 {
	if c.res > 0 {
		return math.Round(v/c.res) * c.res
	}
	return v
}

// excess returns by how much v, stated at the resolution, lies beyond the
// bound lim in the direction sign (+1: above a max, −1: below a min):
// ≤ 0 when v is within the bound, 0 on it.
func (c comparer) excess(v, lim, sign float64) float64 {
	vs := c.stated(v)
	d := sign * (vs - lim)
	tol := 1e-12 * math.Max(math.Abs(vs), math.Abs(lim))
	if c.res > 0 {
		tol = math.Max(tol, 1e-9*c.res)
	}
	if math.Abs(d) <= tol {
		return 0
	}
	return d
}

// conformity states v against lim's bounds with expanded uncertainty U.
func (c comparer) conformity(v float64, lim spec.Limit, U metrics.Value) Conformity {
	if !U.OK {
		return ""
	}
	out := Conforms
	for _, b := range []struct {
		p    *float64
		sign float64
	}{{lim.Max, 1}, {lim.Min, -1}} {
		if b.p == nil {
			continue
		}
		e := c.excess(v, *b.p, b.sign)
		st := Conforms
		switch {
		case e > 0 && e > U.V:
			st = NotConforms
		case e > 0:
			st = ConditionalFail
		case -e < U.V || (e == 0 && U.V > 0):
			st = ConditionalPass
		}
		out = out.Worse(st)
	}
	return out
}

// metricResolution returns the resolution metric n is compared at: the
// spec's for that limit, else one derived from the record: the response's
// resolution (the spec's response_resolution or the count found in the
// log) for levels and errors, the sample period for times, and the
// response's resolution as a percentage of the transition or the step for
// percentages. 0 when none is known.
func metricResolution(s *spec.Spec, n metrics.Name, m metrics.StepMetrics, u *metrics.StepUncertainty) float64 {
	return snap(rawResolution(s, n, m, u))
}

// snap gives a derived resolution to twelve significant digits, so that a
// sample period of 1 ms read from float time stamps is 0.001 and not
// 0.0010000000000000009.
func snap(r float64) float64 {
	if r == 0 {
		return 0
	}
	v, _ := strconv.ParseFloat(strconv.FormatFloat(r, 'g', 12, 64), 64)
	return v
}

// rawResolution is metricResolution before snap.
func rawResolution(s *spec.Spec, n metrics.Name, m metrics.StepMetrics, u *metrics.StepUncertainty) float64 {
	if r := s.Resolution(n); r > 0 {
		return r
	}
	q := s.ResponseResolution
	var dt float64
	if u != nil {
		if q == 0 {
			q = u.Resolution
		}
		dt = u.SamplePeriod
	}
	mm, ok := metrics.Lookup(n)
	if !ok {
		return 0
	}
	switch mm.Unit {
	case metrics.Seconds:
		return dt
	case metrics.Percent:
		base := math.Abs(m.Step.Size())
		if n == metrics.Overshoot && m.InitialValue.OK && m.FinalValue.OK {
			base = math.Abs(m.FinalValue.V - m.InitialValue.V)
		}
		if q == 0 || base == 0 {
			return 0
		}
		return q / base * 100
	}
	return q
}

// Conformity returns the worst conformity statement of the unit's checks;
// "" when no check has one.
func (u *UnitResult) Conformity() Conformity {
	var c Conformity
	for i := range u.Steps {
		for j := range u.Steps[i].Checks {
			c = c.Worse(u.Steps[i].Checks[j].Conformity)
		}
	}
	return c
}
