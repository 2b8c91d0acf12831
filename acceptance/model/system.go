package model

import (
	"math"
)

// System is a validated model ready to simulate: the plant in use (given, or
// backed out of the reference test), the controller gains, and the optional
// loop and actuator sections. A System is immutable; WithGain returns a copy
// with another proportional gain. It is safe for concurrent use.
type System struct {
	cfg   Config
	num   poly // plant numerator, trimmed
	den   poly // plant denominator, trimmed
	plant stateSpace
}

// Build validates c and returns the system it describes. Exactly one of
// c.ReferenceTest and c.Plant must be set. A reference test is turned into
// the plant with the unity-feedback relation H = T/(K₀(1 − T)), which for
// T = G·ωn²/(s² + 2ζωn s + ωn²) gives
// H = G·ωn²/(K₀·(s² + 2ζωn s + (1 − G)ωn²)) (block-diagram reduction, any
// control text). Build does not reject an unstable loop: the simulation and
// Poles report it, so that a gain can still be designed for it.
//
// Errors are *FieldError values naming the offending key.
func Build(c Config) (*System, error) {
	if err := checkSections(c); err != nil {
		return nil, err
	}
	s := &System{cfg: cloneConfig(c)}
	if rt := c.ReferenceTest; rt != nil {
		wn2 := rt.NaturalFrequency * rt.NaturalFrequency
		s.num = poly{rt.StaticGain * wn2 / rt.Gain}
		s.den = poly{1, 2 * rt.Damping * rt.NaturalFrequency, (1 - rt.StaticGain) * wn2}
	} else {
		s.num = poly(c.Plant.Numerator).trim()
		s.den = poly(c.Plant.Denominator).trim()
	}
	s.num = append(poly(nil), s.num...)
	s.den = append(poly(nil), s.den...)
	s.plant = realise(s.num, s.den)
	return s, nil
}

func checkSections(c Config) error {
	switch {
	case c.ReferenceTest == nil && c.Plant == nil:
		return fieldErr("model", "needs either reference_test (a closed-loop step test at a known gain) or plant (numerator and denominator in s)")
	case c.ReferenceTest != nil && c.Plant != nil:
		return fieldErr("model", "has both reference_test and plant; give only one of them")
	}
	if rt := c.ReferenceTest; rt != nil {
		for _, f := range []struct {
			key string
			v   float64
		}{
			{"gain", rt.Gain}, {"static_gain", rt.StaticGain},
			{"damping", rt.Damping}, {"natural_frequency_rad_s", rt.NaturalFrequency},
		} {
			if !(f.v > 0) || math.IsInf(f.v, 0) {
				return fieldErr("model.reference_test."+f.key, "must be a positive finite number, got %v", f.v)
			}
		}
	}
	if c.Plant != nil {
		if err := checkRational("model.plant", poly(c.Plant.Numerator), poly(c.Plant.Denominator)); err != nil {
			return err
		}
	}
	if !nonNegative(c.PlantDeadTime) {
		return fieldErr("model.plant_dead_time_s", "must be a finite number of seconds ≥ 0, got %v", c.PlantDeadTime)
	}
	if err := checkController(c.Controller); err != nil {
		return err
	}
	if l := c.Loop; l != nil {
		if !(l.SamplePeriod > 0) || math.IsInf(l.SamplePeriod, 0) {
			return fieldErr("model.loop.sample_period_s", "must be a positive finite number of seconds, got %v", l.SamplePeriod)
		}
		if !nonNegative(l.Delay) {
			return fieldErr("model.loop.delay_s", "must be a finite number of seconds ≥ 0, got %v", l.Delay)
		}
	}
	if a := c.Actuator; a != nil {
		if !nonNegative(a.EffortLimit) {
			return fieldErr("model.actuator.effort_limit", "must be a finite number ≥ 0 (0: no limit), got %v", a.EffortLimit)
		}
		if !nonNegative(a.Deadband) {
			return fieldErr("model.actuator.deadband", "must be a finite number ≥ 0 (0: none), got %v", a.Deadband)
		}
		if a.EffortLimit > 0 && a.Deadband >= a.EffortLimit {
			return fieldErr("model.actuator.deadband", "%v is not below effort_limit %v: no effort could ever move the plant", a.Deadband, a.EffortLimit)
		}
	}
	return nil
}

func checkController(k Controller) error {
	for _, f := range []struct {
		key string
		v   float64
	}{{"kp", k.Kp}, {"ki", k.Ki}, {"kd", k.Kd}, {"derivative_filter_hz", k.DerivativeFilterHz}} {
		if !nonNegative(f.v) {
			return fieldErr("model.controller."+f.key, "must be a finite number ≥ 0, got %v", f.v)
		}
	}
	if k.Kp == 0 && k.Ki == 0 && k.Kd == 0 {
		return fieldErr("model.controller", "has kp, ki and kd all 0: there is no loop to predict")
	}
	if k.Kd > 0 && k.DerivativeFilterHz == 0 {
		return fieldErr("model.controller.derivative_filter_hz", "must be > 0 when kd is set (kd=%v): an unfiltered derivative is improper, its effort is an impulse at the step; give the drive's derivative filter corner in Hz", k.Kd)
	}
	return nil
}

func nonNegative(v float64) bool { return v >= 0 && !math.IsInf(v, 0) }

func cloneConfig(c Config) Config {
	out := c
	if c.ReferenceTest != nil {
		rt := *c.ReferenceTest
		out.ReferenceTest = &rt
	}
	if c.Plant != nil {
		out.Plant = &TransferFunc{
			Numerator:   append([]float64(nil), c.Plant.Numerator...),
			Denominator: append([]float64(nil), c.Plant.Denominator...),
		}
	}
	if c.Loop != nil {
		l := *c.Loop
		out.Loop = &l
	}
	if c.Actuator != nil {
		a := *c.Actuator
		out.Actuator = &a
	}
	return out
}

// Config returns a copy of the configuration the system was built from, with
// the proportional gain of WithGain when that was used.
func (s *System) Config() Config { return cloneConfig(s.cfg) }

// Kp returns the proportional gain of the loop.
func (s *System) Kp() float64 { return s.cfg.Controller.Kp }

// WithGain returns a copy of s with proportional gain kp; the other gains,
// the plant and the loop are unchanged. kp must be ≥ 0 and finite (the caller
// designs gains; Build validated the rest).
func (s *System) WithGain(kp float64) *System {
	out := *s
	out.cfg = cloneConfig(s.cfg)
	out.cfg.Controller.Kp = kp
	return &out
}

// Plant returns the plant transfer function in use, without its dead time:
// the one given, or the one backed out of the reference test.
func (s *System) Plant() TransferFunc {
	return TransferFunc{Numerator: append([]float64(nil), s.num...), Denominator: append([]float64(nil), s.den...)}
}

// PlantDeadTime returns the plant's transport delay in seconds.
func (s *System) PlantDeadTime() float64 { return s.cfg.PlantDeadTime }

// Realised reports whether the realised loop differs from the ideal one,
// that is whether the config has a loop or an actuator section. Without them
// the realised prediction is the ideal one. The plant dead time belongs to
// the plant and is part of both.
func (s *System) Realised() bool { return s.cfg.Loop != nil || s.cfg.Actuator != nil }

// controllerPolys returns C(s) = kp + ki/s + kd·ωf·s/(s + ωf), ωf = 2π·f, as
// numerator and denominator.
func (s *System) controllerPolys() (num, den poly) {
	k := s.cfg.Controller
	num, den = poly{k.Kp}, poly{1}
	add := func(n, d poly) {
		num = polyAdd(polyMul(num, d), polyMul(n, den))
		den = polyMul(den, d)
	}
	if k.Ki != 0 {
		add(poly{k.Ki}, poly{1, 0})
	}
	if k.Kd != 0 {
		wf := 2 * math.Pi * k.DerivativeFilterHz
		add(poly{k.Kd * wf, 0}, poly{1, wf})
	}
	return num, den
}

// Controller returns the controller transfer function
// C(s) = kp + ki/s + kd·ωf·s/(s + ωf) with ωf = 2π·derivative_filter_hz, as
// one ratio of polynomials.
func (s *System) Controller() TransferFunc {
	n, d := s.controllerPolys()
	return TransferFunc{Numerator: n, Denominator: d}
}

// characteristic returns the ideal delay-free closed-loop numerator and
// denominator: T = Nc·Nh / (Dc·Dh + Nc·Nh).
func (s *System) characteristic() (num, den poly) {
	nc, dc := s.controllerPolys()
	num = polyMul(nc, s.num)
	den = polyAdd(polyMul(dc, s.den), num)
	return num, den
}

// ClosedLoop returns the ideal closed loop without the plant dead time,
// T = C·H/(1 + C·H), numerator and denominator not reduced (a pole-zero
// cancellation between controller and plant is kept).
func (s *System) ClosedLoop() TransferFunc {
	n, d := s.characteristic()
	return TransferFunc{Numerator: n, Denominator: d}
}

// Poles returns the poles of the ideal closed loop without the plant dead
// time: the roots of the characteristic polynomial Dc·Dh + Nc·Nh, found as
// the eigenvalues of its companion matrix, sorted by decreasing real part.
func (s *System) Poles() ([]complex128, error) {
	_, d := s.characteristic()
	if d.degree() < 1 {
		return nil, nil
	}
	return d.roots()
}

// stableMargin is how far left of the imaginary axis a pole must lie,
// relative to its magnitude, to count as stable.
const stableMargin = 1e-9

// checkIdealStable returns an *UnstableError when a delay-free closed-loop
// pole has a real part ≥ −stableMargin·max(1, |p|).
func (s *System) checkIdealStable() error {
	p, err := s.Poles()
	if err != nil {
		return err
	}
	var bad []complex128
	for _, z := range p {
		if real(z) >= -stableMargin*math.Max(1, cmplxAbs(z)) {
			bad = append(bad, z)
		}
	}
	if len(bad) > 0 {
		d := "poles of 1 + C·H in the closed right half plane"
		if s.cfg.PlantDeadTime > 0 {
			d += ", without the plant dead time"
		}
		return &UnstableError{Kind: Ideal, Kp: s.Kp(), Poles: bad, Detail: d}
	}
	return nil
}

func cmplxAbs(z complex128) float64 { return math.Hypot(real(z), imag(z)) }

// SuggestedDuration returns a step duration long enough for the ideal
// delay-free loop to settle well inside the 2 % band: 10/σ, σ the smallest
// decay rate −Re(p) of the closed-loop poles (e^(−10) ≈ 5·10⁻⁵), plus ten
// times the plant dead time and, for a realised loop, ten times the loop's
// sample period plus delay. It fails when the delay-free loop is unstable.
func (s *System) SuggestedDuration() (float64, error) {
	return s.horizon(10)
}

func (s *System) horizon(decays float64) (float64, error) {
	if err := s.checkIdealStable(); err != nil {
		return 0, err
	}
	p, err := s.Poles()
	if err != nil {
		return 0, err
	}
	sigma := math.Inf(1)
	for _, z := range p {
		sigma = math.Min(sigma, -real(z))
	}
	d := 0.0
	if !math.IsInf(sigma, 1) {
		d = decays / sigma
	}
	lag := s.cfg.PlantDeadTime
	if l := s.cfg.Loop; l != nil {
		lag += l.SamplePeriod + l.Delay
	}
	d += 10 * lag
	if d == 0 {
		d = 1
	}
	return d, nil
}
