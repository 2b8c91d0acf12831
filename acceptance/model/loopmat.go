package model

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/mat"
)

// controllerSS realises the parallel PID with filtered derivative directly:
// an integrator state (when ki ≠ 0) and a filter state (when kd ≠ 0),
// ẋi = e, ẋd = −ωf·xd + e, u = kp·e + ki·xi + kd·ωf·(e − ωf·xd), since
// kd·ωf·s/(s + ωf) = kd·ωf − kd·ωf²/(s + ωf).
func (s *System) controllerSS() stateSpace {
	k := s.cfg.Controller
	var diag, out []float64
	d := k.Kp
	if k.Ki != 0 {
		diag = append(diag, 0)
		out = append(out, k.Ki)
	}
	if k.Kd != 0 {
		wf := 2 * math.Pi * k.DerivativeFilterHz
		diag = append(diag, -wf)
		out = append(out, -k.Kd*wf*wf)
		d += k.Kd * wf
	}
	n := len(diag)
	ss := stateSpace{n: n, a: make([]float64, n*n), b: make([]float64, n), c: out, d: d}
	for i := range diag {
		ss.a[i*n+i] = diag[i]
		ss.b[i] = 1
	}
	if ss.c == nil {
		ss.c = []float64{}
	}
	return ss
}

// closedLoop is the ideal delay-free loop in state space, state
// x = [controller; plant], input r: ẋ = A x + B r, u = Ku·x + ku·r,
// y = Ky·x + ky·r.
type closedLoop struct {
	ctrl, plant stateSpace
	n           int
	a, b        []float64
	ku, ky      []float64
	kur, kyr    float64
}

func (s *System) closedLoop() (*closedLoop, error) {
	c, p := s.controllerSS(), s.plant
	den := 1 + c.d*p.d
	if math.Abs(den) < 1e-12 {
		return nil, errors.New("the loop is ill-posed: 1 + kp_direct·plant_direct = 0, the effort is undefined")
	}
	g := 1 / den
	nc, np := c.n, p.n
	n := nc + np
	cl := &closedLoop{ctrl: c, plant: p, n: n, a: make([]float64, n*n), b: make([]float64, n),
		ku: make([]float64, n), ky: make([]float64, n)}
	for i := 0; i < nc; i++ {
		cl.ku[i] = g * c.c[i]
	}
	for i := 0; i < np; i++ {
		cl.ku[nc+i] = -g * c.d * p.c[i]
	}
	cl.kur = g * c.d
	for i := 0; i < n; i++ {
		cl.ky[i] = p.d * cl.ku[i]
	}
	for i := 0; i < np; i++ {
		cl.ky[nc+i] += p.c[i]
	}
	cl.kyr = p.d * cl.kur
	// e = r − y
	for i := 0; i < nc; i++ {
		row := cl.a[i*n : (i+1)*n]
		copy(row[:nc], c.a[i*nc:(i+1)*nc])
		for j := 0; j < n; j++ {
			row[j] -= c.b[i] * cl.ky[j]
		}
		cl.b[i] = c.b[i] * (1 - cl.kyr)
	}
	for i := 0; i < np; i++ {
		row := cl.a[(nc+i)*n : (nc+i+1)*n]
		copy(row[nc:], p.a[i*np:(i+1)*np])
		for j := 0; j < n; j++ {
			row[j] += p.b[i] * cl.ku[j]
		}
		cl.b[nc+i] = p.b[i] * cl.kur
	}
	return cl, nil
}

// equilibrium returns the state at rest with the command held at r:
// A x + B r = 0.
func (cl *closedLoop) equilibrium(r float64) ([]float64, error) {
	x := make([]float64, cl.n)
	if r == 0 || cl.n == 0 {
		return x, nil
	}
	a := mat.NewDense(cl.n, cl.n, append([]float64(nil), cl.a...))
	rhs := mat.NewVecDense(cl.n, nil)
	for i := range cl.b {
		rhs.SetVec(i, -cl.b[i]*r)
	}
	var sol mat.VecDense
	if err := sol.SolveVec(a, rhs); err != nil {
		return nil, errors.New("the loop has no rest state at the initial command (a closed-loop pole at s = 0)")
	}
	for i := range x {
		x[i] = sol.AtVec(i)
	}
	return x, nil
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i, v := range a {
		s += v * b[i]
	}
	return s
}

// fastestRate returns the largest pole magnitude of the plant, the
// controller and the delay-free closed loop (rad/s), at least 1e-9.
func (s *System) fastestRate() float64 {
	w := 1e-9
	for _, p := range []poly{s.den} {
		if r, err := p.roots(); err == nil {
			for _, z := range r {
				w = math.Max(w, cmplxAbs(z))
			}
		}
	}
	if s.cfg.Controller.Kd != 0 {
		w = math.Max(w, 2*math.Pi*s.cfg.Controller.DerivativeFilterHz)
	}
	if r, err := s.Poles(); err == nil {
		for _, z := range r {
			w = math.Max(w, cmplxAbs(z))
		}
	}
	return w
}
