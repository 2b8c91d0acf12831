package model

import (
	"fmt"
	"strings"
)

// String writes the function in powers of s, for example
// "210.25 / (s^2 + 17.4 s)". Coefficients keep up to 6 significant digits.
func (f TransferFunc) String() string {
	num := polyString(poly(f.Numerator).trim())
	den := polyString(poly(f.Denominator).trim())
	if strings.ContainsAny(num, "+-") && len(poly(f.Numerator).trim()) > 1 {
		num = "(" + num + ")"
	}
	if den == "1" {
		return num
	}
	return num + " / (" + den + ")"
}

func polyString(p poly) string {
	var b strings.Builder
	n := len(p) - 1
	for i, c := range p {
		if c == 0 {
			continue
		}
		k := n - i
		mag := abs(c)
		switch {
		case b.Len() == 0 && c < 0:
			b.WriteString("-")
		case b.Len() > 0 && c < 0:
			b.WriteString(" - ")
		case b.Len() > 0:
			b.WriteString(" + ")
		}
		if mag != 1 || k == 0 {
			b.WriteString(fmtNum(mag))
			if k > 0 {
				b.WriteString(" ")
			}
		}
		switch {
		case k == 1:
			b.WriteString("s")
		case k > 1:
			fmt.Fprintf(&b, "s^%d", k)
		}
	}
	if b.Len() == 0 {
		return "0"
	}
	return b.String()
}

// checkRational validates a transfer function given under key: finite
// coefficients, a non-zero numerator and denominator, and properness (the
// numerator degree at most the denominator degree).
func checkRational(key string, num, den poly) error {
	if len(den) == 0 {
		return fieldErr(key+".denominator", "is empty; give the coefficients highest power of s first, e.g. [1, 20, 0]")
	}
	if len(num) == 0 {
		return fieldErr(key+".numerator", "is empty; give the coefficients highest power of s first, e.g. [200]")
	}
	if !num.finite() {
		return fieldErr(key+".numerator", "has a coefficient that is not a finite number: %v", []float64(num))
	}
	if !den.finite() {
		return fieldErr(key+".denominator", "has a coefficient that is not a finite number: %v", []float64(den))
	}
	if den.degree() < 0 {
		return fieldErr(key+".denominator", "is the zero polynomial")
	}
	if num.degree() < 0 {
		return fieldErr(key+".numerator", "is the zero polynomial: the plant would not respond at all")
	}
	if num.degree() > den.degree() {
		return fieldErr(key, "is improper: numerator degree %d exceeds denominator degree %d; a physical plant has at least as many poles as zeros", num.degree(), den.degree())
	}
	return nil
}

// stateSpace is a single-input single-output realisation
// dx/dt = A x + B u, y = C x + D u.
type stateSpace struct {
	n    int
	a    []float64 // n×n, row-major
	b, c []float64 // length n
	d    float64
}

// realise returns the controllable canonical form of num/den (K. Ogata,
// Modern Control Engineering, 5th ed., §2-5): with den monic
// sⁿ + a₁sⁿ⁻¹ + … + aₙ, the first row of A is −a₁ … −aₙ, ones lie on the
// subdiagonal, B = e₁, and C holds the numerator of the strictly proper part.
// The transfer function must be proper (checked by checkRational).
func realise(num, den poly) stateSpace {
	num, den = num.trim(), den.trim()
	n := len(den) - 1
	lead := den[0]
	a := make([]float64, n+1)
	for i := range den {
		a[i] = den[i] / lead
	}
	bq := make([]float64, n+1) // numerator padded to n+1, normalised
	for i, c := range num {
		bq[n+1-len(num)+i] = c / lead
	}
	ss := stateSpace{n: n, a: make([]float64, n*n), b: make([]float64, n), c: make([]float64, n), d: bq[0]}
	if n == 0 {
		return ss
	}
	for j := 0; j < n; j++ {
		ss.a[j] = -a[j+1]
		ss.c[j] = bq[j+1] - bq[0]*a[j+1]
	}
	for i := 1; i < n; i++ {
		ss.a[i*n+i-1] = 1
	}
	ss.b[0] = 1
	return ss
}

// output returns C x + D u.
func (s *stateSpace) output(x []float64, u float64) float64 {
	y := s.d * u
	for i, ci := range s.c {
		y += ci * x[i]
	}
	return y
}
