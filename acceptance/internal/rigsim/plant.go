package rigsim

import (
	"errors"
	"fmt"
	"math"
)

// Plant is the continuous process the loop drives: a Mass or a
// TransferFunc. It starts at rest at the command's value at time zero.
type Plant interface {
	// newDynamics returns the integrator state of the plant, at rest at
	// position x0, for fine steps of h seconds.
	newDynamics(x0, h float64) (dynamics, error)
}

// dynamics advances a plant one fine step with the effort held.
type dynamics interface {
	// step integrates from time t to t+h with the effort u held.
	step(t, h, u float64)
	// position returns the plant's output now.
	position() float64
}

// Mass is a moving mass (or inertia) with viscous damping, driven by the
// effort as a force:
//
//	J·ẍ + b·ẋ = kt·u − f_friction(ẋ, ·) + d(t)
//
// in any consistent units (kg, N·s/m, N per unit of effort; or kg·m²,
// N·m·s/rad, N·m per unit of effort).
type Mass struct {
	Inertia       float64 // J, > 0
	Damping       float64 // b, ≥ 0
	ForceConstant float64 // kt, force per unit of effort; 0 means 1
	Friction      Friction
	// Disturbance is an optional external force d(t), evaluated at the
	// Runge–Kutta stage times.
	Disturbance func(t float64) float64
}

// Friction is dry friction as a force, after Karnopp's model (D. Karnopp,
// "Computer simulation of stick-slip friction in mechanical dynamic
// systems", ASME J. Dynamic Systems, Measurement, and Control 107(1),
// 1985, pp. 100–103): outside a small velocity band the friction is the
// Coulomb force opposing the motion; inside the band it balances the other
// forces on the mass up to the breakaway (static) force, so a mass whose
// applied force stays within the breakaway force stays stuck.
//
// The simulator adds the usual hybrid reset to Karnopp's band: at the end
// of a fine step whose velocity lies in the band or has changed sign, and
// whose applied force is within the breakaway force, the velocity is set
// to exactly zero (the mass is at rest; no creep inside the band).
type Friction struct {
	Coulomb float64 // kinetic friction force, ≥ 0
	Static  float64 // breakaway force; below Coulomb it is taken as Coulomb
	// StickVelocity is the half-width of Karnopp's velocity band. Zero
	// means the velocity change one fine step of the larger friction force
	// causes: h·max(Static, Coulomb)/J.
	StickVelocity float64
}

func (f Friction) active() bool { return f.Coulomb > 0 || f.Static > 0 }

func (f Friction) breakaway() float64 { return math.Max(f.Static, f.Coulomb) }

// Validate reports the first parameter that makes the mass unusable.
func (m Mass) Validate() error {
	switch {
	case !(m.Inertia > 0) || math.IsInf(m.Inertia, 0):
		return fmt.Errorf("mass: inertia %g must be positive and finite", m.Inertia)
	case !(m.Damping >= 0) || math.IsInf(m.Damping, 0):
		return fmt.Errorf("mass: damping %g must be zero or positive and finite", m.Damping)
	case math.IsNaN(m.ForceConstant) || math.IsInf(m.ForceConstant, 0):
		return fmt.Errorf("mass: force constant %g must be finite", m.ForceConstant)
	case !(m.Friction.Coulomb >= 0) || !(m.Friction.Static >= 0) || !(m.Friction.StickVelocity >= 0):
		return fmt.Errorf("mass: friction forces and stick velocity (%g, %g, %g) must be zero or positive",
			m.Friction.Coulomb, m.Friction.Static, m.Friction.StickVelocity)
	}
	return nil
}

func (m Mass) newDynamics(x0, h float64) (dynamics, error) {
	if err := m.Validate(); err != nil {
		return nil, err
	}
	s := &massState{
		m: m, x: x0, kt: m.ForceConstant, b: m.Damping, invJ: 1 / m.Inertia,
		fric: m.Friction.active(), fc: m.Friction.Coulomb, fs: m.Friction.breakaway(),
	}
	if s.kt == 0 {
		s.kt = 1
	}
	s.dv = m.Friction.StickVelocity
	if s.dv == 0 {
		s.dv = h * s.fs / m.Inertia
	}
	return s, nil
}

// massState is the integrator state of a Mass: position and velocity,
// with the parameters unpacked for the inner loop.
type massState struct {
	m      Mass
	kt, b  float64 // force constant in use, damping
	invJ   float64 // 1/J
	fric   bool    // friction present
	fc, fs float64 // Coulomb and breakaway forces
	dv     float64 // Karnopp band half-width
	x, v   float64
}

func (s *massState) position() float64 { return s.x }

// applied is the force on the mass other than friction and damping.
func (s *massState) applied(t, u float64) float64 {
	f := s.kt * u
	if s.m.Disturbance != nil {
		f += s.m.Disturbance(t)
	}
	return f
}

// accel is ẍ at time t for velocity v and effort u (Karnopp friction).
func (s *massState) accel(t, v, u float64) float64 {
	other := s.applied(t, u) - s.b*v
	if !s.fric {
		return other * s.invJ
	}
	if v < s.dv && v > -s.dv { // in the band: friction balances up to breakaway
		f := other
		if f > s.fs {
			f = s.fs
		} else if f < -s.fs {
			f = -s.fs
		}
		return (other - f) * s.invJ
	}
	if v > 0 {
		return (other - s.fc) * s.invJ
	}
	return (other + s.fc) * s.invJ
}

// step is one classical fourth-order Runge–Kutta step (e.g. W. H. Press et
// al., Numerical Recipes, 3rd ed., §17.1) followed by the stick reset.
func (s *massState) step(t, h, u float64) {
	x, v := s.x, s.v
	k1x, k1v := v, s.accel(t, v, u)
	v2 := v + h/2*k1v
	k2x, k2v := v2, s.accel(t+h/2, v2, u)
	v3 := v + h/2*k2v
	k3x, k3v := v3, s.accel(t+h/2, v3, u)
	v4 := v + h*k3v
	k4x, k4v := v4, s.accel(t+h, v4, u)
	s.x = x + h/6*(k1x+2*k2x+2*k3x+k4x)
	s.v = v + h/6*(k1v+2*k2v+2*k3v+k4v)
	if !s.fric {
		return
	}
	crossed := v != 0 && s.v != 0 && math.Signbit(v) != math.Signbit(s.v)
	if (math.Abs(s.v) < s.dv || crossed) && math.Abs(s.applied(t+h, u)) <= s.fs {
		s.v = 0
	}
}

// TransferFunc is a strictly proper continuous transfer function from the
// effort to the position,
//
//	G(s) = (Num[0]·s^m + … + Num[m]) / (Den[0]·s^n + … + Den[n]),  m < n,
//
// coefficients in descending powers of s. It is realised in controllable
// canonical form and integrated by the same Runge–Kutta steps as Mass.
// Friction cannot act on a transfer function; use Mass for that.
type TransferFunc struct {
	Num, Den []float64
}

// Validate reports why the transfer function cannot be simulated.
func (g TransferFunc) Validate() error {
	if len(g.Den) < 2 || g.Den[0] == 0 {
		return errors.New("transfer function: the denominator needs degree ≥ 1 and a non-zero leading coefficient")
	}
	if len(g.Num) == 0 || len(g.Num) >= len(g.Den) {
		return fmt.Errorf("transfer function: numerator degree %d must be below denominator degree %d (strictly proper)",
			len(g.Num)-1, len(g.Den)-1)
	}
	for i, c := range append(append([]float64{}, g.Num...), g.Den...) {
		if math.IsNaN(c) || math.IsInf(c, 0) {
			return fmt.Errorf("transfer function: coefficient %d is %g", i, c)
		}
	}
	return nil
}

func (g TransferFunc) newDynamics(x0, h float64) (dynamics, error) {
	if err := g.Validate(); err != nil {
		return nil, err
	}
	n := len(g.Den) - 1
	s := &tfState{
		a: make([]float64, n), c: make([]float64, n), y0: x0,
		x: make([]float64, n), tmp: make([]float64, n),
	}
	lead := g.Den[0]
	for i := 0; i < n; i++ {
		s.a[i] = g.Den[n-i] / lead // a[i] multiplies x[i] = y^(i)
	}
	m := len(g.Num) - 1
	for i := 0; i <= m; i++ {
		s.c[i] = g.Num[m-i] / lead
	}
	for i := range s.k {
		s.k[i] = make([]float64, n)
	}
	return s, nil
}

// tfState is the controllable canonical state: ẋ[i] = x[i+1],
// ẋ[n−1] = u − Σ a[i]·x[i], y = y0 + Σ c[i]·x[i].
type tfState struct {
	a, c   []float64
	y0     float64
	x, tmp []float64
	k      [4][]float64
}

func (s *tfState) position() float64 {
	y := s.y0
	for i, ci := range s.c {
		y += ci * s.x[i]
	}
	return y
}

func (s *tfState) deriv(dst, x []float64, u float64) {
	n := len(x)
	acc := u
	for i := 0; i < n; i++ {
		acc -= s.a[i] * x[i]
		if i < n-1 {
			dst[i] = x[i+1]
		}
	}
	dst[n-1] = acc
}

func (s *tfState) step(_, h, u float64) {
	stage := func(dst []float64, prev []float64, f float64) {
		for i := range s.tmp {
			s.tmp[i] = s.x[i] + f*prev[i]
		}
		s.deriv(dst, s.tmp, u)
	}
	s.deriv(s.k[0], s.x, u)
	stage(s.k[1], s.k[0], h/2)
	stage(s.k[2], s.k[1], h/2)
	stage(s.k[3], s.k[2], h)
	for i := range s.x {
		s.x[i] += h / 6 * (s.k[0][i] + 2*s.k[1][i] + 2*s.k[2][i] + s.k[3][i])
	}
}
