package model

import (
	"errors"
	"math"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/stepgate/stepgate/metrics"
)

// refPlant is the plant backed out of a gain-1 test with G = 1, ζ = 0.6,
// ωn = 14.5 rad/s: 210.25/(s² + 17.4 s) (references §4).
func refPlant() *TransferFunc {
	return &TransferFunc{Numerator: []float64{210.25}, Denominator: []float64{1, 17.4, 0}}
}

func measureFirst(t *testing.T, tr metrics.Trace, size float64) metrics.StepMetrics {
	t.Helper()
	ms := metrics.Measure(tr, math.Abs(size)/2, metrics.DefaultOptions())
	if len(ms) != 1 {
		t.Fatalf("metrics found %d steps in the prediction, want 1", len(ms))
	}
	return ms[0]
}

func TestPredictWithoutRealisationIsIdeal(t *testing.T) {
	s := mustBuild(t, Config{Plant: refPlant(), PlantDeadTime: 0.004, Controller: Controller{Kp: 1}})
	p, err := s.Predict(0, 2, 1, 1e-3)
	if err != nil {
		t.Fatal(err)
	}
	if p.RealisedDiffers || !slices.Equal(p.Ideal.Response, p.Realised.Response) || !slices.Equal(p.Ideal.Effort, p.Realised.Effort) {
		t.Error("without loop or actuator sections the realised prediction must equal the ideal one")
	}
	if &p.Ideal.Response[0] == &p.Realised.Response[0] {
		t.Error("realised trace shares memory with the ideal one")
	}
}

// Sampling and loop delay add phase lag, which lowers the phase margin and
// raises the overshoot (common practice, no source). The direction is
// checked on the metrics package's measurement of both predictions.
func TestRealisedSamplingAndDelayRaiseOvershoot(t *testing.T) {
	s := mustBuild(t, Config{Plant: refPlant(), Controller: Controller{Kp: 1},
		Loop: &Loop{SamplePeriod: 0.002, Delay: 0.003}})
	p, err := s.Predict(0, 1, 1.5, 1e-3)
	if err != nil {
		t.Fatal(err)
	}
	id, re := measureFirst(t, p.Ideal, 1), measureFirst(t, p.Realised, 1)
	if !id.Overshoot.OK || !re.Overshoot.OK {
		t.Fatalf("overshoot unknown: ideal %+v realised %+v", id.Overshoot, re.Overshoot)
	}
	// ζ = 0.6 ideal: 9.48 % (Ogata 5th ed. §5-3, references §2); the sampled
	// peak is within 0.01 percentage points of it at 1 ms output.
	if math.Abs(id.Overshoot.V-9.478) > 0.01 {
		t.Errorf("ideal overshoot %.4f %%, want 9.478 %%", id.Overshoot.V)
	}
	if !(re.Overshoot.V > id.Overshoot.V+1) {
		t.Errorf("realised overshoot %.3f %% not above ideal %.3f %%", re.Overshoot.V, id.Overshoot.V)
	}
}

// The drive's effort never exceeds the limit, and a large step drives it
// there.
func TestRealisedSaturation(t *testing.T) {
	s := mustBuild(t, Config{Plant: refPlant(), Controller: Controller{Kp: 1},
		Loop: &Loop{SamplePeriod: 1e-3}, Actuator: &Actuator{EffortLimit: 0.5}})
	tr, err := s.Simulate(Realised, 0, 2, 2, 1e-3)
	if err != nil {
		t.Fatal(err)
	}
	peak := 0.0
	for _, u := range tr.Effort {
		peak = math.Max(peak, math.Abs(u))
	}
	if peak > 0.5 || peak < 0.5 {
		t.Errorf("largest |effort| %v, want exactly the limit 0.5", peak)
	}
	// Unlimited, the same step asks for kp·2 = 2 at the step instant.
	id, err := s.Simulate(Ideal, 0, 2, 2, 1e-3)
	if err != nil {
		t.Fatal(err)
	}
	if m := slices.Max(id.Effort); m != 2 {
		t.Errorf("ideal peak effort %v, want 2", m)
	}
}

// With a deadband db the integrating plant stops where the effort kp·e falls
// inside the band, so a type-1 P loop keeps a steady-state error
// |e| ≤ db/kp (derived here: at rest the plant's motion input
// u − sign(u)·db must be 0, which needs |kp·e| ≤ db). Without the deadband
// the error vanishes.
func TestRealisedDeadbandSteadyStateError(t *testing.T) {
	const kp, db = 0.36, 0.05
	for _, tc := range []struct {
		name string
		act  *Actuator
		max  float64
	}{
		{"deadband", &Actuator{Deadband: db}, db / kp},
		{"no deadband", nil, 1e-9},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s := mustBuild(t, Config{Plant: refPlant(), Controller: Controller{Kp: kp},
				Loop: &Loop{SamplePeriod: 1e-3, Delay: 1e-3}, Actuator: tc.act})
			tr, err := s.Simulate(Realised, 0, 1, 4, 1e-3)
			if err != nil {
				t.Fatal(err)
			}
			e := math.Abs(1 - tr.Response[len(tr.Response)-1])
			if e > tc.max {
				t.Errorf("steady-state error %.6g, want ≤ %.6g", e, tc.max)
			}
			if tc.act != nil && e < 0.1*tc.max {
				t.Errorf("steady-state error %.6g: the deadband had no visible effect", e)
			}
		})
	}
}

// Without a loop section the realised loop's controller is continuous and is
// simulated as sampled at 0.1 % of the fastest time constant; with a limit
// it never reaches, it must reproduce the exact ideal response closely
// (the error of a held input is of the order of ω·h).
func TestRealisedContinuousStandIn(t *testing.T) {
	s := mustBuild(t, Config{Plant: refPlant(), Controller: Controller{Kp: 1}, Actuator: &Actuator{EffortLimit: 100}})
	p, err := s.Predict(0, 1, 1, 1e-3)
	if err != nil {
		t.Fatal(err)
	}
	worst := 0.0
	for i := range p.Ideal.Response {
		worst = math.Max(worst, math.Abs(p.Ideal.Response[i]-p.Realised.Response[i]))
	}
	if worst > 2e-3 {
		t.Errorf("finely sampled stand-in departs from the ideal loop by %.3g", worst)
	}
}

// An open-loop unstable plant 1/(s − 1) is stabilised by kp = 3 (closed loop
// 3/(s + 2), G = 1.5), but holding the step at 1 needs the effort
// kp·(1 − 1.5) = −1.5; a limit of 1 cannot supply it, and the response runs
// away (ẏ = y + u ≥ y − 1 > 0 for y > 1; derived here). The linear check
// passes, so the simulation itself must stop at the divergence bound.
func TestRealisedDivergenceIsReported(t *testing.T) {
	s := mustBuild(t, Config{Plant: &TransferFunc{Numerator: []float64{1}, Denominator: []float64{1, -1}},
		Controller: Controller{Kp: 3}, Loop: &Loop{SamplePeriod: 1e-3}, Actuator: &Actuator{EffortLimit: 1}})
	start := time.Now()
	_, err := s.Simulate(Realised, 0, 1, 60, 1e-3)
	if el := time.Since(start); el > 5*time.Second {
		t.Errorf("took %v", el)
	}
	var ue *UnstableError
	if !errors.As(err, &ue) || ue.Kind != Realised || ue.Poles != nil {
		t.Fatalf("err = %v, want a divergence *UnstableError", err)
	}
	// The ideal loop has no limit and settles at G = 1.5.
	tr, err := s.Simulate(Ideal, 0, 1, 12, 1e-3)
	if err != nil {
		t.Fatal(err)
	}
	if last := tr.Response[len(tr.Response)-1]; math.Abs(last-1.5) > 1e-6 {
		t.Errorf("ideal settles at %v, want 1.5", last)
	}
}

// A high gain with a long loop delay is unstable in the realised loop while
// the ideal loop (any gain is stable on K/(s(s + a))) is not: the realised
// simulation reports the discrete poles at once.
func TestRealisedDelayInstability(t *testing.T) {
	s := mustBuild(t, Config{Plant: refPlant(), Controller: Controller{Kp: 20},
		Loop: &Loop{SamplePeriod: 1e-3, Delay: 0.02}})
	if _, err := s.Simulate(Ideal, 0, 1, 1, 1e-3); err != nil {
		t.Fatalf("ideal: %v", err)
	}
	_, err := s.Simulate(Realised, 0, 1, 1, 1e-3)
	var ue *UnstableError
	if !errors.As(err, &ue) || len(ue.Poles) == 0 {
		t.Fatalf("err = %v, want an *UnstableError with poles", err)
	}
	for _, z := range ue.Poles {
		if cmplxAbs(z) < 1 {
			t.Errorf("reported pole %v is inside the unit circle", z)
		}
	}
}

func TestSimulateRejectsBadArguments(t *testing.T) {
	s := mustBuild(t, Config{Plant: refPlant(), Controller: Controller{Kp: 1}})
	for _, a := range [][4]float64{{0, 1, 0, 1e-3}, {0, 1, 1, 0}, {math.NaN(), 1, 1, 1e-3}, {0, 1, 1e9, 1e-3}} {
		if _, err := s.Simulate(Ideal, a[0], a[1], a[2], a[3]); err == nil {
			t.Errorf("Simulate%v accepted", a)
		}
	}
}

func BenchmarkPredictRealisedOneStep(b *testing.B) {
	s, err := Build(Config{Plant: refPlant(), PlantDeadTime: 0.0015, Controller: Controller{Kp: 1},
		Loop: &Loop{SamplePeriod: 1e-3, Delay: 0.0025}, Actuator: &Actuator{EffortLimit: 2, Deadband: 0.01}})
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := s.Simulate(Realised, 0, 1, 1, 1e-3); err != nil {
			b.Fatal(err)
		}
	}
}

// A loop delay beyond the pole check's reach (here 800 sample periods) is
// still reported when it makes the loop unstable: the simulated error grows.
// The plant 48.4/(s(s + 19.8)) under kp = 4.5 crosses over near 9 rad/s;
// 0.8 s of delay there is several radians of lag, far more than the loop's
// phase margin, so it oscillates with growing amplitude (Nyquist criterion;
// hand derivation, common practice, no source). With kp = 0.02 the crossover
// is near 0.05 rad/s and 0.04 rad of lag leaves the loop stable.
func TestRealisedLongDelayInstability(t *testing.T) {
	plant := &TransferFunc{Numerator: []float64{48.4}, Denominator: []float64{1, 19.8, 0}}
	cases := []struct {
		kp       float64
		unstable bool
	}{
		{4.5, true},
		{0.02, false},
	}
	for _, c := range cases {
		s := mustBuild(t, Config{Plant: plant, Controller: Controller{Kp: c.kp}, Loop: &Loop{SamplePeriod: 1e-3, Delay: 0.8}})
		_, err := s.Simulate(Realised, 0, 10, 6, 1e-3)
		var ue *UnstableError
		if got := errors.As(err, &ue); got != c.unstable {
			t.Errorf("kp %v: err = %v, want unstable %v", c.kp, err, c.unstable)
		}
		if c.unstable && ue != nil && !strings.Contains(ue.Error(), "grows") {
			t.Errorf("kp %v: %v does not say the error grows", c.kp, ue)
		}
	}
}
