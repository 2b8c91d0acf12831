package rigsim

import (
	"fmt"
	"math"
)

// Profile is a position command as a function of time in seconds. The
// controller samples it once per sample period.
type Profile interface {
	At(t float64) float64
}

// InitialLevel is the command's level before it starts to change, where
// the plant starts at rest: From for the profiles of this package (a Step
// at time zero starts the plant at From, not at To), and At(0) for any
// other profile.
func InitialLevel(p Profile) float64 {
	if i, ok := p.(interface{ initial() float64 }); ok {
		return i.initial()
	}
	return p.At(0)
}

func (s Step) initial() float64     { return s.From }
func (r Ramp) initial() float64     { return r.From }
func (m Move) initial() float64     { return m.From }
func (s Sequence) initial() float64 { return s.From }

// ProfileFunc adapts a function to a Profile.
type ProfileFunc func(t float64) float64

// At returns f(t).
func (f ProfileFunc) At(t float64) float64 { return f(t) }

// Step jumps from From to To at Time.
type Step struct {
	Time, From, To float64
}

// At returns From before Time and To from Time on.
func (s Step) At(t float64) float64 {
	if t < s.Time {
		return s.From
	}
	return s.To
}

// Ramp leaves From at Time with Slope (units per second) for Duration
// seconds and then holds; a zero Duration ramps without end.
type Ramp struct {
	Time, From, Slope, Duration float64
}

// At returns the ramp's value at t.
func (r Ramp) At(t float64) float64 {
	d := math.Max(0, t-r.Time)
	if r.Duration > 0 {
		d = math.Min(d, r.Duration)
	}
	return r.From + r.Slope*d
}

// Move is a point-to-point move from rest to rest built from segments of
// constant jerk: a trapezoidal velocity move (NewTrapezoid) or a
// jerk-limited S-curve move (NewSCurve).
type Move struct {
	Start, From float64 // start time and initial position
	dist, dur   float64 // signed distance and duration
	segs        []segment
}

// segment is a piece of a move with constant jerk, its start state taken
// for a move in the positive direction.
type segment struct {
	t0, dur    float64
	p0, v0, a0 float64
	j          float64
}

// Distance is the signed length of the move.
func (m Move) Distance() float64 { return m.dist }

// Duration is the time from the move's start to its end.
func (m Move) Duration() float64 { return m.dur }

// End is the time the move comes to rest at From + Distance.
func (m Move) End() float64 { return m.Start + m.dur }

// At returns the commanded position at t.
func (m Move) At(t float64) float64 {
	tau := t - m.Start
	switch {
	case tau <= 0:
		return m.From
	case tau >= m.dur:
		return m.From + m.dist
	}
	sign := math.Copysign(1, m.dist)
	for i := len(m.segs) - 1; i >= 0; i-- {
		s := m.segs[i]
		if tau >= s.t0 {
			d := tau - s.t0
			return m.From + sign*(s.p0+s.v0*d+s.a0*d*d/2+s.j*d*d*d/6)
		}
	}
	return m.From
}

// piece is a segment's duration, initial acceleration and jerk.
type piece struct{ dur, a0, j float64 }

// newMove chains the pieces, integrating the start state of each.
func newMove(start, from, dist float64, pieces []piece) Move {
	m := Move{Start: start, From: from, dist: dist}
	var t, p, v float64
	for _, pc := range pieces {
		if pc.dur <= 0 {
			continue
		}
		m.segs = append(m.segs, segment{t0: t, dur: pc.dur, p0: p, v0: v, a0: pc.a0, j: pc.j})
		d := pc.dur
		p += v*d + pc.a0*d*d/2 + pc.j*d*d*d/6
		v += pc.a0*d + pc.j*d*d/2
		t += d
	}
	m.dur = t
	return m
}

func checkPositive(what string, vals ...float64) error {
	for _, v := range vals {
		if !(v > 0) || math.IsInf(v, 0) {
			return fmt.Errorf("%s: velocity, acceleration, deceleration and jerk must be positive and finite, got %v", what, vals)
		}
	}
	return nil
}

// NewTrapezoid is a move of the signed distance starting at time start
// from position from: constant acceleration accel up to velocity, a
// cruise, and constant deceleration decel to rest. A move too short to
// reach the velocity is triangular, peaking at √(2·|distance|·a·d/(a+d)).
func NewTrapezoid(start, from, distance, velocity, accel, decel float64) (Move, error) {
	if err := checkPositive("trapezoidal move", velocity, accel, decel); err != nil {
		return Move{}, err
	}
	d := math.Abs(distance)
	v := math.Min(velocity, math.Sqrt(2*d*accel*decel/(accel+decel)))
	if d == 0 {
		return Move{Start: start, From: from}, nil
	}
	ta, td := v/accel, v/decel
	tc := math.Max(0, (d-v*v/(2*accel)-v*v/(2*decel))/v)
	return newMove(start, from, distance, []piece{{ta, accel, 0}, {tc, 0, 0}, {td, -decel, 0}}), nil
}

// sCurveTimes gives, for a cruise velocity v, the jerk phase tj, the
// constant-acceleration phase ta and the peak acceleration of a symmetric
// jerk-limited acceleration from rest to v.
func sCurveTimes(v, amax, jerk float64) (tj, ta, ap float64) {
	if v >= amax*amax/jerk {
		tj = amax / jerk
		return tj, v/amax - tj, amax
	}
	tj = math.Sqrt(v / jerk)
	return tj, 0, jerk * tj
}

// NewSCurve is a jerk-limited (seven-segment) move of the signed distance
// starting at time start from position from: jerk ±jerk, acceleration up
// to accel, velocity up to velocity. A move too short to reach the
// velocity cruises at the highest velocity it can reach, found by
// bisection (the accelerating and decelerating phases then cover the
// distance exactly).
func NewSCurve(start, from, distance, velocity, accel, jerk float64) (Move, error) {
	if err := checkPositive("S-curve move", velocity, accel, jerk); err != nil {
		return Move{}, err
	}
	d := math.Abs(distance)
	if d == 0 {
		return Move{Start: start, From: from}, nil
	}
	span := func(v float64) float64 { // distance to reach v and stop again
		tj, ta, _ := sCurveTimes(v, accel, jerk)
		return v * (2*tj + ta)
	}
	v := velocity
	if span(v) > d {
		lo, hi := 0.0, v
		for i := 0; i < 200 && hi-lo > 1e-15*velocity; i++ {
			mid := (lo + hi) / 2
			if span(mid) > d {
				hi = mid
			} else {
				lo = mid
			}
		}
		v = lo
	}
	tj, ta, ap := sCurveTimes(v, accel, jerk)
	tc := math.Max(0, (d-span(v))/v)
	return newMove(start, from, distance, []piece{
		{tj, 0, jerk}, {ta, ap, 0}, {tj, ap, -jerk},
		{tc, 0, 0},
		{tj, 0, -jerk}, {ta, -ap, 0}, {tj, -ap, jerk},
	}), nil
}

// Sequence is a command made of several profiles: From plus the change
// each part has made by time t (its value at t less its value before it
// started). Moves out and back, repeated moves and steps on a ramp are
// sequences.
type Sequence struct {
	From  float64
	Parts []Profile
}

// At returns the sum of the parts' changes at t, added to From.
func (s Sequence) At(t float64) float64 {
	v := s.From
	for _, p := range s.Parts {
		v += p.At(t) - p.At(math.Inf(-1))
	}
	return v
}

// OutAndBack repeats a move out and the same move back, cycles times: out
// at the move's start, back a dwell after it ends, out again a dwell after
// that, and so on.
func OutAndBack(m Move, dwell float64, cycles int) Sequence {
	seq := Sequence{From: m.From}
	t := m.Start
	for i := 0; i < cycles; i++ {
		out := m.shifted(t, m.dist)
		back := m.shifted(out.End()+dwell, -m.dist)
		seq.Parts = append(seq.Parts, out, back)
		t = back.End() + dwell
	}
	return seq
}

// shifted is the same move shape starting at start with the signed
// distance dist (of the same length) from position 0.
func (m Move) shifted(start, dist float64) Move {
	c := m
	c.Start, c.From, c.dist = start, 0, dist
	return c
}
