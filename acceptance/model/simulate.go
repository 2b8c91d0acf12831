package model

import (
	"fmt"
	"math"

	"github.com/stepgate/stepgate/metrics"
)

// Kind selects which loop a simulation predicts.
type Kind int

// The two predictions.
const (
	// Ideal is the continuous linear loop: no sampling, no loop delay, no
	// saturation or deadband; the plant dead time is included exactly.
	Ideal Kind = iota
	// Realised is the loop as the drive runs it: sampled controller, loop
	// delay, held output, saturation and deadband, plant dead time.
	Realised
)

// String returns "ideal" or "realised", the words reports use.
func (k Kind) String() string {
	switch k {
	case Ideal:
		return "ideal"
	case Realised:
		return "realised"
	}
	return fmt.Sprintf("Kind(%d)", int(k))
}

// Limits of one simulation, to keep every call bounded in time and memory.
const (
	maxSamples = 10_000_000 // output samples per trace
	maxEvents  = 50_000_000 // integration steps per simulation
	// divergence is the factor over the step scale beyond which a response
	// counts as diverged.
	divergence = 1e6
)

// preSamples is the number of samples at the initial command that a trace
// starts with: 10 % of the step's samples, at least 10.
func preSamples(n int) int { return max(10, (n+9)/10) }

// Simulate returns the response of the loop to a command step from → to at
// t = 0, sampled every dt for duration seconds after the step. The trace
// starts with preSamples samples at the command from (negative times, the
// loop at rest), so that the metrics package finds the step and its initial
// value; Time[i] is an exact multiple of dt. Effort is the controller output
// for the ideal loop and the drive's effort (after the loop delay and the
// saturation, before the deadband and the plant dead time) for the realised
// loop.
//
// The ideal loop fails with an *UnstableError when its delay-free poles are
// not all in the open left half plane; the realised loop when the discrete
// poles of its linear part are not all inside the unit circle. Either fails
// when the simulated response grows beyond 10⁶ times the step scale
// (max(|to − from|, |from|, |to|)).
func (s *System) Simulate(kind Kind, from, to, duration, dt float64) (metrics.Trace, error) {
	if err := checkStepArgs(from, to, duration, dt); err != nil {
		return metrics.Trace{}, err
	}
	nOut := int(math.Floor(duration/dt+1e-9)) + 1
	nPre := preSamples(nOut)
	tr := metrics.Trace{
		Time: make([]float64, nPre+nOut), Command: make([]float64, nPre+nOut),
		Response: make([]float64, nPre+nOut), Effort: make([]float64, nPre+nOut),
	}
	for i := range tr.Time {
		tr.Time[i] = float64(i-nPre) * dt
		tr.Command[i] = to
		if i < nPre {
			tr.Command[i] = from
		}
	}
	var err error
	switch {
	case kind == Realised && s.Realised():
		err = s.simulateRealised(from, to, dt, nPre, tr)
	case kind == Ideal || kind == Realised:
		err = s.simulateIdeal(from, to, dt, nPre, tr)
	default:
		err = fmt.Errorf("unknown simulation kind %d", int(kind))
	}
	if err != nil {
		return metrics.Trace{}, err
	}
	return tr, nil
}

func checkStepArgs(from, to, duration, dt float64) error {
	for _, v := range []float64{from, to, duration, dt} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("step from %v to %v over %v s at %v s: every value must be finite", from, to, duration, dt)
		}
	}
	if !(duration > 0) || !(dt > 0) {
		return fmt.Errorf("step duration %v s and output period %v s must both be positive", duration, dt)
	}
	if duration/dt >= maxSamples {
		return fmt.Errorf("step duration %v s at output period %v s gives %.0f samples, more than %d", duration, dt, duration/dt, maxSamples)
	}
	return nil
}

// Prediction is the model's response to one step, ideal and realised.
type Prediction struct {
	Ideal    metrics.Trace
	Realised metrics.Trace
	// RealisedDiffers is false when the config has neither a loop nor an
	// actuator section: Realised is then a copy of Ideal.
	RealisedDiffers bool
}

// Predict simulates the step from → to for duration seconds sampled every dt,
// ideal and realised (see Simulate). Without a loop or actuator section the
// realised trace is a copy of the ideal one.
func (s *System) Predict(from, to, duration, dt float64) (Prediction, error) {
	id, err := s.Simulate(Ideal, from, to, duration, dt)
	if err != nil {
		return Prediction{}, err
	}
	p := Prediction{Ideal: id, RealisedDiffers: s.Realised()}
	if !p.RealisedDiffers {
		p.Realised = id.Clone()
		return p, nil
	}
	if p.Realised, err = s.Simulate(Realised, from, to, duration, dt); err != nil {
		return Prediction{}, err
	}
	return p, nil
}

// stepScale is the magnitude a response is compared with to detect
// divergence.
func stepScale(from, to float64) float64 {
	return math.Max(math.Abs(to-from), math.Max(math.Max(math.Abs(from), math.Abs(to)), 1e-300))
}

func diverged(kind Kind, kp, t, y, from, to float64) error {
	lim := divergence * stepScale(from, to)
	if math.IsNaN(y) || math.IsInf(y, 0) || math.Abs(y-to) > lim {
		return &UnstableError{Kind: kind, Kp: kp,
			Detail: fmt.Sprintf("the simulated response left ±%s of the command at t=%ss", fmtNum(lim), fmtNum(t))}
	}
	return nil
}

// fillPre writes the rest values before the step.
func fillPre(tr metrics.Trace, nPre int, y, u float64) {
	for i := 0; i < nPre; i++ {
		tr.Response[i] = y
		tr.Effort[i] = u
	}
}

// simulateIdeal steps the continuous loop exactly. Without a plant dead time
// the whole delay-free loop is one linear system driven by the held command,
// so zero-order-hold stepping at dt is exact at every sample. With a dead time
// θ the controller output u enters the plant θ later: the loop is stepped on
// a fine grid h = θ/N with the delayed input taken as the straight line
// between its buffered values at the grid points (first-order hold; the
// error is O(h²), and h is at most 0.1 % of the fastest time constant).
func (s *System) simulateIdeal(from, to, dt float64, nPre int, tr metrics.Trace) error {
	if err := s.checkIdealStable(); err != nil {
		return err
	}
	cl, err := s.closedLoop()
	if err != nil {
		return err
	}
	x0, err := cl.equilibrium(from)
	if err != nil {
		return err
	}
	fillPre(tr, nPre, dot(cl.ky, x0)+cl.kyr*from, dot(cl.ku, x0)+cl.kur*from)
	if s.cfg.PlantDeadTime > 0 {
		return s.simulateIdealDelayed(cl, x0, from, to, dt, nPre, tr)
	}
	n := cl.n
	m := n + 1
	aug := make([]float64, m*m)
	for i := 0; i < n; i++ {
		copy(aug[i*m:i*m+n], cl.a[i*n:(i+1)*n])
		aug[i*m+n] = cl.b[i]
	}
	e := newPropagator(m, aug, dt*1e-9).at(dt)
	z := make([]float64, m)
	copy(z, x0)
	z[n] = to
	next := make([]float64, n)
	for i := nPre; i < len(tr.Time); i++ {
		x := z[:n]
		y := dot(cl.ky, x) + cl.kyr*to
		if err := diverged(Ideal, s.Kp(), tr.Time[i], y, from, to); err != nil {
			return err
		}
		tr.Response[i] = y
		tr.Effort[i] = dot(cl.ku, x) + cl.kur*to
		apply(e, m, z, next)
		copy(z, next)
	}
	return nil
}

func (s *System) simulateIdealDelayed(cl *closedLoop, x0 []float64, from, to, dt float64, nPre int, tr metrics.Trace) error {
	c, p := cl.ctrl, cl.plant
	nc, n := c.n, cl.n
	h, nDiv, err := s.delayGrid(dt, tr.Time[len(tr.Time)-1])
	if err != nil {
		return err
	}
	// Augmented system z = [xc; xp; r; v; slope].
	m := n + 3
	prop := newPropagator(m, cl.delayedAugmented(), h*1e-9)
	eh := prop.at(h)

	u0 := dot(cl.ku, x0) + cl.kur*from
	ctrlOut := func(x []float64, v float64) float64 {
		y := p.output(x[nc:n], v)
		return c.output(x[:nc], to-y)
	}
	// Ring buffers of the controller output at grid points: left and right
	// limits (they differ where the output jumps: at the step, and where a
	// jump arrives through a plant with direct feedthrough).
	size := nDiv + 1
	uL, uR := make([]float64, size), make([]float64, size)
	at := func(buf []float64, j int) float64 {
		if j < 0 {
			return u0
		}
		return buf[j%size]
	}
	x := append([]float64(nil), x0...)
	uL[0] = u0
	uR[0] = ctrlOut(x, u0)
	z := make([]float64, m)
	next := make([]float64, n)
	j := 0 // grid index of x
	tol := 1e-9
	for i := nPre; i < len(tr.Time); i++ {
		tOut := tr.Time[i]
		for float64(j+1)*h <= tOut+tol*h {
			v0, v1 := at(uR, j-nDiv), at(uL, j-nDiv+1)
			copy(z, x)
			z[n], z[n+1], z[n+2] = to, v0, (v1-v0)/h
			apply(eh, m, z, next)
			copy(x, next)
			j++
			yL := p.output(x[nc:n], v1)
			if err := diverged(Ideal, s.Kp(), float64(j)*h, yL, from, to); err != nil {
				return err
			}
			uL[j%size] = c.output(x[:nc], to-yL)
			uR[j%size] = ctrlOut(x, at(uR, j-nDiv))
		}
		tau := tOut - float64(j)*h
		v0 := at(uR, j-nDiv)
		if tau <= tol*h {
			tr.Response[i] = p.output(x[nc:n], v0)
			tr.Effort[i] = at(uR, j)
			continue
		}
		v1 := at(uL, j-nDiv+1)
		slope := (v1 - v0) / h
		copy(z, x)
		z[n], z[n+1], z[n+2] = to, v0, slope
		apply(prop.at(tau), m, z, next)
		y := p.output(next[nc:n], v0+slope*tau)
		tr.Response[i] = y
		tr.Effort[i] = c.output(next[:nc], to-y)
	}
	return nil
}

// delayGrid picks the time step h of the ideal simulation with dead time:
// a whole number nDiv of steps per dead time, at most the sample period and
// fine against the fastest rate of the loop, and preferably one that also
// lands on the output instants. It refuses a record that would need more
// than maxEvents steps.
func (s *System) delayGrid(dt, duration float64) (h float64, nDiv int, err error) {
	theta := s.cfg.PlantDeadTime
	hmax := math.Min(math.Min(theta, dt), 0.001/s.fastestRate())
	hmax = math.Max(hmax, duration/maxEvents*4)
	nDiv = int(math.Ceil(theta/hmax - 1e-9))
	for k := nDiv; k <= 4*nDiv; k++ {
		r := dt * float64(k) / theta
		if math.Abs(r-math.Round(r)) < 1e-9*r {
			nDiv = k
			break
		}
	}
	h = theta / float64(nDiv)
	if duration/h > maxEvents {
		return 0, 0, fmt.Errorf("ideal simulation with dead time %v s would need %.0f steps, more than %d", theta, duration/h, maxEvents)
	}
	return h, nDiv, nil
}

// delayedAugmented returns the state matrix of the loop augmented for a
// delayed, piecewise-linear plant input: z = [xc; xp; r; v; slope], with the
// reference r constant, v the delayed controller output and slope its rate.
func (cl *closedLoop) delayedAugmented() []float64 {
	c, p := cl.ctrl, cl.plant
	nc, np, n := c.n, p.n, cl.n
	m := n + 3
	aug := make([]float64, m*m)
	for i := 0; i < nc; i++ {
		row := aug[i*m : (i+1)*m]
		copy(row[:nc], c.a[i*nc:(i+1)*nc])
		for j := 0; j < np; j++ {
			row[nc+j] = -c.b[i] * p.c[j]
		}
		row[n] = c.b[i]
		row[n+1] = -c.b[i] * p.d
	}
	for i := 0; i < np; i++ {
		row := aug[(nc+i)*m : (nc+i+1)*m]
		copy(row[nc:n], p.a[i*np:(i+1)*np])
		row[n+1] = p.b[i]
	}
	aug[(n+1)*m+n+2] = 1
	return aug
}
