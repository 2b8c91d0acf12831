package rigsim

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
)

// Record is what the rig logs, one entry per sample period: time in
// seconds from the start, the command, the encoder's position reading and
// the effort the drive applies from that instant on.
type Record struct {
	T, Command, Position, Effort []float64
}

// Len is the number of samples.
func (r Record) Len() int { return len(r.T) }

// Simulate runs the rig for duration seconds under the command profile and
// returns the log, sampled at Loop.SampleRate from time 0 to duration
// inclusive.
//
// Each sample period, in this order: the encoder is read, the command is
// sampled, the controller computes the effort, and that effort is queued
// to take effect Loop.Delay later (rounded to the fine-step grid), clamped
// by the drive and held (zero-order hold) until the next one takes effect.
// The plant is integrated between with Loop.FineSteps fixed Runge–Kutta
// steps per sample period. The effort is zero until the first computed
// value takes effect. The plant starts at rest at the command's initial
// level (InitialLevel).
func Simulate(rig Rig, cmd Profile, duration float64) (Record, error) {
	if err := rig.validate(); err != nil {
		return Record{}, err
	}
	if cmd == nil {
		return Record{}, errors.New("simulate: no command profile")
	}
	if !(duration >= 0) || math.IsInf(duration, 0) {
		return Record{}, fmt.Errorf("simulate: duration %g s must be zero or positive and finite", duration)
	}
	fs := rig.Loop.SampleRate
	n := int(math.Floor(duration*fs+1e-9)) + 1
	if n > 1<<28 {
		return Record{}, fmt.Errorf("simulate: %d samples is too many", n)
	}
	m := rig.Loop.fineSteps()
	h := 1 / (fs * float64(m))
	x0 := InitialLevel(cmd)
	dyn, err := rig.Plant.newDynamics(x0, h)
	if err != nil {
		return Record{}, fmt.Errorf("simulate: %w", err)
	}
	s := sim{
		rig: rig, dyn: dyn, h: h, m: m,
		ctl:   controller{pid: rig.Controller, T: 1 / fs, first: true},
		enc:   newEncoder(rig.Encoder),
		delay: int(math.Round(rig.Loop.Delay / h)),
		x0:    x0,
	}
	rec := Record{
		T: make([]float64, n), Command: make([]float64, n),
		Position: make([]float64, n), Effort: make([]float64, n),
	}
	for k := 0; k < n; k++ {
		s.sample(k, n, cmd, &rec)
	}
	return rec, nil
}

// sim is one simulation run's state.
type sim struct {
	rig   Rig
	dyn   dynamics
	ctl   controller
	enc   encoder
	h     float64
	m     int
	delay int      // loop delay in fine steps
	queue []queued // computed efforts waiting to take effect, in order
	u     float64  // effort applied now
	x0    float64  // the command's initial level
}

// queued is an effort that takes effect at fine step at.
type queued struct {
	at int
	u  float64
}

// sample runs sample period k: read, compute, queue, then integrate to the
// next sample (not after the last one).
func (s *sim) sample(k, n int, cmd Profile, rec *Record) {
	fs := s.rig.Loop.SampleRate
	tk := float64(k) / fs
	y := s.enc.read(s.dyn.position())
	r := cmd.At(tk)
	out := r - s.x0
	if !s.rig.Loop.OpenLoop {
		out = s.ctl.update(r - y)
	}
	s.queue = append(s.queue, queued{at: k*s.m + s.delay, u: out})
	rec.T[k], rec.Command[k], rec.Position[k] = tk, r, y
	for j := 0; j < s.m; j++ {
		idx := k*s.m + j
		s.apply(idx)
		if j == 0 {
			rec.Effort[k] = s.u
		}
		if k == n-1 {
			return
		}
		s.dyn.step(float64(idx)/(fs*float64(s.m)), s.h, s.u)
	}
}

// apply takes every queued effort due at fine step idx, clamped.
func (s *sim) apply(idx int) {
	i := 0
	for ; i < len(s.queue) && s.queue[i].at <= idx; i++ {
		s.u = s.queue[i].u
	}
	if i > 0 {
		s.queue = append(s.queue[:0], s.queue[i:]...)
		if lim := s.rig.Loop.EffortLimit; lim > 0 {
			s.u = math.Max(-lim, math.Min(lim, s.u))
		}
	}
}

// controller is the PID's state between samples.
type controller struct {
	pid          PID
	T            float64
	first        bool
	integ, deriv float64
	prevErr      float64
}

func (c *controller) update(e float64) float64 {
	if c.first {
		c.prevErr, c.first = e, false
	}
	p := c.pid
	c.integ += p.Ki * c.T * e
	tf := p.DerivativeFilter
	c.deriv = tf/(tf+c.T)*c.deriv + p.Kd/(tf+c.T)*(e-c.prevErr)
	c.prevErr = e
	return p.Kp*e + c.integ + c.deriv
}

// encoder turns the true position into a reading.
type encoder struct {
	Encoder
	rng *rand.Rand
}

func newEncoder(e Encoder) encoder {
	return encoder{Encoder: e, rng: rand.New(rand.NewPCG(e.Seed, 0x9e3779b97f4a7c15))}
}

func (e encoder) read(x float64) float64 {
	if e.NoiseSD > 0 {
		x += e.NoiseSD * e.rng.NormFloat64()
	}
	if e.Count > 0 {
		x = e.Count * math.Round(x/e.Count)
	}
	return x
}
