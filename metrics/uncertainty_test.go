package metrics

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// uCase is a simulated step record: a closed-form response sampled at dt,
// with Gaussian noise of standard deviation sigma and an encoder of count q
// whose grid sits at a random offset for each unit. The loop's static gain
// is 0.99158, so the steady-state error is 0.84 % of the step, well away
// from zero where |error| would fold its distribution; on the 0.05 encoder
// the final level then sits p = 0.79 of a count off the initial level's
// grid, where the two levels' quantisation errors (sawtooths of the grid
// offset) are uncorrelated: their correlation is 1 − 6p(1 − p) ≈ 0.
type uCase struct {
	name     string
	f        unitResponse
	dt       float64
	sigma, q float64
	step     float64
}

// realise samples one unit: 0.5 s at rest, then a step of c.step held for
// 3 s. The noise and the encoder offset come from seed.
func (c uCase) realise(seed uint64) Trace {
	rng := rand.New(rand.NewPCG(seed, 0x0a11))
	offset := rng.Float64() * c.q
	var tr Trace
	n := int(math.Round(3.5 / c.dt))
	for k := 0; k <= n; k++ {
		t := float64(k) * c.dt
		cmd, y := 0.0, 0.0
		if t >= 0.5-1e-12 {
			cmd = c.step
			y = 0.99158 * c.step * c.f(t-0.5)
		}
		y += c.sigma * rng.NormFloat64()
		if c.q > 0 {
			y = c.q*math.Round((y-offset)/c.q) + offset
		}
		tr.Time = append(tr.Time, t)
		tr.Command = append(tr.Command, cmd)
		tr.Response = append(tr.Response, y)
	}
	return tr
}

// TestUncertaintyAgreesWithSpread checks MeasureUncertainty against the
// definition of a standard uncertainty: the standard deviation of the
// values the measurement would take over repeated measurements of the same
// response (JCGM 100:2008, GUM §2.3.1 and §4.2.2 for a Type A evaluation;
// §5.1.2 for the propagation through the crossing slopes; JCGM 101:2008
// §7 for the Monte Carlo evaluations). For each simulated record the
// reported standard uncertainty u = U/2 (k = 2, GUM §6.3.3), averaged over
// the realisations, must agree within 20 % with the spread of the metric
// over 300 realisations of noise and encoder offset of the same
// closed-form response (K. Ogata, Modern Control Engineering, 5th ed.,
// §5-3, eq. 5-10; references.md §2). The quantiser's noise model is
// B. Widrow's, variance q²/12 (references.md §5).
func TestUncertaintyAgreesWithSpread(t *testing.T) {
	if testing.Short() {
		t.Skip("300 realisations per case")
	}
	cases := []uCase{
		{"Ogata 5-1, noise 0.02", underdamped(0.6, 5), 1e-3, 0.02, 0, 25},
		{"Ogata 5-1, noise 0.02, count 0.01", underdamped(0.6, 5), 1e-3, 0.02, 0.01, 25},
		{"Nise 4.5, noise 0.005 at 500 Hz", underdamped(0.75, 10), 2e-3, 0.005, 0, 25},
		{"Nise 4.5, count 0.05, noise 0.01", underdamped(0.75, 10), 1e-3, 0.01, 0.05, 25},
		{"critical, noise 0.01, count 0.002", critical(8), 1e-3, 0.01, 0.002, 10},
	}
	metrics := []Name{InitialValue, FinalValue, DeadTime, RiseTime, PeakValue, PeakTime, Overshoot, SettlingTime, SteadyStateError}
	const runs = 300
	o := DefaultOptions()
	var table strings.Builder
	fmt.Fprintf(&table, "\n%-36s %-20s %12s %12s %7s\n", "record", "metric", "sd (runs)", "mean U/2", "ratio")
	for _, c := range cases {
		vals := make([][]float64, len(metrics))
		us := make([]float64, len(metrics))
		for r := range runs {
			tr := c.realise(uint64(r) + 1)
			ms := Measure(tr, c.step/10, o)
			if len(ms) != 1 {
				t.Fatalf("%s run %d: %d steps found, want 1", c.name, r, len(ms))
			}
			u := MeasureUncertainty(tr, ms[0], o, UncertaintyOptions{Seed: 7})
			for k, n := range metrics {
				v, _ := ms[0].Get(n)
				U := u.Expanded(n)
				if !v.OK || !U.OK {
					t.Fatalf("%s run %d: %s = %+v, U = %+v", c.name, r, n, v, U)
				}
				vals[k] = append(vals[k], v.V)
				us[k] += U.V / CoverageFactor / runs
			}
		}
		for k, n := range metrics {
			spread := sd(vals[k])
			ratio := us[k] / spread
			fmt.Fprintf(&table, "%-36s %-20s %12.4g %12.4g %7.3f\n", c.name, n, spread, us[k], ratio)
			if spread == 0 && us[k] == 0 {
				continue
			}
			if math.Abs(ratio-1) > 0.2 {
				t.Errorf("%s, %s: reported u = %.4g, spread over %d runs = %.4g (ratio %.3f, outside 1 ± 0.2)",
					c.name, n, us[k], runs, spread, ratio)
			}
		}
	}
	t.Log(table.String())
}

// TestUncertaintyPaths checks which evaluation the agreement table
// exercises for the reference-level instants: the first-order propagation
// through the slope (GUM §5.1.2) where the noise spans less than a quarter
// of the level change between two samples, Monte Carlo (JCGM 101:2008)
// where it spans more.
func TestUncertaintyPaths(t *testing.T) {
	cases := []struct {
		c      uCase
		closed bool
	}{
		{uCase{"Nise 4.5, noise 0.005 at 500 Hz", underdamped(0.75, 10), 2e-3, 0.005, 0, 25}, true},
		{uCase{"Ogata 5-1, noise 0.02", underdamped(0.6, 5), 1e-3, 0.02, 0, 25}, false},
	}
	o := DefaultOptions()
	for _, tc := range cases {
		tr := tc.c.realise(1)
		ms := Measure(tr, 2.5, o)
		e := newUStep(tr, ms[0], o, UncertaintyOptions{})
		for _, f := range []float64{o.RiseLow, o.RiseHigh} {
			if _, ok := e.crossClosed(f, 0); ok != tc.closed {
				t.Errorf("%s, level %g: closed form used = %v, want %v", tc.c.name, f, ok, tc.closed)
			}
		}
	}
}

// TestUncertaintyNoiseFree checks a noise-free record, as a prediction is:
// the state levels are exact (u = 0) unless a resolution is stated, when a
// level held as one count is off by up to half a count, u = q/√12
// (GUM F.2.2.1); the reference-level instants keep only the linear
// interpolation's part, at most |ÿ|Δt²/8 (GUM §4.3.7), far below a sample
// period here; the peak time keeps the sample period's Δt/√12.
func TestUncertaintyNoiseFree(t *testing.T) {
	c := uCase{"Ogata 5-1, exact", underdamped(0.6, 5), 1e-3, 0, 0, 25}
	tr := c.realise(1)
	o := DefaultOptions()
	ms := Measure(tr, 2.5, o)
	for _, q := range []float64{0, 0.01} {
		u := MeasureUncertainty(tr, ms[0], o, UncertaintyOptions{Resolution: q})
		check := func(n Name, want, tol float64) {
			t.Helper()
			got := u.Standard(n)
			if !got.OK || math.Abs(got.V-want) > tol {
				t.Errorf("resolution %g, %s: u = %+v, want %g ± %g", q, n, got, want, tol)
			}
		}
		// The residue of the decay left in the window (noise below 1e-6
		// over 600 samples) adds at most 1e-6/√600 in quadrature.
		check(FinalValue, q/math.Sqrt(12), 1e-7)
		check(StepSize, 0, 0)
		if q == 0 {
			check(PeakTime, 1e-3/math.Sqrt(12), 1e-5)
			// |ÿ| ≤ 25·ωn² = 625 units/s² and the slope at 10 % is above
			// 40 units/s: the interpolation part is below 625·1e-6/8/√12/40.
			check(RiseTime, 0, 625e-6/8/math.Sqrt(12)/40*math.Sqrt2)
			check(DeadTime, 0, 1e-5)
		}
		// The last oscillation left in the final window, about 0.01 at
		// ωd = 4 rad/s, leaves 0.01·ωd²Δt² ≈ 2e-7 in a second difference.
		if u.Noise > 1e-6 || u.ResolutionFound {
			t.Errorf("resolution %g: noise %g, found %v; want below 1e-6, false", q, u.Noise, u.ResolutionFound)
		}
	}
}

// TestFindQuantum checks the count found in a record's samples.
func TestFindQuantum(t *testing.T) {
	counts := func(q float64, k ...int) []float64 {
		y := make([]float64, len(k))
		for i, v := range k {
			y[i] = float64(v) * q
		}
		return y
	}
	// Decimal values as a log holds them, read as binary floats.
	decimal := []float64{12.31, 12.32, 12.32, 12.34, 12.33, 12.31, 12.35, 12.32, 12.33, 12.34, 12.31, 12.36}
	smooth := make([]float64, 50)
	for i := range smooth {
		smooth[i] = math.Sin(float64(i) / 7)
	}
	cases := []struct {
		name string
		y    []float64
		q    float64
		ok   bool
	}{
		{"decimal 0.01", decimal, 0.01, true},
		{"counts of 0.002", counts(0.002, 0, 1, 3, 2, 5, 4, 6, 9, 7, 8, 12, 10), 0.002, true},
		{"unquantised", smooth, 0, false},
		{"too few changes", counts(0.01, 1, 1, 2, 2, 3, 3), 0, false},
		{"not multiples", []float64{0, 0.01, 0.0237, 0.04, 0.0313, 0.055, 0.0609, 0.07, 0.0917, 0.1}, 0, false},
	}
	for _, c := range cases {
		q, ok := FindQuantum(c.y)
		if ok != c.ok || q != c.q {
			t.Errorf("%s: FindQuantum = %v, %v; want %v, %v", c.name, q, ok, c.q, c.ok)
		}
	}
}

// TestUncertaintyDeterministic checks that the Monte Carlo evaluations give
// the same numbers for the same record and seed.
func TestUncertaintyDeterministic(t *testing.T) {
	c := uCase{"Ogata 5-1, noise 0.02", underdamped(0.6, 5), 1e-3, 0.02, 0.01, 25}
	tr := c.realise(3)
	o := DefaultOptions()
	ms := Measure(tr, 2.5, o)
	a := MeasureUncertainty(tr, ms[0], o, UncertaintyOptions{Seed: 1})
	b := MeasureUncertainty(tr, ms[0], o, UncertaintyOptions{Seed: 1})
	if a != b {
		t.Errorf("two evaluations differ:\n%+v\n%+v", a, b)
	}
}

// TestUncertaintyUnknown checks that a metric that was not measured has no
// uncertainty, with the reason.
func TestUncertaintyUnknown(t *testing.T) {
	c := uCase{"short", underdamped(0.6, 5), 1e-3, 0.02, 0, 25}
	tr := c.realise(1)
	cut := Trace{Time: tr.Time[:800], Command: tr.Command[:800], Response: tr.Response[:800]}
	o := DefaultOptions()
	ms := Measure(cut, 2.5, o)
	u := MeasureUncertainty(cut, ms[0], o, UncertaintyOptions{})
	got := u.Expanded(SettlingTime)
	if got.OK || !strings.HasPrefix(got.Why, "metric not measured: ") {
		t.Errorf("settling time of a record cut short: U = %+v, want unknown with the reason", got)
	}
	if v := u.Expanded(StepSize); !v.OK || v.V != 0 {
		t.Errorf("step size: U = %+v, want 0", v)
	}
}

func BenchmarkMeasureUncertainty(b *testing.B) {
	c := uCase{"Ogata 5-1, noise 0.02", underdamped(0.6, 5), 1e-3, 0.02, 0.01, 25}
	tr := c.realise(1)
	o := DefaultOptions()
	ms := Measure(tr, 2.5, o)
	b.ReportAllocs()
	for b.Loop() {
		MeasureUncertainty(tr, ms[0], o, UncertaintyOptions{})
	}
}
