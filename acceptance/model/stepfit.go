package model

import (
	"math"
	"sync"
)

// The unit-step model s(τ) of ωn²/(s² + 2ζωn s + ωn²), evaluated by
// stepping rather than by trigonometry at every instant.
//
// With σ = ζωn and q = ωn²(1 − ζ²), let C(τ) and S(τ) be the solutions of
// C′ = −q·S, S′ = C with C(0) = 1, S(0) = 0: C = cos(√q τ),
// S = sin(√q τ)/√q for q > 0, cosh and sinh/√−q for q < 0, and C = 1, S = τ
// at q = 0, all one power series in qτ² and so continuous in ζ across 1.
// Then (K. Ogata, Modern Control Engineering, 5th ed., §5-3, for ζ < 1)
//
//	s(τ) = 1 − e^(−στ)·(C + σS),  h(τ) = s′(τ) = ωn²·e^(−στ)·S,
//
// and, integrating s″ + 2σs′ + ωn²s = ωn² from rest,
//
//	I(τ) = ∫₀^τ s = τ − 2ζ·s(τ)/ωn − e^(−στ)·S.
//
// C and S obey the addition formulas C(a+b) = C(a)C(b) − q·S(a)S(b) and
// S(a+b) = S(a)C(b) + C(a)S(b) (for q > 0 those of cos and sin), so one
// evaluation at the step Δ advances the pair by Δ with four products: the
// rotation recurrence z_k = z_(k−1)·e^((−σ+iωd)Δ) for ζ < 1 and its real
// counterpart for ζ ≥ 1. The same formulas differentiated in q advance
// ∂S/∂q, from which the derivatives in ζ follow:
//
//	∂s/∂ζ = 2ωn³·e^(−στ)·∂S/∂q,  ∂I/∂ζ = −2s/ωn − 2ζωn²·e^(−στ)·∂S/∂q + ωnτ·e^(−στ)·S,
//
// while ∂I/∂θ = −s(τ) and ∂I/∂ln ωn = τ·s(τ) − I(τ) for τ = t − θ, since
// s depends on ωn and τ only through ωnτ.

// kern holds e^(−στ)·C(τ), e^(−στ)·S(τ) and e^(−στ)·∂S/∂q(τ) at one τ > 0.
type kern struct{ c, s, sq float64 }

// kernSeries is the bound on |q|τ² below which kernelAt sums the power
// series (truncated after the (qτ²)⁵ term of C and S and the (qτ²)⁴ term
// of ∂S/∂q, a relative error below 10⁻¹⁸);
// above it the closed form loses at most about 10⁻¹⁴ of ∂S/∂q to
// cancellation.
const kernSeries = 0.01

// kernelAt evaluates the kernel at τ > 0 directly, for σ = ζωn and
// q = ωn²(1 − ζ²).
func kernelAt(sigma, q, tau float64) kern {
	m := -q * tau * tau
	if math.Abs(m) < kernSeries {
		e := math.Exp(-sigma * tau)
		c := 1 + m/2*(1+m/12*(1+m/30*(1+m/56*(1+m/90))))
		s := tau * (1 + m/6*(1+m/20*(1+m/42*(1+m/72*(1+m/110)))))
		sq := -tau * tau * tau * (1.0/6 + m*(1.0/60+m*(1.0/1680+m*(1.0/90720+m/7983360))))
		return kern{e * c, e * s, e * sq}
	}
	var k kern
	if q > 0 {
		w := math.Sqrt(q)
		sn, cs := math.Sincos(w * tau)
		e := math.Exp(-sigma * tau)
		k.c, k.s = e*cs, e*sn/w
	} else {
		// e^(−στ)·cosh(wτ) and e^(−στ)·sinh(wτ)/w without overflow (σ > w).
		w := math.Sqrt(-q)
		a, b := math.Exp((w-sigma)*tau), math.Exp(-(w+sigma)*tau)
		k.c, k.s = 0.5*(a+b), 0.5*(a-b)/w
	}
	k.sq = (tau*k.c - k.s) / (2 * q)
	return k
}

// kstep advances the kernel by a fixed step dt: a, b and bq are the kernel
// at dt, qb is q·b.
type kstep struct{ dt, a, b, qb, bq float64 }

func newKstep(sigma, q, dt float64) kstep {
	k := kernelAt(sigma, q, dt)
	return kstep{dt: dt, a: k.c, b: k.s, qb: q * k.s, bq: k.sq}
}

// next returns the kernel at tau = τ + dt from the kernel x at τ.
func (st *kstep) next(x kern, tau float64) kern {
	return kern{
		c:  st.a*x.c - st.qb*x.s,
		s:  st.b*x.c + st.a*x.s,
		sq: st.a*x.sq + st.bq*x.c - 0.5*tau*st.b*x.s,
	}
}

// next2 is next without ∂S/∂q.
func (st *kstep) next2(x kern) kern {
	return kern{c: st.a*x.c - st.qb*x.s, s: st.b*x.c + st.a*x.s}
}

// Fit layout limits.
const (
	// fitBins is the most bins the samples after the step are reduced to
	// for the search (stepgate's choice: a 1,500-sample step is fitted in
	// bins of 4 to 6 samples).
	fitBins = 320
	// uniformTol is the largest deviation of a sample instant from the
	// uniform grid, as a fraction of the sample period, for which the record
	// counts as uniformly sampled (a 1 kHz log written to the microsecond
	// is; common practice, no source).
	uniformTol = 1e-3
)

// stepFit holds the fitted window, the samples from the tail of the
// pre-step window to the end of the step, and its reduction to bins for
// the search.
//
// A bin is a run of consecutive samples; its cell reaches halfway to the
// neighbouring samples. The search compares the response's mean over the
// cell (the samples' mean, weighted by their cells) with the model's mean
// over it, (I(τ_right) − I(τ_left))/width: exact for the model, and equal
// to the samples' mean up to O(Δt²·s″) for the data, so binning costs no
// accuracy, only the little information the within-bin variation carries.
// Bins are single samples where there are few, and otherwise finer where the
// response moves than where it has settled; the pre-step samples, where the
// model is zero for every dead time tried, form one bin.
type stepFit struct {
	t, y []float64 // the window: seconds from the step instant, response

	uniform bool    // sample instants within uniformTol of t[0] + i·dt
	dt      float64 // mean sample period

	edge []float64 // bin edges, seconds from the step instant
	step []float64 // step[j], j ≥ 1: the stepping interval from edge j−1 to edge j (bitwise equal within a zone of a uniform record)
	w    []float64 // bin widths, seconds
	winv []float64 // their reciprocals
	yb   []float64 // mean response over each bin
	sw   float64   // total width
	ybar float64   // mean response over the bins
	norm float64   // 1/(sw·dy²): the search minimises a dimensionless mean square

	x, dth, dwn, dze []float64 // scratch: the bins' model and its derivatives in θ, ln ωn, ζ
	xs               []float64 // scratch: the model at the samples
	eps              []float64 // on a uniform record, t[i] − (t[0] + i·dt)
	tbuf             []float64 // storage for the caller's t
	bnd              []int     // bin boundaries, sample indices
}

// fitPool recycles the fit's buffers between calls.
var fitPool = sync.Pool{New: func() any { return new(stepFit) }}

// grow returns *b resized to n, reallocated when it is too short.
func grow(b *[]float64, n int) []float64 {
	if cap(*b) < n {
		*b = make([]float64, n)
	}
	*b = (*b)[:n]
	return *b
}

// reset lays out the bins for the window t, y, whose first nPre samples
// lie before the step and whose response moves over the first nMove samples
// after it; dy is the response change. Every buffer it keeps is written
// before it is read.
func (f *stepFit) reset(t, y []float64, nPre, nMove int, dy float64) {
	n := len(t)
	f.t, f.y = t, y
	grow(&f.xs, n)
	f.dt = (t[n-1] - t[0]) / float64(n-1)
	f.uniform = true
	eps := grow(&f.eps, n)
	for i, v := range t {
		eps[i] = v - (t[0] + float64(i)*f.dt)
		if math.Abs(eps[i]) > uniformTol*f.dt {
			f.uniform = false
			break
		}
	}

	bnd := binBounds(f.bnd[:0], n, nPre, nMove)
	f.bnd = bnd
	nb := len(bnd) - 1
	grow(&f.edge, nb+1)
	grow(&f.step, nb+1)
	for _, b := range []*[]float64{&f.w, &f.winv, &f.yb, &f.x, &f.dth, &f.dwn, &f.dze} {
		grow(b, nb)
	}
	f.step[0] = 0
	cell := f.cell
	for j, k := range bnd {
		f.edge[j] = cell(k)
		if j > 0 {
			if f.uniform {
				f.step[j] = float64(k-bnd[j-1]) * f.dt
			} else {
				f.step[j] = f.edge[j] - f.edge[j-1]
			}
		}
	}
	var sy float64
	f.sw = 0
	for j := range nb {
		a, b := bnd[j], bnd[j+1]
		f.w[j] = f.step[j+1]
		f.winv[j] = 1 / f.w[j]
		var s float64
		for i := a; i < b; i++ {
			if f.uniform {
				s += y[i]
			} else {
				s += y[i] * (cell(i+1) - cell(i))
			}
		}
		if f.uniform {
			f.yb[j] = s / float64(b-a)
		} else {
			f.yb[j] = s / f.w[j]
		}
		f.sw += f.w[j]
		sy += f.w[j] * f.yb[j]
	}
	f.ybar = sy / f.sw
	f.norm = 1 / (f.sw * dy * dy)
}

// binBounds appends to bnd the boundaries, as sample indices, of the bins
// the fit compares: the pre-step samples as one bin, fine bins over the
// move (nMove samples) and coarser ones after it, about fitBins in all.
func binBounds(bnd []int, n, nPre, nMove int) []int {
	bnd = append(bnd, 0)
	if nPre > 0 {
		bnd = append(bnd, nPre)
	}
	np := n - nPre
	mu := (np + fitBins - 1) / fitBins
	mf := min(mu, max(1, (2*nMove+fitBins-1)/fitBins))
	nf := min(np, (nMove+mf-1)/mf*mf)
	bf := nf / mf
	mc := max(mf, (np-nf+max(fitBins-bf, 1)-1)/max(fitBins-bf, 1))
	for k := nPre + mf; k <= nPre+nf; k += mf {
		bnd = append(bnd, k)
	}
	for k := nPre + nf + mc; k < n; k += mc {
		bnd = append(bnd, k)
	}
	if bnd[len(bnd)-1] != n {
		bnd = append(bnd, n)
	}
	return bnd
}

// cell returns the left boundary of sample i's cell (i = n: the right
// boundary of the last).
func (f *stepFit) cell(i int) float64 {
	t := f.t
	n := len(t)
	switch {
	case f.uniform:
		return t[0] + (float64(i)-0.5)*f.dt
	case i == 0:
		return t[0] - 0.5*(t[1]-t[0])
	case i == n:
		return t[n-1] + 0.5*(t[n-1]-t[n-2])
	}
	return 0.5 * (t[i-1] + t[i])
}

// eval returns the search's objective at (ζ, ωn, θ), the bins' mean square
// residual over dy² with the initial level and the response change solved
// for by weighted linear least squares, and its gradient in (θ, ln ωn, ζ).
// By variable projection (G. H. Golub and V. Pereyra, "The differentiation
// of pseudo-inverses and nonlinear least squares problems whose variables
// separate", SIAM J. Numer. Anal. 10(2), 1973) the gradient is that of the
// residual with the linear coefficients held at their optimum:
// −2·c1·Σ w·r·∂x/∂p. The third result is the Gauss–Newton matrix in the
// same coordinates, upper triangle by rows (θθ, θω, θζ, ωω, ωζ, ζζ). The
// objective is +Inf when the model barely varies over the window.
// binMeans fills, for (ζ, ωn, θ), each bin's mean of the model's unit step
// response (f.x) and of its derivatives in θ, ln ωn and ζ (f.dth, f.dwn,
// f.dze), integrating the response across the bin edges, and returns
// their weighted means over the bins.
func (f *stepFit) binMeans(zeta, wn, th float64) (xbar, mt, mw, mz float64) {
	sigma, wn2 := zeta*wn, wn*wn
	q := wn2 * (1 - zeta*zeta)
	kz, kw, kq := 2*zeta/wn, 2/wn, 2*zeta*wn2
	nb := len(f.w)
	x, dth, dwn, dze := f.x[:nb], f.dth[:nb], f.dwn[:nb], f.dze[:nb]
	w, winv, edge, step := f.w[:nb], f.winv[:nb], f.edge[:nb+1], f.step[:nb+1]
	var (
		k              kern
		st             kstep
		started        bool
		iP, tP, wP, zP float64 // I and its derivatives at the previous edge
		sx             float64
	)
	for j, e := range edge {
		var i, dt, dw, dz float64
		if tau := e - th; tau > 0 {
			if !started {
				k, started = kernelAt(sigma, q, tau), true
			} else {
				if d := step[j]; d != st.dt {
					st = newKstep(sigma, q, d)
				}
				k = st.next(k, tau)
			}
			u := 1 - k.c - sigma*k.s
			i = tau - kz*u - k.s
			dt = -u
			dw = tau*u - i
			dz = -kw*u - kq*k.sq + wn*tau*k.s
		}
		if j > 0 {
			v := winv[j-1]
			xj := (i - iP) * v
			tj, wj, zj := (dt-tP)*v, (dw-wP)*v, (dz-zP)*v
			x[j-1], dth[j-1], dwn[j-1], dze[j-1] = xj, tj, wj, zj
			ww := w[j-1]
			sx += ww * xj
			mt += ww * tj
			mw += ww * wj
			mz += ww * zj
		}
		iP, tP, wP, zP = i, dt, dw, dz
	}
	return sx / f.sw, mt / f.sw, mw / f.sw, mz / f.sw
}

func (f *stepFit) eval(zeta, wn, th float64) (float64, [3]float64, [6]float64) {
	xbar, mt, mw, mz := f.binMeans(zeta, wn, th)
	nb := len(f.w)
	x, dth, dwn, dze, w := f.x[:nb], f.dth[:nb], f.dwn[:nb], f.dze[:nb], f.w[:nb]
	// Centred sums, and the Gauss–Newton matrix of the projected residual
	// (L. Kaufman, "A variable projection method for solving separable
	// nonlinear least squares problems", BIT 15, 1975): 2·c1²·Σ w·d̃_p·d̃_q,
	// d̃ the derivatives with their weighted projection on the constant and
	// on the model removed.
	var sxx, sxy, bt, bw, bz float64
	var m [6]float64 // tt, tw, tz, ww, wz, zz
	yb := f.yb[:nb]
	for j, xj := range x {
		ww := w[j]
		dx := xj - xbar
		wdx := ww * dx
		sxx += wdx * dx
		sxy += wdx * (yb[j] - f.ybar)
		dt, dw, dz := dth[j]-mt, dwn[j]-mw, dze[j]-mz
		bt += wdx * dt
		bw += wdx * dw
		bz += wdx * dz
		wt, wm := ww*dt, ww*dw
		m[0] += wt * dt
		m[1] += wt * dw
		m[2] += wt * dz
		m[3] += wm * dw
		m[4] += wm * dz
		m[5] += ww * dz * dz
	}
	if !(sxx > 1e-12*f.sw) {
		return math.Inf(1), [3]float64{}, [6]float64{}
	}
	c1 := sxy / sxx
	c0 := f.ybar - c1*xbar
	var ss, gt, gw, gz float64
	for j, xj := range x {
		r := yb[j] - c0 - c1*xj
		wr := w[j] * r
		ss += wr * r
		gt += wr * dth[j]
		gw += wr * dwn[j]
		gz += wr * dze[j]
	}
	g := -2 * c1 * f.norm
	hs := 2 * c1 * c1 * f.norm
	bv := [3]float64{bt, bw, bz}
	var h [6]float64
	for n, pq := range [6][2]int{{0, 0}, {0, 1}, {0, 2}, {1, 1}, {1, 2}, {2, 2}} {
		h[n] = hs * (m[n] - bv[pq[0]]*bv[pq[1]]/sxx)
	}
	return ss * f.norm, [3]float64{g * gt, g * gw, g * gz}, h
}

// sampleFit evaluates the model at every sample of the window for
// (ζ, ωn, θ), solves for the initial level c0 and the change c1 by linear
// least squares over the samples, and returns the RMS residual over them.
// On a uniform record the model is stepped along the grid t[0] + i·dt and
// carried to each sample's own instant by its Taylor series to second order
// (the offset is below uniformTol·dt, so the remainder is below
// (ωn·10⁻³·dt)³); otherwise it is evaluated at each sample directly.
func (f *stepFit) sampleFit(zeta, wn, th float64) (rms, c0, c1 float64) {
	sigma, wn2 := zeta*wn, wn*wn
	q := wn2 * (1 - zeta*zeta)
	t, xs := f.t, f.xs[:len(f.t)]
	i := 0
	for ; i < len(t) && t[i]-th <= 0; i++ {
		xs[i] = 0
	}
	if !f.uniform {
		for ; i < len(t); i++ {
			k := kernelAt(sigma, q, t[i]-th)
			xs[i] = 1 - k.c - sigma*k.s
		}
	}
	// Before the first grid instant after θ, directly.
	for ; i < len(t); i++ {
		if t[0]+float64(i)*f.dt-th > 0 {
			break
		}
		k := kernelAt(sigma, q, t[i]-th)
		xs[i] = 1 - k.c - sigma*k.s
	}
	// Then along the grid.
	if i < len(t) {
		st := newKstep(sigma, q, f.dt)
		a, b, qb := st.a, st.b, st.qb
		k := kernelAt(sigma, q, t[0]+float64(i)*f.dt-th)
		c, s := k.c, k.s
		eps := f.eps[:len(t)]
		for ; i < len(t); i++ {
			e, u := eps[i], sigma*s
			xs[i] = 1 - c - u + e*wn2*(s+0.5*e*(c-u))
			c, s = a*c-qb*s, b*c+a*s
		}
	}
	n := float64(len(f.t))
	sx, sy := sum(f.xs), sum(f.y)
	xbar, ybar := sx/n, sy/n
	sxx, sxy := centred(f.xs, f.y, xbar, ybar)
	if !(sxx > 1e-12*n) {
		return math.Inf(1), 0, 0
	}
	c1 = sxy / sxx
	c0 = ybar - c1*xbar
	ss := sqResidual(f.xs, f.y, c0, c1)
	return math.Sqrt(ss / n), c0, c1
}

// The sums below run two or four partial sums, for speed; the order of the
// additions is fixed, so the result is deterministic.

// sum returns Σ x.
func sum(x []float64) float64 {
	var a, b, c, d float64
	i := 0
	for ; i+4 <= len(x); i += 4 {
		a += x[i]
		b += x[i+1]
		c += x[i+2]
		d += x[i+3]
	}
	for ; i < len(x); i++ {
		a += x[i]
	}
	return (a + b) + (c + d)
}

// centred returns Σ (x − xbar)² and Σ (x − xbar)(y − ybar).
func centred(x, y []float64, xbar, ybar float64) (sxx, sxy float64) {
	y = y[:len(x)]
	var a0, a1, b0, b1 float64
	i := 0
	for ; i+2 <= len(x); i += 2 {
		d0, d1 := x[i]-xbar, x[i+1]-xbar
		a0 += d0 * d0
		a1 += d1 * d1
		b0 += d0 * (y[i] - ybar)
		b1 += d1 * (y[i+1] - ybar)
	}
	for ; i < len(x); i++ {
		d := x[i] - xbar
		a0 += d * d
		b0 += d * (y[i] - ybar)
	}
	return a0 + a1, b0 + b1
}

// sqResidual returns Σ (y − c0 − c1·x)².
func sqResidual(x, y []float64, c0, c1 float64) float64 {
	y = y[:len(x)]
	var a, b, c, d float64
	i := 0
	for ; i+4 <= len(x); i += 4 {
		r0, r1 := y[i]-c0-c1*x[i], y[i+1]-c0-c1*x[i+1]
		r2, r3 := y[i+2]-c0-c1*x[i+2], y[i+3]-c0-c1*x[i+3]
		a += r0 * r0
		b += r1 * r1
		c += r2 * r2
		d += r3 * r3
	}
	for ; i < len(x); i++ {
		r := y[i] - c0 - c1*x[i]
		a += r * r
	}
	return (a + b) + (c + d)
}
