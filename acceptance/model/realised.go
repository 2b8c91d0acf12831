package model

import (
	"fmt"
	"math"

	"github.com/stepgate/stepgate/metrics"
	"gonum.org/v1/gonum/mat"
)

// maxLiftedDelay is the largest total delay, in sample periods, for which the
// realised loop's discrete poles are computed (an eigenvalue problem of about
// that order, well under a second); beyond it only a growing error in the
// simulation reveals instability (see growthCheck).
const maxLiftedDelay = 600

// realisation holds what the realised simulation needs: the sample period,
// the total delay from a controller update to the plant (loop delay plus
// plant dead time), and the controller discretised over one period.
type realisation struct {
	ts, delay float64
	// fine is true when the config has no loop section: the controller is
	// continuous and is simulated as sampled at a fine period.
	fine    bool
	phiC    []float64 // nc×nc
	gammaC  []float64 // nc
	limit   float64   // 0: none
	deadLow float64   // deadband; 0: none
}

// fineFraction sets the sample period that stands for a continuous
// controller in the realised loop: 0.1 % of the fastest time constant.
const fineFraction = 1e-3

func (s *System) realisation(dt float64) realisation {
	r := realisation{delay: s.cfg.PlantDeadTime}
	if l := s.cfg.Loop; l != nil {
		r.ts = l.SamplePeriod
		r.delay += l.Delay
	} else {
		r.fine = true
		r.ts = math.Min(dt, fineFraction/s.fastestRate())
		if k := math.Ceil(dt/r.ts - 1e-9); k > 1 {
			r.ts = dt / k // land on the output instants
		}
	}
	if a := s.cfg.Actuator; a != nil {
		r.limit, r.deadLow = a.EffortLimit, a.Deadband
	}
	c := s.controllerSS()
	r.phiC, r.gammaC = zoh(c, r.ts)
	return r
}

// drive applies the saturation to a controller output: the drive's effort.
func (r realisation) drive(u float64) float64 {
	if r.limit > 0 {
		return math.Max(-r.limit, math.Min(r.limit, u))
	}
	return u
}

// motion applies the deadband to the drive's effort: below it no motion,
// above it the excess (a continuous dead zone, u − sign(u)·deadband).
func (r realisation) motion(v float64) float64 {
	switch {
	case r.deadLow == 0:
		return v
	case v > r.deadLow:
		return v - r.deadLow
	case v < -r.deadLow:
		return v + r.deadLow
	}
	return 0
}

// realisedPoles returns the eigenvalues of the one-period map of the linear
// part of the realised loop (no saturation, no deadband). With the total
// delay D = d·T + δ, 0 ≤ δ < T, the plant holds u[k−d−1] on [kT, kT + δ)
// and u[k−d] on [kT + δ, (k+1)T); the state is the plant at kT, the
// controller, and the outputs u[k−1] … u[k−d−1] still on their way. ok is
// false when the delay spans more than maxLiftedDelay periods.
func (s *System) realisedPoles(r realisation) (poles []complex128, ok bool, err error) {
	T := r.ts
	d := int(math.Floor(r.delay/T + 1e-9))
	delta := r.delay - float64(d)*T
	if delta < 1e-9*T {
		delta = 0
	}
	if d+1 > maxLiftedDelay {
		return nil, false, nil
	}
	c, p := s.controllerSS(), s.plant
	nc, np := c.n, p.n
	nw := d + 1
	nz := np + nc + nw
	w := func(i int) int { return np + nc + i - 1 } // column of u[k−i]
	eRow := make([]float64, nz)
	for j := 0; j < np; j++ {
		eRow[j] = -p.c[j]
	}
	eRow[w(nw)] -= p.d
	uRow := make([]float64, nz)
	for j := 0; j < nc; j++ {
		uRow[np+j] = c.c[j]
	}
	for j := range uRow {
		uRow[j] += c.d * eRow[j]
	}
	phi1, gam1 := zoh(p, delta)
	phi2, gam2 := zoh(p, T-delta)
	m := mat.NewDense(nz, nz, nil)
	// plant: x' = Φ2(Φ1 x + Γ1 u[k−d−1]) + Γ2 u[k−d]
	for i := 0; i < np; i++ {
		for j := 0; j < np; j++ {
			v := 0.0
			for k := 0; k < np; k++ {
				v += phi2[i*np+k] * phi1[k*np+j]
			}
			m.Set(i, j, v)
		}
		g := 0.0
		for k := 0; k < np; k++ {
			g += phi2[i*np+k] * gam1[k]
		}
		m.Set(i, w(nw), m.At(i, w(nw))+g)
		if d >= 1 {
			m.Set(i, w(d), m.At(i, w(d))+gam2[i])
		} else {
			for j := 0; j < nz; j++ {
				m.Set(i, j, m.At(i, j)+gam2[i]*uRow[j])
			}
		}
	}
	// controller: xc' = Φc xc + Γc e
	for i := 0; i < nc; i++ {
		for j := 0; j < nc; j++ {
			m.Set(np+i, np+j, r.phiC[i*nc+j])
		}
		for j := 0; j < nz; j++ {
			m.Set(np+i, j, m.At(np+i, j)+r.gammaC[i]*eRow[j])
		}
	}
	// outputs on their way: u[k] enters, the others shift
	for j := 0; j < nz; j++ {
		m.Set(w(1), j, uRow[j])
	}
	for i := 2; i <= nw; i++ {
		m.Set(w(i), w(i-1), 1)
	}
	var e mat.Eigen
	if !e.Factorize(m, mat.EigenNone) {
		return nil, false, fmt.Errorf("eigenvalues of the realised loop's %d×%d period map did not converge", nz, nz)
	}
	poles = e.Values(nil)
	sortRoots(poles)
	return poles, true, nil
}

func (s *System) checkRealisedStable(r realisation) error {
	_, err := s.checkRealisedPoles(r)
	return err
}

// checkRealisedPoles is checkRealisedStable that also says whether the poles
// could be checked at all (not for a delay beyond maxLiftedDelay periods).
func (s *System) checkRealisedPoles(r realisation) (checked bool, err error) {
	poles, ok, err := s.realisedPoles(r)
	if err != nil || !ok {
		return false, err
	}
	var bad []complex128
	for _, z := range poles {
		if cmplxAbs(z) >= 1-stableMargin {
			bad = append(bad, z)
		}
	}
	if len(bad) > 0 {
		what := "sampled"
		if r.fine {
			what = "finely sampled stand-in for the continuous"
		}
		return true, &UnstableError{Kind: Realised, Kp: s.Kp(), Poles: bad,
			Detail: fmt.Sprintf("discrete poles with |z| ≥ 1 of the linear part of the %s loop, period %ss, total delay %ss", what, fmtNum(r.ts), fmtNum(r.delay))}
	}
	return true, nil
}

// growthCheck is the stability evidence used when the poles cannot be
// checked: the error from the command over the last quarter of the
// simulated record must not exceed that over the quarter before it (by more
// than 5 %, and 1 % of the step). A growing error means a growing
// oscillation or a runaway, whatever the record's length.
func (s *System) growthCheck(tr metrics.Trace, nPre int, from, to float64, r realisation) error {
	post := tr.Response[nPre:]
	n := len(post)
	if n < 8 {
		return nil
	}
	peak := func(y []float64) float64 {
		m := 0.0
		for _, v := range y {
			m = math.Max(m, math.Abs(v-to))
		}
		return m
	}
	a, b := peak(post[n/2:3*n/4]), peak(post[3*n/4:])
	if b > 1.05*a && b > 0.01*math.Abs(to-from) {
		return &UnstableError{Kind: Realised, Kp: s.Kp(), Detail: fmt.Sprintf(
			"the simulated error grows from %s to %s over the last half of the record; the delay of %ss is %s sample periods, too long for the pole check",
			fmtNum(a), fmtNum(b), fmtNum(r.delay), fmtNum(r.delay/r.ts))}
	}
	return nil
}

// simulateRealised steps the realised loop from event to event: controller
// samples at k·T (the first at the step instant), outputs reaching the plant
// at k·T + D (D = loop delay + plant dead time) and output instants. Between
// events the plant input is constant, so zero-order-hold stepping over each
// gap is exact. At one instant the controller samples before any output
// changes the plant input, and the trace records the values after it.
func (s *System) simulateRealised(from, to, dt float64, nPre int, tr metrics.Trace) (err error) {
	r := s.realisation(dt)
	checked, err := s.checkRealisedPoles(r)
	if err != nil {
		return err
	}
	if !checked {
		defer func() {
			if err == nil {
				err = s.growthCheck(tr, nPre, from, to, r)
			}
		}()
	}
	cl, err := s.closedLoop()
	if err != nil {
		return err
	}
	x0, err := cl.equilibrium(from)
	if err != nil {
		return err
	}
	p, nc := cl.plant, cl.ctrl.n
	duration := tr.Time[len(tr.Time)-1]
	if ev := duration/r.ts*2 + float64(len(tr.Time)); ev > maxEvents {
		return fmt.Errorf("realised simulation of %v s at sample period %v s needs %.0f events, more than %d", duration, r.ts, ev, maxEvents)
	}
	xc := append([]float64(nil), x0[:nc]...)
	xp := append([]float64(nil), x0[nc:]...)
	u0 := dot(cl.ku, x0) + cl.kur*from
	v := r.drive(u0)
	fillPre(tr, nPre, p.output(xp, r.motion(v)), v)
	return s.runRealised(cl, &r, xc, xp, v, from, to, dt, nPre, tr)
}

// runRealised steps the realised loop from the state (xc, xp) and the
// drive output v at the step instant through three kinds of event in time
// order: the controller's samples every r.ts, the arrival of each sampled
// output at the drive r.delay later, and the record's output instants,
// where it writes the response and the effort of tr from sample nPre on.
// The plant moves between events under a held input.
func (s *System) runRealised(cl *closedLoop, r *realisation, xc, xp []float64, v, from, to, dt float64, nPre int, tr metrics.Trace) error {
	c, p := cl.ctrl, cl.plant
	nc, np := c.n, p.n
	duration := tr.Time[len(tr.Time)-1]
	veff := r.motion(v)
	m := np + 1
	prop := newPropagator(m, zohBlock(p), 1e-9*math.Min(r.ts, dt))
	z := make([]float64, m)
	nextP := make([]float64, np)
	nextC := make([]float64, nc)
	queue := make([]float64, 0, int(duration/r.ts)+2)
	tol := 1e-9 * math.Min(r.ts, dt)
	kS, jA, i := 0, 0, nPre
	t := 0.0
	for i < len(tr.Time) {
		tS := float64(kS) * r.ts
		tO := tr.Time[i]
		tA := math.Inf(1)
		if jA < len(queue) {
			tA = float64(jA)*r.ts + r.delay
		}
		tn := math.Min(tS, math.Min(tO, tA))
		if h := tn - t; h > 0 {
			copy(z, xp)
			z[np] = veff
			apply(prop.at(h), m, z, nextP)
			copy(xp, nextP)
			t = tn
		}
		if tS <= t+tol {
			y := p.output(xp, veff)
			if err := diverged(Realised, s.Kp(), t, y, from, to); err != nil {
				return err
			}
			e := to - y
			queue = append(queue, c.output(xc, e))
			for a := 0; a < nc; a++ {
				nextC[a] = r.gammaC[a]*e + dot(r.phiC[a*nc:(a+1)*nc], xc)
			}
			copy(xc, nextC)
			kS++
		}
		for jA < len(queue) && float64(jA)*r.ts+r.delay <= t+tol {
			v = r.drive(queue[jA])
			veff = r.motion(v)
			jA++
		}
		if tO <= t+tol {
			y := p.output(xp, veff)
			if err := diverged(Realised, s.Kp(), t, y, from, to); err != nil {
				return err
			}
			tr.Response[i] = y
			tr.Effort[i] = v
			i++
		}
	}
	return nil
}
