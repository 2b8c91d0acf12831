package model

import (
	"fmt"
	"math/cmplx"
	"strconv"
	"strings"
)

// FieldError reports an invalid value in the model section of a spec. Key is
// the full YAML path of the offending key (for example
// "model.reference_test.damping") so that the message alone tells the user
// what to change. The spec loader adds the file name and line.
type FieldError struct {
	Key string // YAML path of the key, e.g. "model.controller.kd"
	Msg string // what is wrong and what is accepted
}

// Error returns "KEY: MSG".
func (e *FieldError) Error() string { return e.Key + ": " + e.Msg }

func fieldErr(key, format string, args ...any) error {
	return &FieldError{Key: key, Msg: fmt.Sprintf(format, args...)}
}

// UnstableError reports a closed loop that cannot be simulated to a steady
// state: a pole in the closed right half plane (ideal loop), a discrete pole
// on or outside the unit circle (linear part of the realised loop), or a
// simulated response that grew beyond bounds.
type UnstableError struct {
	Kind   Kind         // which loop: Ideal or Realised
	Kp     float64      // proportional gain of the loop
	Poles  []complex128 // offending poles (s-plane for Ideal, z-plane for Realised); nil for divergence
	Detail string       // how the instability was found
}

// Error returns "closed loop is unstable at kp=…: …".
func (e *UnstableError) Error() string {
	var b strings.Builder
	fmt.Fprintf(&b, "%s closed loop is unstable at kp=%s", e.Kind, fmtNum(e.Kp))
	if len(e.Poles) > 0 {
		b.WriteString(": poles ")
		b.WriteString(fmtPoles(e.Poles))
	}
	if e.Detail != "" {
		b.WriteString(" (")
		b.WriteString(e.Detail)
		b.WriteString(")")
	}
	return b.String()
}

// fmtNum writes a number with up to 6 significant digits.
func fmtNum(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) }

// fmtPoles writes poles as "-3, 0.5±2i", conjugate pairs merged.
func fmtPoles(p []complex128) string {
	var parts []string
	for i := 0; i < len(p); i++ {
		z := p[i]
		if imag(z) == 0 {
			parts = append(parts, fmtNum(real(z)))
			continue
		}
		if i+1 < len(p) && cmplx.Abs(p[i+1]-cmplx.Conj(z)) <= 1e-9*(1+cmplx.Abs(z)) {
			parts = append(parts, fmtNum(real(z))+"±"+fmtNum(abs(imag(z)))+"i")
			i++
			continue
		}
		sign := "+"
		if imag(z) < 0 {
			sign = "-"
		}
		parts = append(parts, fmtNum(real(z))+sign+fmtNum(abs(imag(z)))+"i")
	}
	return strings.Join(parts, ", ")
}

func abs(v float64) float64 {
	if v < 0 {
		return -v
	}
	return v
}
