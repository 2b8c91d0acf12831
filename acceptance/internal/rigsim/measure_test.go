package rigsim

import "math"

// stepMeasure holds the step-response figures the tests compare with
// closed forms. It is measured here, by the tests' own small helper,
// following the definitions of IEEE Std 181-2011 (reference levels at
// 10 % and 90 %, linear interpolation between samples) and the control
// texts (overshoot beyond the final value as a percentage of the step,
// peak time and settling time from the step instant).
type stepMeasure struct {
	overshoot float64 // %
	peak      float64 // s from the step
	rise      float64 // 10–90 %, s
	rise100   float64 // 0–100 %, s (first reaching the final value)
	settle    float64 // s from the step to staying within band·|step|
}

// crossing is the interpolated time at which y first reaches level,
// moving from below (up is true) or above.
func crossing(t, y []float64, from int, level float64, up bool) float64 {
	for i := from + 1; i < len(y); i++ {
		a, b := y[i-1]-level, y[i]-level
		if up && a < 0 && b >= 0 || !up && a > 0 && b <= 0 {
			return t[i-1] + (t[i]-t[i-1])*a/(a-b)
		}
	}
	return math.NaN()
}

// measureStep measures a step from y0 to yf applied at t0; band is the
// settling band as a fraction of the step (0.02 for 2 %).
func measureStep(t, y []float64, t0, y0, yf, band float64) stepMeasure {
	i0 := 0
	for i0 < len(t) && t[i0] < t0 {
		i0++
	}
	amp := yf - y0
	up := amp > 0
	var m stepMeasure
	r10 := crossing(t, y, i0, y0+0.1*amp, up)
	r90 := crossing(t, y, i0, y0+0.9*amp, up)
	m.rise = r90 - r10
	m.rise100 = crossing(t, y, i0, yf, up) - t0
	ipk := i0
	for i := i0; i < len(y); i++ {
		if (y[i]-y[ipk])*amp > 0 {
			ipk = i
		}
	}
	m.peak = t[ipk] - t0
	m.overshoot = math.Max(0, (y[ipk]-yf)/amp*100)
	tol := band * math.Abs(amp)
	last := -1
	for i := i0; i < len(y); i++ {
		if math.Abs(y[i]-yf) > tol {
			last = i
		}
	}
	switch {
	case last < 0:
		m.settle = 0
	case last == len(y)-1:
		m.settle = math.NaN()
	default:
		e0, e1 := math.Abs(y[last]-yf)-tol, math.Abs(y[last+1]-yf)-tol
		m.settle = t[last] + (t[last+1]-t[last])*e0/(e0-e1) - t0
	}
	return m
}

// secondOrderStep is the unit-step response of ωn²/(s² + 2ζωn s + ωn²),
// 0 < ζ < 1 (Ogata, Modern Control Engineering, 5th ed., §5-3, eq. 5-10;
// references.md §2).
func secondOrderStep(zeta, wn, t float64) float64 {
	if t <= 0 {
		return 0
	}
	wd := wn * math.Sqrt(1-zeta*zeta)
	s := zeta * wn
	return 1 - math.Exp(-s*t)*(math.Cos(wd*t)+s/wd*math.Sin(wd*t))
}

// secondOrderRamp is the unit-ramp response of the same loop,
// c(t) = t − 2ζ/ωn + (e^(−ζωn t)/ωd)·sin(ωd t + 2φ), φ = arccos ζ
// (Ogata, Modern Control Engineering, 5th ed., §5-3, from memory;
// references.md §12).
func secondOrderRamp(zeta, wn, t float64) float64 {
	if t <= 0 {
		return 0
	}
	wd := wn * math.Sqrt(1-zeta*zeta)
	phi := math.Acos(zeta)
	return t - 2*zeta/wn + math.Exp(-zeta*wn*t)/wd*math.Sin(wd*t+2*phi)
}
