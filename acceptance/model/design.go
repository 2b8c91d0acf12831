package model

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"github.com/stepgate/stepgate/metrics"
)

// DampingFromOvershoot returns the damping ratio ζ of a second-order system
// without zeros whose step overshoots by pct percent:
// ζ = −ln(Mp)/√(π² + ln²(Mp)), Mp = pct/100 (K. Ogata, Modern Control
// Engineering, 5th ed., §5-3). 0 % gives ζ = 1; pct must be in [0, 100).
func DampingFromOvershoot(pct float64) (float64, error) {
	if !(pct >= 0 && pct < 100) {
		return 0, fmt.Errorf("overshoot %v %% is outside [0, 100): a second-order step cannot overshoot by that much", pct)
	}
	if pct == 0 {
		return 1, nil
	}
	l := math.Log(pct / 100)
	return -l / math.Sqrt(math.Pi*math.Pi+l*l), nil
}

// OvershootFromDamping returns the percent overshoot of the step response of
// a second-order system without zeros, 100·exp(−πζ/√(1 − ζ²)) for
// 0 < ζ < 1 and 0 for ζ ≥ 1 (Ogata 5th ed. §5-3). ζ must be positive.
func OvershootFromDamping(zeta float64) (float64, error) {
	switch {
	case !(zeta > 0) || math.IsInf(zeta, 0):
		return 0, fmt.Errorf("damping ratio %v must be a positive finite number", zeta)
	case zeta >= 1:
		return 0, nil
	}
	return 100 * math.Exp(-math.Pi*zeta/math.Sqrt(1-zeta*zeta)), nil
}

// Target is what a gain design aims at: a damping ratio or a percent
// overshoot. Make one with DampingTarget or OvershootTarget.
type Target struct {
	byOvershoot bool
	value       float64
}

// DampingTarget aims at closed-loop damping ratio zeta (> 0).
func DampingTarget(zeta float64) Target { return Target{value: zeta} }

// OvershootTarget aims at a step overshoot of pct percent (0 ≤ pct < 100).
func OvershootTarget(pct float64) Target { return Target{byOvershoot: true, value: pct} }

// String describes the target, e.g. "damping 0.7" or "overshoot 5 %".
func (t Target) String() string {
	if t.byOvershoot {
		return "overshoot " + fmtNum(t.value) + " %"
	}
	return "damping " + fmtNum(t.value)
}

// resolve returns the target's damping ratio and, when it has one (ζ < 1),
// its overshoot in percent.
func (t Target) resolve() (zeta, pct float64, hasOvershoot bool, err error) {
	if t.byOvershoot {
		if zeta, err = DampingFromOvershoot(t.value); err != nil {
			return 0, 0, false, err
		}
		return zeta, t.value, t.value > 0, nil
	}
	if pct, err = OvershootFromDamping(t.value); err != nil {
		return 0, 0, false, err
	}
	return t.value, pct, t.value < 1, nil
}

// GainDesign is a proportional gain found for a target.
type GainDesign struct {
	Kind   Kind    // the loop the gain is designed for
	Kp     float64 // the proportional gain
	Method string  // how Kp was found
	// OvershootPct is the overshoot of the step simulated at Kp, measured by
	// the metrics package; unknown with the reason when it could not be.
	OvershootPct metrics.Value
}

// Design holds the gains designed for one target. Ideal or Realised is nil
// when no gain could be found for that loop; the matching Why says why.
type Design struct {
	Target      Target
	Ideal       *GainDesign
	IdealWhy    string
	Realised    *GainDesign
	RealisedWhy string // also set when the config has no loop or actuator section
}

// Root-finding limits.
const (
	designScanFactor = 2    // gain ratio between scan points
	designScanSteps  = 40   // scan points each way from the start gain
	designBisections = 60   // at most; stops at designGainTol
	designGainTol    = 1e-9 // relative width of the final bracket
	// designOvershootTol is how close, in percentage points, the overshoot
	// at the found gain must be to the target; a larger gap means the
	// overshoot jumps past the target (typically where the loop becomes
	// unstable) and the target is not reachable.
	designOvershootTol = 0.05
	// designMaxSamples caps the samples of one design simulation.
	designMaxSamples = 2_000_000
)

// DesignGain finds the proportional gain that meets t, keeping ki, kd and the
// rest of the loop as configured, for the step from → to (the size matters
// only to a realised loop that saturates or has a deadband).
//
// The ideal gain comes in closed form when the loop is P control (ki = kd = 0)
// of a second-order plant b/(s² + a1·s + a0) without dead time: the closed
// loop s² + a1·s + (a0 + b·kp) has 2ζωn = a1 and ωn² = a0 + b·kp, so
// kp = (a1²/(4ζ²) − a0)/b (coefficient matching; for a0 = 0 this is
// kp = a²/(4ζ²K) of K/(s(s + a)), references §4). Otherwise, and always for
// the realised loop, the gain comes from bisection on the overshoot of the
// simulated step as the metrics package measures it, after a geometric scan
// (factor 2, from the configured kp) brackets the target; an unstable or
// non-settling response counts as above the target. A damping target is then
// aimed at through its second-order overshoot, so ζ ≥ 1 (no overshoot) has
// no root-finding design.
//
// The error is non-nil when the target is invalid or no gain was found for
// either loop.
func (s *System) DesignGain(t Target, from, to float64) (Design, error) {
	zeta, pct, hasOS, err := t.resolve()
	if err != nil {
		return Design{}, fmt.Errorf("design target %v: %w", t, err)
	}
	if from == to || math.IsNaN(from) || math.IsNaN(to) || math.IsInf(from, 0) || math.IsInf(to, 0) {
		return Design{}, fmt.Errorf("design step from %v to %v: the command must change by a finite amount", from, to)
	}
	d := Design{Target: t}
	if kp, ok, why := s.closedFormGain(zeta); ok {
		g := &GainDesign{Kind: Ideal, Kp: kp, Method: "closed form: coefficient matching of s² + a1·s + (a0 + b·kp)"}
		g.OvershootPct = s.WithGain(kp).measuredOvershoot(Ideal, from, to)
		d.Ideal = g
	} else if why != "" {
		d.IdealWhy = why
	} else if g, err := s.rootFindGain(Ideal, pct, hasOS, from, to); err != nil {
		d.IdealWhy = err.Error()
	} else {
		d.Ideal = g
	}
	switch {
	case !s.Realised():
		d.RealisedWhy = "the config has no loop or actuator section: the realised loop is the ideal one"
	default:
		if g, err := s.rootFindGain(Realised, pct, hasOS, from, to); err != nil {
			d.RealisedWhy = err.Error()
		} else {
			d.Realised = g
		}
	}
	if d.Ideal == nil && d.Realised == nil {
		why := d.IdealWhy
		if s.Realised() {
			why += "; " + LoopWhy("realised", d.RealisedWhy)
		}
		return d, fmt.Errorf("no gain meets %v: %s", t, why)
	}
	return d, nil
}

// closedFormGain applies when the ideal loop is P control of a second-order
// plant without zeros or dead time. ok reports a gain; why is set when the
// closed form applies but the target is out of reach.
func (s *System) closedFormGain(zeta float64) (kp float64, ok bool, why string) {
	k := s.cfg.Controller
	if k.Ki != 0 || k.Kd != 0 || s.cfg.PlantDeadTime != 0 || s.num.degree() != 0 || s.den.degree() != 2 {
		return 0, false, ""
	}
	lead := s.den[0]
	a1, a0, b := s.den[1]/lead, s.den[2]/lead, s.num[0]/lead
	if !(a1 > 0) {
		return 0, false, fmt.Sprintf("plant %v has no damping term (a1 = %v ≤ 0): P control cannot set the damping", s.Plant(), fmtNum(a1))
	}
	kp = (a1*a1/(4*zeta*zeta) - a0) / b
	if !(kp > 0) {
		return 0, false, fmt.Sprintf("damping %v is out of reach of P control on %v: the closed-loop damping a1/(2√(a0 + b·kp)) stays below it for every kp > 0", fmtNum(zeta), s.Plant())
	}
	return kp, true, ""
}

// measuredOvershoot simulates the step at the system's gain over its design
// horizon and measures the overshoot with the metrics package.
func (s *System) measuredOvershoot(kind Kind, from, to float64) metrics.Value {
	v, err := s.overshoot(kind, from, to)
	if err != nil {
		return metrics.Unknown(err.Error())
	}
	return metrics.Known(v)
}

// errNotSettled marks a response that did not settle within the longest
// design horizon.
var errNotSettled = errors.New("response does not settle")

// overshoot simulates the step over 16 decay times of the slowest delay-free
// pole (e^(−16) ≈ 10⁻⁷, so the final value is settled far inside the
// metrics package's steadiness limit) and measures it. The output period is
// at most 1/8000 of the horizon and 1/200 of the period of the fastest
// delay-free pole, so that the sampled peak is within about 5·10⁻⁴ of the
// oscillation's amplitude. When the final value is not steady, the horizon
// is doubled up to three times.
func (s *System) overshoot(kind Kind, from, to float64) (float64, error) {
	dur, err := s.horizon(16)
	if err != nil {
		return 0, err
	}
	fast := 1e-300
	if p, err := s.Poles(); err == nil {
		for _, z := range p {
			fast = math.Max(fast, cmplxAbs(z))
		}
	}
	var why string
	for try := 0; try < 4; try++ {
		dt := math.Min(dur/8000, 2*math.Pi/fast/200)
		dt = math.Max(dt, dur/designMaxSamples)
		if l := s.cfg.Loop; kind == Realised && l != nil && dt < l.SamplePeriod {
			// Output instants on the sampling grid keep the distinct
			// event gaps, and so the matrix exponentials, few.
			dt = l.SamplePeriod / math.Ceil(l.SamplePeriod/dt)
		}
		tr, err := s.Simulate(kind, from, to, dur, dt)
		if err != nil {
			return 0, err
		}
		ms := metrics.Measure(tr, math.Abs(to-from)/2, metrics.DefaultOptions())
		if len(ms) != 1 {
			return 0, fmt.Errorf("the simulated step was not found by the metrics package (%d steps)", len(ms))
		}
		if ms[0].Overshoot.OK {
			return ms[0].Overshoot.V, nil
		}
		why = ms[0].Overshoot.Why
		if ms[0].FinalValue.OK {
			break
		}
		dur *= 2
	}
	return 0, fmt.Errorf("%w: overshoot of the simulated step at kp=%s is unknown: %s", errNotSettled, fmtNum(s.Kp()), why)
}

// rootFindGain brackets and bisects the overshoot of the simulated step.
func (s *System) rootFindGain(kind Kind, pct float64, hasOS bool, from, to float64) (*GainDesign, error) {
	if !hasOS {
		return nil, fmt.Errorf("%s loop: a target without overshoot (damping ≥ 1) cannot be aimed at by root finding on the overshoot; it is designed in closed form only, for P control of a second-order plant without zeros or dead time", kind)
	}
	// eval reports whether kp overshoots at least pct, counting an
	// unstable or non-settling loop as above.
	eval := func(kp float64) (gainPoint, bool, error) {
		os, err := s.WithGain(kp).overshoot(kind, from, to)
		var ue *UnstableError
		switch {
		case err == nil:
			return gainPoint{kp, os, true}, os >= pct, nil
		case errors.As(err, &ue), errors.Is(err, errNotSettled):
			return gainPoint{kp: kp}, true, nil
		}
		return gainPoint{}, false, err
	}
	k0 := s.Kp()
	if !(k0 > 0) {
		k0 = 1
	}
	p0, up0, err := eval(k0)
	if err != nil {
		return nil, err
	}
	lo, hi, found, err := bracketGain(eval, p0, up0)
	if err != nil {
		return nil, err
	}
	if !found {
		if up0 {
			return nil, fmt.Errorf("%s loop: the overshoot stays at or above %s %% down to kp=%s", kind, fmtNum(pct), fmtNum(lo.kp))
		}
		return nil, fmt.Errorf("%s loop: the overshoot stays below %s %% up to kp=%s (%s %% there)", kind, fmtNum(pct), fmtNum(hi.kp), fmtNum(hi.os))
	}
	for i := 0; i < designBisections && hi.kp-lo.kp > designGainTol*hi.kp; i++ {
		p, up, err := eval(0.5 * (lo.kp + hi.kp))
		if err != nil {
			return nil, err
		}
		if up {
			hi = p
		} else {
			lo = p
		}
	}
	best := lo
	if hi.ok && math.Abs(hi.os-pct) < math.Abs(lo.os-pct) {
		best = hi
	}
	if !best.ok || math.Abs(best.os-pct) > designOvershootTol {
		return nil, fmt.Errorf("%s loop: overshoot %s %% is not reachable: it reaches at most %s %% before the loop becomes unstable or stops settling near kp=%s",
			kind, fmtNum(pct), fmtNum(lo.os), fmtNum(hi.kp))
	}
	return &GainDesign{Kind: kind, Kp: best.kp, OvershootPct: metrics.Known(best.os),
		Method: "bisection on the overshoot of the simulated step, measured by the metrics package"}, nil
}

// gainPoint is one gain tried by rootFindGain and its overshoot.
type gainPoint struct {
	kp, os float64
	ok     bool // os measured
}

// bracketGain scans the gain by designScanFactor from p0, down when p0
// overshoots the target (up0) and up when it does not, until a gain on the
// other side brackets the target between lo and hi; found is false when
// designScanSteps steps do not reach one.
func bracketGain(eval func(kp float64) (gainPoint, bool, error), p0 gainPoint, up0 bool) (lo, hi gainPoint, found bool, err error) {
	lo, hi = p0, p0
	for i := 0; i < designScanSteps && !found; i++ {
		if up0 {
			p, up, err := eval(lo.kp / designScanFactor)
			if err != nil {
				return lo, hi, false, err
			}
			if !up {
				lo, found = p, true
			} else {
				hi, lo = p, p
			}
		} else {
			p, up, err := eval(hi.kp * designScanFactor)
			if err != nil {
				return lo, hi, false, err
			}
			if up {
				hi, found = p, true
			} else {
				lo, hi = p, p
			}
		}
	}
	return lo, hi, found, nil
}

// LoopWhy labels why no gain was found for the ideal or the realised loop
// ("realised: …"), unless the reason already names the loop ("realised
// loop: …"), so that the label is not said twice.
func LoopWhy(kind, why string) string {
	if strings.HasPrefix(why, kind+" loop") {
		return why
	}
	return kind + ": " + why
}
