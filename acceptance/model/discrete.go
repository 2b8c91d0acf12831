package model

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// propagator gives the exact transition over a step h of a linear system
// written as one augmented homogeneous system dz/dt = M z: the state x
// together with inputs that are held (ż = 0) or ramp (a slope row). Its
// transition is the matrix exponential e^(M·h); for M = [[A, B], [0, 0]] the
// top blocks are Φ = e^(A·h) and Γ = ∫₀ʰ e^(A·η) dη · B, the zero-order-hold
// discretisation (G. F. Franklin, J. D. Powell, M. L. Workman, Digital
// Control of Dynamic Systems, 3rd ed.; C. F. Van Loan, "Computing integrals
// involving the matrix exponential", IEEE Trans. Automatic Control 23(3),
// 1978). Transitions are cached by step length, quantised to quantum
// seconds, so a simulation whose events recur with a few distinct spacings
// computes a few exponentials only.
type propagator struct {
	m       int
	mm      *mat.Dense
	quantum float64
	cache   map[int64][]float64
	tmp     mat.Dense
	scaled  *mat.Dense
}

// maxCached bounds the transitions a propagator keeps; beyond it they are
// computed each time (still exact, only slower).
const maxCached = 4096

func newPropagator(m int, data []float64, quantum float64) *propagator {
	return &propagator{m: m, mm: mat.NewDense(m, m, append([]float64(nil), data...)), quantum: quantum,
		cache: make(map[int64][]float64), scaled: mat.NewDense(m, m, nil)}
}

// at returns e^(M·h) row-major. The slice is shared: do not modify it.
func (p *propagator) at(h float64) []float64 {
	key := int64(math.Round(h / p.quantum))
	if e, ok := p.cache[key]; ok {
		return e
	}
	p.scaled.Scale(h, p.mm)
	p.tmp.Exp(p.scaled)
	e := append([]float64(nil), p.tmp.RawMatrix().Data...)
	if len(p.cache) < maxCached {
		p.cache[key] = e
	}
	return e
}

// apply sets out[i] = Σⱼ E[i][j]·z[j] for the first len(out) rows of the m×m
// transition E. out and z must not overlap.
func apply(e []float64, m int, z, out []float64) {
	for i := range out {
		row := e[i*m : i*m+m]
		s := 0.0
		for j, v := range row {
			s += v * z[j]
		}
		out[i] = s
	}
}

// zohBlock returns the augmented matrix [[A, B], [0, 0]] (dimension n+1) of
// an n-state system with one held input.
func zohBlock(ss stateSpace) []float64 {
	m := ss.n + 1
	out := make([]float64, m*m)
	for i := 0; i < ss.n; i++ {
		copy(out[i*m:i*m+ss.n], ss.a[i*ss.n:(i+1)*ss.n])
		out[i*m+ss.n] = ss.b[i]
	}
	return out
}

// zoh returns Φ (n×n row-major) and Γ (n) of ss held over h.
func zoh(ss stateSpace, h float64) (phi, gamma []float64) {
	m := ss.n + 1
	e := newPropagator(m, zohBlock(ss), 1).at(h)
	phi = make([]float64, ss.n*ss.n)
	gamma = make([]float64, ss.n)
	for i := 0; i < ss.n; i++ {
		copy(phi[i*ss.n:(i+1)*ss.n], e[i*m:i*m+ss.n])
		gamma[i] = e[i*m+ss.n]
	}
	return phi, gamma
}
