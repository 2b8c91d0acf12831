package rigsim

import (
	"errors"
	"fmt"
	"math"
)

// DefaultFineSteps is the number of Runge–Kutta steps per sample period
// when Loop.FineSteps is zero.
const DefaultFineSteps = 50

// Rig is one unit on the test rig: the plant, the sampled controller, the
// loop's timing and the drive's clamp, and the encoder.
type Rig struct {
	Plant      Plant
	Controller PID
	Loop       Loop
	Encoder    Encoder
}

// PID is a parallel-form PID controller computed once per sample period
// from the error e = command − encoder reading:
//
//	u[k] = Kp·e[k] + I[k] + D[k]
//	I[k] = I[k−1] + Ki·T·e[k]                                  (backward Euler)
//	D[k] = Tf/(Tf+T)·D[k−1] + Kd/(Tf+T)·(e[k] − e[k−1])        (backward Euler of Kd·s/(Tf·s+1))
//
// (K. J. Åström, B. Wittenmark, Computer-Controlled Systems, 3rd ed.,
// §8.3, discretisation of the PID by backward differences). The first
// sample takes e[−1] = e[0], so there is no derivative kick at time zero.
// The controller does not know the drive's clamp (no anti-windup), as with
// a drive that clamps on its own.
type PID struct {
	Kp, Ki, Kd float64
	// DerivativeFilter is the derivative filter's time constant Tf in
	// seconds; zero means an unfiltered backward difference.
	DerivativeFilter float64
}

// Loop is the sampled loop's timing and the drive's effort clamp.
type Loop struct {
	// SampleRate is the controller's and the logger's rate in Hz (rigs use
	// 100 Hz to 50 kHz).
	SampleRate float64
	// Delay is the time from an encoder reading to the effort computed
	// from it taking effect, in seconds: whole sample periods and a
	// fraction, realised to the nearest fine step.
	Delay float64
	// EffortLimit is the drive's clamp: the applied effort is kept within
	// ±EffortLimit. Zero means no clamp.
	EffortLimit float64
	// FineSteps is the number of Runge–Kutta steps per sample period;
	// zero means DefaultFineSteps.
	FineSteps int
	// OpenLoop makes the effort the command's change from its initial
	// level (no feedback), for checking the plant and the hold alone.
	OpenLoop bool
}

// Encoder is the position measurement: the true position plus Gaussian
// noise of standard deviation NoiseSD, then rounded to the nearest
// multiple of Count (a quantiser of step Count; zero means none). The
// noise is drawn from math/rand/v2's PCG seeded with Seed, so equal seeds
// give equal records.
type Encoder struct {
	Count   float64
	NoiseSD float64
	Seed    uint64
}

func (r Rig) validate() error {
	if r.Plant == nil {
		return errors.New("rig: no plant")
	}
	l := r.Loop
	switch {
	case !(l.SampleRate > 0) || math.IsInf(l.SampleRate, 0):
		return fmt.Errorf("rig: sample rate %g Hz must be positive and finite", l.SampleRate)
	case !(l.Delay >= 0) || math.IsInf(l.Delay, 0):
		return fmt.Errorf("rig: loop delay %g s must be zero or positive and finite", l.Delay)
	case !(l.EffortLimit >= 0):
		return fmt.Errorf("rig: effort limit %g must be zero (no clamp) or positive", l.EffortLimit)
	case l.FineSteps < 0:
		return fmt.Errorf("rig: %d fine steps per sample; need zero (default) or more", l.FineSteps)
	case !(r.Encoder.Count >= 0) || !(r.Encoder.NoiseSD >= 0):
		return fmt.Errorf("rig: encoder count %g and noise %g must be zero or positive", r.Encoder.Count, r.Encoder.NoiseSD)
	case !(r.Controller.DerivativeFilter >= 0):
		return fmt.Errorf("rig: derivative filter %g s must be zero or positive", r.Controller.DerivativeFilter)
	}
	for _, g := range []float64{r.Controller.Kp, r.Controller.Ki, r.Controller.Kd} {
		if math.IsNaN(g) || math.IsInf(g, 0) {
			return fmt.Errorf("rig: controller gain %g is not finite", g)
		}
	}
	return nil
}

func (l Loop) fineSteps() int {
	if l.FineSteps == 0 {
		return DefaultFineSteps
	}
	return l.FineSteps
}
