package metrics

import (
	"math"
	"math/rand/v2"
)

// This file builds test records from closed-form step responses, sampled the
// way an end-of-line rig logs them, and computes the exact reference values
// from the closed forms by bisection, independently of the code under test.

// unitResponse is the response of a system with static gain 1 to a unit step
// applied at t = 0, for t ≥ 0.
type unitResponse func(t float64) float64

// underdamped is y(t) = 1 − e^(−σt)(cos ωd t + (σ/ωd) sin ωd t), 0 < ζ < 1
// (K. Ogata, Modern Control Engineering, 5th ed., §5-3, eq. 5-10;
// references.md §2).
func underdamped(zeta, wn float64) unitResponse {
	s := zeta * wn
	wd := wn * math.Sqrt(1-zeta*zeta)
	return func(t float64) float64 {
		return 1 - math.Exp(-s*t)*(math.Cos(wd*t)+s/wd*math.Sin(wd*t))
	}
}

// critical is y(t) = 1 − e^(−ωn t)(1 + ωn t), ζ = 1 (Ogata 5th ed. §5-3,
// eq. 5-13).
func critical(wn float64) unitResponse {
	return func(t float64) float64 { return 1 - math.Exp(-wn*t)*(1+wn*t) }
}

// firstOrder is y(t) = 1 − e^(−t/τ) (Ogata 5th ed. §5-2; references.md §3).
func firstOrder(tau float64) unitResponse {
	return func(t float64) float64 { return 1 - math.Exp(-t/tau) }
}

// delayed shifts a response by a dead time θ.
func delayed(f unitResponse, theta float64) unitResponse {
	return func(t float64) float64 {
		if t < theta {
			return 0
		}
		return f(t - theta)
	}
}

// segment is a command level held for a duration.
type segment struct {
	dur float64 // seconds
	cmd float64 // command level
}

// rig describes how a synthetic record is sampled.
type rig struct {
	dt     float64      // nominal sample period
	t0     float64      // clock reading at the first sample
	gain   float64      // static gain of the loop (1 when zero)
	jitter float64      // sample spacing varies uniformly in dt·[1−jitter, 1+jitter]
	noise  float64      // standard deviation of Gaussian measurement noise
	quant  float64      // encoder resolution (0: none)
	seed   uint64       // seed of the noise and jitter generator
	f      unitResponse // unit-step response of the loop
}

// record samples the response of the loop to a piecewise-constant command.
// The response before the first segment is settled at gain × first command.
// Each later segment starts at the first sample at or after its nominal
// start, which is then the step instant; the response is the superposition
// of the step responses to each command change (the loop is linear and time
// invariant).
func (r rig) record(segs []segment) Trace {
	g := r.gain
	if g == 0 {
		g = 1
	}
	rng := rand.New(rand.NewPCG(r.seed, 0x5eed))
	var total float64
	for _, s := range segs {
		total += s.dur
	}
	var tr Trace
	type change struct{ at, size float64 }
	var changes []change
	seg, segEnd := 0, segs[0].dur
	for k, tk := 0, 0.0; ; k++ {
		switch {
		case r.jitter == 0:
			tk = float64(k) * r.dt
		case k > 0:
			tk += r.dt * (1 + r.jitter*(2*rng.Float64()-1))
		}
		if tk > total+1e-12 {
			break
		}
		for seg+1 < len(segs) && tk >= segEnd-1e-12 {
			seg++
			segEnd += segs[seg].dur
			changes = append(changes, change{tk, segs[seg].cmd - segs[seg-1].cmd})
		}
		y := g * segs[0].cmd
		for _, c := range changes {
			y += g * c.size * r.f(tk-c.at)
		}
		if r.noise > 0 {
			y += r.noise * rng.NormFloat64()
		}
		if r.quant > 0 {
			y = r.quant * math.Round(y/r.quant)
		}
		tr.Time = append(tr.Time, r.t0+tk)
		tr.Command = append(tr.Command, segs[seg].cmd)
		tr.Response = append(tr.Response, y)
	}
	return tr
}

// exactCrossing is the first t in [0, tMax] at which f(t) ≥ level: a scan on a
// 10 µs grid, then bisection to 1e-12 s.
func exactCrossing(f unitResponse, level, tMax float64) float64 {
	const h = 1e-5
	for a := 0.0; a < tMax; a += h {
		if f(a+h) >= level {
			return bisect(func(t float64) bool { return f(t) >= level }, a, a+h)
		}
	}
	return math.NaN()
}

// exactSettling is the last t in [0, tEnd] at which |f(t) − final| = band:
// a backward scan on a 10 µs grid, then bisection.
func exactSettling(f unitResponse, final, band, tEnd float64) float64 {
	const h = 1e-5
	out := func(t float64) bool { return math.Abs(f(t)-final) > band }
	for b := tEnd; b > 0; b -= h {
		if out(b - h) {
			return bisect(func(t float64) bool { return !out(t) }, b-h, b)
		}
	}
	return 0
}

// bisect returns the boundary in [a, b] where p turns from false to true.
func bisect(p func(float64) bool, a, b float64) float64 {
	for b-a > 1e-12 {
		m := (a + b) / 2
		if p(m) {
			b = m
		} else {
			a = m
		}
	}
	return (a + b) / 2
}
