package model

import (
	"errors"
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// poly is a polynomial in s, coefficients highest power first.
type poly []float64

// trim drops leading zero coefficients, keeping at least one.
func (p poly) trim() poly {
	i := 0
	for i < len(p)-1 && p[i] == 0 {
		i++
	}
	return p[i:]
}

// degree is the degree after trimming; −1 for the zero polynomial.
func (p poly) degree() int {
	q := p.trim()
	if len(q) == 0 || (len(q) == 1 && q[0] == 0) {
		return -1
	}
	return len(q) - 1
}

func polyAdd(a, b poly) poly {
	n := max(len(a), len(b))
	out := make(poly, n)
	for i, c := range a {
		out[n-len(a)+i] += c
	}
	for i, c := range b {
		out[n-len(b)+i] += c
	}
	return out.trim()
}

func polyMul(a, b poly) poly {
	if len(a) == 0 || len(b) == 0 {
		return poly{0}
	}
	out := make(poly, len(a)+len(b)-1)
	for i, x := range a {
		for j, y := range b {
			out[i+j] += x * y
		}
	}
	return out.trim()
}

func (p poly) scale(k float64) poly {
	out := make(poly, len(p))
	for i, c := range p {
		out[i] = k * c
	}
	return out
}

// roots returns the zeros of p as the eigenvalues of its companion matrix,
// sorted by decreasing real part, then decreasing imaginary part.
func (p poly) roots() ([]complex128, error) {
	q := p.trim()
	n := len(q) - 1
	if n < 1 {
		return nil, nil
	}
	if q[0] == 0 {
		return nil, errors.New("zero polynomial has no roots")
	}
	c := mat.NewDense(n, n, nil)
	for j := 0; j < n; j++ {
		c.Set(0, j, -q[j+1]/q[0])
	}
	for i := 1; i < n; i++ {
		c.Set(i, i-1, 1)
	}
	var e mat.Eigen
	if !e.Factorize(c, mat.EigenNone) {
		return nil, errors.New("eigenvalue iteration of the companion matrix did not converge")
	}
	r := e.Values(nil)
	sortRoots(r)
	return r, nil
}

func sortRoots(r []complex128) {
	sort.SliceStable(r, func(i, j int) bool {
		if real(r[i]) != real(r[j]) {
			return real(r[i]) > real(r[j])
		}
		return imag(r[i]) > imag(r[j])
	})
}

// finite reports whether every coefficient is a finite number.
func (p poly) finite() bool {
	for _, c := range p {
		if math.IsNaN(c) || math.IsInf(c, 0) {
			return false
		}
	}
	return true
}
