package model

import (
	"math"
	"math/rand/v2"
	"testing"
)

// closedStep is the unit-step response of ωn²/(s² + 2ζωn s + ωn²) from the
// published closed forms: underdamped (Ogata 5th ed. §5-3, references §2),
// critically damped 1 − e^(−ωn t)(1 + ωn t) (references §2) and overdamped
// (overdampedStep).
func closedStep(zeta, wn, t float64) float64 {
	switch {
	case t <= 0:
		return 0
	case zeta < 1:
		return secondOrderStep(1, zeta, wn, t)
	case zeta == 1:
		return 1 - math.Exp(-wn*t)*(1+wn*t)
	}
	return overdampedStep(zeta, wn, t)
}

// simpsonMean is the mean of f over [a, b] by the composite Simpson rule on
// 2m panels (error O(h⁴); any numerical-analysis text, e.g. R. L. Burden
// and J. D. Faires, Numerical Analysis, §4.4; from memory).
func simpsonMean(f func(float64) float64, a, b float64, m int) float64 {
	h := (b - a) / float64(2*m)
	s := f(a) + f(b)
	for i := 1; i < 2*m; i++ {
		w := 2.0
		if i%2 == 1 {
			w = 4
		}
		s += w * f(a+float64(i)*h)
	}
	return s * h / 3 / (b - a)
}

var kernelCases = []struct{ zeta, wn float64 }{
	{0.05, 40}, {0.45, 22}, {0.999999, 3}, {1, 25}, {1.000001, 2}, {1.6, 30}, {12, 5},
}

// Stepping the kernel by its addition formulas, C(a+b) = C(a)C(b) −
// q·S(a)S(b) and S(a+b) = S(a)C(b) + C(a)S(b) (for q > 0 those of cos and
// sin, for q < 0 of cosh and sinh: M. Abramowitz and I. A. Stegun, Handbook
// of Mathematical Functions, 4.3.16–17 and 4.5.24–25; from memory), and
// their derivative in q, agrees with the direct evaluation over 3,000
// steps, and the unit step built from it with the published closed forms.
func TestKernelStepsMatchDirect(t *testing.T) {
	for _, tc := range kernelCases {
		sigma, q := tc.zeta*tc.wn, tc.wn*tc.wn*(1-tc.zeta*tc.zeta)
		const n = 3000
		dt := 10 / tc.wn / n
		st := newKstep(sigma, q, dt)
		k := kernelAt(sigma, q, dt)
		var sqMax float64
		for i := 1; i <= n; i++ {
			sqMax = math.Max(sqMax, math.Abs(kernelAt(sigma, q, float64(i)*dt).sq))
		}
		for i := 1; i <= n; i++ {
			tau := float64(i) * dt
			if i > 1 {
				k = st.next(k, tau)
			}
			d := kernelAt(sigma, q, tau)
			if math.Abs(k.c-d.c) > 1e-11 || math.Abs(tc.wn*(k.s-d.s)) > 1e-11 || math.Abs(k.sq-d.sq) > 1e-9*sqMax {
				t.Fatalf("ζ=%v ωn=%v step %d: stepped %+v, direct %+v", tc.zeta, tc.wn, i, k, d)
			}
			if got, want := 1-k.c-sigma*k.s, closedStep(tc.zeta, tc.wn, tau); math.Abs(got-want) > 1e-9 {
				t.Fatalf("ζ=%v ωn=%v t=%v: stepped unit step %v, closed form %v", tc.zeta, tc.wn, tau, got, want)
			}
		}
	}
}

// The bins' model is the mean of the unit step over each bin:
// ∫₀^τ s = τ − 2ζ·s/ωn − s′/ωn², from integrating
// s″ + 2ζωn s′ + ωn² s = ωn² from rest (derived here). Checked against
// Simpson means of the closed forms, on a uniform record (fine and coarse
// bins) and on an irregular one.
func TestBinMeansMatchQuadrature(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, uniform := range []bool{true, false} {
		var ts []float64
		for i := -100; i <= 1500; i++ {
			tm := float64(i) * 1e-3
			if !uniform && i != 0 {
				tm += 3e-4 * (rng.Float64() - 0.5)
			}
			ts = append(ts, tm)
		}
		ys := make([]float64, len(ts))
		for _, tc := range kernelCases {
			f := new(stepFit)
			f.reset(ts, ys, 100, 400, 1)
			if f.uniform != uniform {
				t.Fatalf("record taken as uniform=%v", f.uniform)
			}
			th := 0.0042
			f.eval(tc.zeta, tc.wn, th)
			for j := range f.x {
				a, b := f.edge[j], f.edge[j+1]
				want := simpsonMean(func(u float64) float64 { return closedStep(tc.zeta, tc.wn, u-th) }, a, b, 200)
				if a < th && th < b { // the kink at θ: integrate the two parts
					want = simpsonMean(func(u float64) float64 { return closedStep(tc.zeta, tc.wn, u-th) }, th, b, 200) * (b - th) / (b - a)
				}
				if math.Abs(f.x[j]-want) > 1e-9 {
					t.Fatalf("uniform=%v ζ=%v ωn=%v bin %d [%v, %v]: mean %v, quadrature %v", uniform, tc.zeta, tc.wn, j, a, b, f.x[j], want)
				}
			}
		}
	}
}

// noisyWindow is a fitted window of an invented record: 100 samples before
// the step, 1,200 after, response 1.5 + 4·s(t − θ) plus seeded Gaussian
// noise of standard deviation sd.
func noisyWindow(zeta, wn, th, sd float64) (ts, ys []float64) {
	rng := rand.New(rand.NewPCG(11, 12))
	for i := -100; i < 1200; i++ {
		tm := float64(i) * 1e-3
		ts = append(ts, tm)
		ys = append(ys, 1.5+4*closedStep(zeta, wn, tm-th)+sd*rng.NormFloat64())
	}
	return ts, ys
}

// The search's gradient is the derivative of its objective: against
// central differences (step 10⁻⁶ relative; error O(h²)) at a point away
// from the minimum. At the parameters of a record without noise the
// residual is only the bins' midpoint-rule error, below dt²·max|s″|/24 per
// bin with |s″| ≤ ωn²·(1 + a few %) (midpoint rule error, Burden and
// Faires §4.3; from memory), so the Gauss–Newton matrix is the objective's
// Hessian there up to that residual (Nocedal and Wright, Numerical
// Optimization, 2nd ed., §10.2): against second central differences.
func TestSearchDerivatives(t *testing.T) {
	for _, tc := range []struct{ zeta, wn, th float64 }{{0.4, 25, 0.004}, {1, 30, 0.002}, {1.7, 40, 0.006}} {
		// (θ, ln ωn, ζ) → objective.
		at := func(f *stepFit, p [3]float64) float64 { v, _, _ := f.eval(p[2], math.Exp(p[1]), p[0]); return v }

		ts, ys := noisyWindow(tc.zeta, tc.wn, tc.th, 0.02)
		f := new(stepFit)
		f.reset(ts, ys, 100, 500, 4)
		p := [3]float64{tc.th * 1.2, math.Log(tc.wn * 0.95), tc.zeta * 1.05}
		_, g, _ := f.eval(p[2], math.Exp(p[1]), p[0])
		for a := range 3 {
			h := 1e-6 * math.Max(math.Abs(p[a]), 1e-3)
			hi, lo := p, p
			hi[a] += h
			lo[a] -= h
			fd := (at(f, hi) - at(f, lo)) / (2 * h)
			if math.Abs(g[a]-fd) > 1e-5*math.Abs(fd)+1e-12 {
				t.Errorf("ζ=%v: ∂/∂p%d = %v, central difference %v", tc.zeta, a, g[a], fd)
			}
		}

		ts, ys = noisyWindow(tc.zeta, tc.wn, tc.th, 0)
		f.reset(ts, ys, 100, 500, 4)
		p = [3]float64{tc.th, math.Log(tc.wn), tc.zeta}
		v0, _, hm := f.eval(p[2], math.Exp(p[1]), p[0])
		if bound := math.Pow(1e-6*tc.wn*tc.wn/24, 2); v0 > bound {
			t.Errorf("ζ=%v: objective %v at the parameters of a noise-free record, above the midpoint-rule bound %v", tc.zeta, v0, bound)
		}
		idx := [3][3]int{{0, 1, 2}, {1, 3, 4}, {2, 4, 5}}
		for a := range 3 {
			for b := a; b < 3; b++ {
				ha, hb := 1e-4*math.Max(math.Abs(p[a]), 1e-3), 1e-4*math.Max(math.Abs(p[b]), 1e-3)
				pp, pm, mp, mm := p, p, p, p
				pp[a] += ha
				pp[b] += hb
				pm[a] += ha
				pm[b] -= hb
				mp[a] -= ha
				mp[b] += hb
				mm[a] -= ha
				mm[b] -= hb
				fd := (at(f, pp) - at(f, pm) - at(f, mp) + at(f, mm)) / (4 * ha * hb)
				scale := math.Sqrt(hm[idx[a][a]] * hm[idx[b][b]])
				if got := hm[idx[a][b]]; math.Abs(got-fd) > 1e-3*scale {
					t.Errorf("ζ=%v: Gauss–Newton (%d,%d) = %v, second difference %v", tc.zeta, a, b, got, fd)
				}
			}
		}
	}
}

// The final residual is taken over the samples themselves: the model
// sampleFit evaluates at each sample equals the closed form there, on a
// uniform record whose instants are rounded to the microsecond (carried
// from the grid by the Taylor series) and on an irregular one (direct).
func TestSampleModelMatchesClosedForm(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 9))
	for _, uniform := range []bool{true, false} {
		var ts []float64
		for i := -50; i <= 1500; i++ {
			tm := math.Round(float64(i)*1.0003e-3*1e6) / 1e6
			if !uniform && i != 0 {
				tm = float64(i)*1e-3 + 4e-4*(rng.Float64()-0.5)
			}
			ts = append(ts, tm)
		}
		for _, tc := range kernelCases {
			ys := make([]float64, len(ts))
			for i, tm := range ts {
				ys[i] = 2 - 3*closedStep(tc.zeta, tc.wn, tm-0.0031)
			}
			f := new(stepFit)
			f.reset(ts, ys, 50, 300, -3)
			if f.uniform != uniform {
				t.Fatalf("record taken as uniform=%v", f.uniform)
			}
			rms, c0, c1 := f.sampleFit(tc.zeta, tc.wn, 0.0031)
			for i, tm := range ts {
				if want := closedStep(tc.zeta, tc.wn, tm-0.0031); math.Abs(f.xs[i]-want) > 1e-9 {
					t.Fatalf("uniform=%v ζ=%v ωn=%v t=%v: model %v, closed form %v", uniform, tc.zeta, tc.wn, tm, f.xs[i], want)
				}
			}
			if rms > 1e-8 || math.Abs(c0-2) > 1e-8 || math.Abs(c1+3) > 1e-8 {
				t.Errorf("uniform=%v ζ=%v: exact record fitted with c0 %v, c1 %v, RMS %v", uniform, tc.zeta, c0, c1, rms)
			}
		}
	}
}
