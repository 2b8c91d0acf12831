package rigsim

import (
	"math"
	"testing"
)

// still is a rig whose true position never moves (an open loop with a
// constant command), so its log shows the encoder alone.
func still(enc Encoder) Rig {
	return Rig{
		Plant:   TransferFunc{Num: []float64{1}, Den: []float64{0.01, 1}},
		Loop:    Loop{SampleRate: 1000, FineSteps: 1, OpenLoop: true},
		Encoder: enc,
	}
}

func sampleStats(x []float64) (mean, sd float64) {
	for _, v := range x {
		mean += v
	}
	mean /= float64(len(x))
	for _, v := range x {
		sd += (v - mean) * (v - mean)
	}
	return mean, math.Sqrt(sd / float64(len(x)-1))
}

// The encoder's noise has the stated standard deviation and zero mean; with
// a quantiser of step q fed a noise of σ ≥ q the reading's variance is
// σ² + q²/12 (B. Widrow's quantisation noise model, references.md §5). With
// 100,000 samples the standard error of a standard deviation is 0.22 %, so
// 1.5 % is a tolerance of about seven standard errors.
func TestEncoderNoiseStandardDeviation(t *testing.T) {
	cases := []struct {
		name   string
		enc    Encoder
		level  float64
		wantSD float64
	}{
		{"noise only", Encoder{NoiseSD: 0.01, Seed: 1}, 0, 0.01},
		{"noise only, offset level", Encoder{NoiseSD: 0.002, Seed: 2}, 3.5, 0.002},
		{"noise and count (Widrow)", Encoder{NoiseSD: 0.01, Count: 0.01, Seed: 3}, 0, 0.01 * math.Sqrt(1+1.0/12)},
		{"noise and coarse count (Widrow)", Encoder{NoiseSD: 0.01, Count: 0.02, Seed: 4}, 0.004, math.Sqrt(0.01*0.01 + 0.02*0.02/12)},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rec, err := Simulate(still(c.enc), Step{Time: 1e9, From: c.level, To: c.level}, 100)
			if err != nil {
				t.Fatal(err)
			}
			mean, sd := sampleStats(rec.Position)
			if math.Abs(sd/c.wantSD-1) > 0.015 {
				t.Errorf("standard deviation %.5g, want %.5g ± 1.5 %%", sd, c.wantSD)
			}
			if se := c.wantSD / math.Sqrt(float64(rec.Len())); math.Abs(mean-c.level) > 5*se {
				t.Errorf("mean %.6g, want %g within 5 standard errors (%.2g)", mean, c.level, 5*se)
			}
		})
	}
}

// Quantisation puts every reading on the grid of the count (a uniform
// quantiser of step q, references.md §5), also when noise is added before
// it, and a move reads within q/2 of the true position.
func TestEncoderQuantisationOnGrid(t *testing.T) {
	for _, q := range []float64{0.001, 0.005, 1.0 / 4096} {
		rig := pLoop(0.7, 20)
		rig.Loop.SampleRate = 1000
		rig.Encoder = Encoder{Count: q, NoiseSD: q / 3, Seed: 9}
		rec, err := Simulate(rig, Step{Time: 0.01, To: 0.37}, 1)
		if err != nil {
			t.Fatal(err)
		}
		for k, y := range rec.Position {
			if c := y / q; math.Abs(c-math.Round(c)) > 1e-9 {
				t.Fatalf("q=%g: reading %.12g at sample %d is not a whole number of counts (%.9g)", q, y, k, c)
			}
		}
		if n := rec.Len() - 1; math.Abs(rec.Position[n]-0.37) > q/2+4*q/3 {
			t.Errorf("q=%g: final reading %g, want 0.37 within q/2 plus the noise", q, rec.Position[n])
		}
	}
}

// Equal seeds give equal records; different seeds different noise.
func TestEncoderSeedDeterministic(t *testing.T) {
	run := func(seed uint64) Record {
		rig := pLoop(0.7, 20)
		rig.Loop.SampleRate = 1000
		rig.Encoder = Encoder{NoiseSD: 1e-3, Seed: seed}
		rec, err := Simulate(rig, Step{Time: 0.01, To: 1}, 0.5)
		if err != nil {
			t.Fatal(err)
		}
		return rec
	}
	a, b, c := run(5), run(5), run(6)
	same, differ := true, false
	for k := range a.Position {
		same = same && a.Position[k] == b.Position[k] && a.Effort[k] == b.Effort[k]
		differ = differ || a.Position[k] != c.Position[k]
	}
	if !same {
		t.Error("two runs with seed 5 differ")
	}
	if !differ {
		t.Error("seeds 5 and 6 give the same noise")
	}
}
