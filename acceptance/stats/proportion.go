package stats

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Proportion is a share x/n with its Wilson score interval.
type Proportion struct {
	// X and N are the count of successes and the number of trials.
	X, N int
	// P is the observed share X/N.
	P float64
	// Level is the confidence level of [Low, High].
	Level float64
	// Low and High bound the Wilson score interval; they lie within [0, 1].
	Low, High float64
	// Reason is empty when the interval was computed; otherwise it says why not.
	Reason string
}

// Known reports whether the interval was computed.
func (p Proportion) Known() bool { return p.Reason == "" }

// Wilson returns the score interval for the proportion x/n at the given
// confidence level: with p̂ = x/n and z the two-sided normal quantile,
// (p̂ + z²/2n ± z·√(p̂(1 − p̂)/n + z²/4n²)) / (1 + z²/n)
// (E. B. Wilson, "Probable inference, the law of succession, and statistical
// inference", JASA 22, 1927; method 3 of R. G. Newcombe, Statistics in
// Medicine 17 (1998) 857–872). The interval is the set of p for which
// |p̂ − p| ≤ z·√(p(1 − p)/n), so it never leaves [0, 1] and is not empty at
// x = 0 or x = n.
func Wilson(x, n int, level float64) Proportion {
	p := Proportion{X: x, N: n, Level: level}
	switch {
	case n < 1:
		p.Reason = "no trials"
		return p
	case x < 0 || x > n:
		p.Reason = "the count lies outside 0 … n"
		return p
	case !(level > 0 && level < 1):
		p.Reason = "the confidence level must lie strictly between 0 and 1"
		return p
	}
	z := normalQuantile(level)
	nf := float64(n)
	p.P = float64(x) / nf
	centre := p.P + z*z/(2*nf)
	half := z * math.Sqrt(p.P*(1-p.P)/nf+z*z/(4*nf*nf))
	den := 1 + z*z/nf
	p.Low = math.Max(0, (centre-half)/den)
	p.High = math.Min(1, (centre+half)/den)
	if x == 0 {
		p.Low = 0 // exact: the formula's rounding could leave 1e-17
	}
	if x == n {
		p.High = 1
	}
	return p
}

// ProportionDifference is the difference of two independent proportions,
// oriented as after − before.
type ProportionDifference struct {
	// Before and After are the two shares with their own Wilson intervals.
	Before, After Proportion
	// Difference is p_after − p_before.
	Difference float64
	// Level is the confidence level of [Low, High].
	Level float64
	// Low and High bound Newcombe's hybrid score interval of Difference.
	Low, High float64
	// Reason is empty when the interval was computed; otherwise it says why not.
	Reason string
}

// Known reports whether the interval was computed.
func (d ProportionDifference) Known() bool { return d.Reason == "" }

// NewcombeDifference returns the interval of p_after − p_before by
// Newcombe's hybrid score method (R. G. Newcombe, "Interval estimation for
// the difference between independent proportions: comparison of eleven
// methods", Statistics in Medicine 17 (1998) 873–890, method 10): with
// Wilson limits (l₁, u₁) for p₁ = after and (l₂, u₂) for p₂ = before,
// δ = √((p₁ − l₁)² + (u₂ − p₂)²), ε = √((u₁ − p₁)² + (p₂ − l₂)²) and the
// interval [p₁ − p₂ − δ, p₁ − p₂ + ε].
func NewcombeDifference(xBefore, nBefore, xAfter, nAfter int, level float64) ProportionDifference {
	d := ProportionDifference{Level: level}
	d.Before = Wilson(xBefore, nBefore, level)
	d.After = Wilson(xAfter, nAfter, level)
	if !d.Before.Known() {
		d.Reason = "the before share: " + d.Before.Reason
		return d
	}
	if !d.After.Known() {
		d.Reason = "the after share: " + d.After.Reason
		return d
	}
	a, b := d.After, d.Before
	d.Difference = a.P - b.P
	d.Low = d.Difference - math.Hypot(a.P-a.Low, b.High-b.P)
	d.High = d.Difference + math.Hypot(a.High-a.P, b.P-b.Low)
	return d
}

// normalQuantile is the standard normal quantile z with two-sided coverage level.
func normalQuantile(level float64) float64 {
	return distuv.UnitNormal.Quantile(1 - (1-level)/2)
}
