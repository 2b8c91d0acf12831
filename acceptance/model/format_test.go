package model

import (
	"strings"
	"testing"
)

func TestTransferFuncString(t *testing.T) {
	for _, tc := range []struct {
		num, den []float64
		want     string
	}{
		{[]float64{200}, []float64{1, 20, 0}, "200 / (s^2 + 20 s)"},
		{[]float64{2, 3}, []float64{1, 0, 1}, "(2 s + 3) / (s^2 + 1)"},
		{[]float64{0, -5}, []float64{2, -1}, "-5 / (2 s - 1)"},
		{[]float64{1, 0}, []float64{1}, "s"},
		{[]float64{0.5}, []float64{1, 0.25, -3, 0}, "0.5 / (s^3 + 0.25 s^2 - 3 s)"},
	} {
		if got := (TransferFunc{Numerator: tc.num, Denominator: tc.den}).String(); got != tc.want {
			t.Errorf("%v/%v: %q, want %q", tc.num, tc.den, got, tc.want)
		}
	}
}

func TestMessages(t *testing.T) {
	e := &UnstableError{Kind: Ideal, Kp: 6.1, Poles: []complex128{complex(0.0081, 1.42), complex(0.0081, -1.42)}, Detail: "poles of 1 + C·H in the closed right half plane"}
	if got, want := e.Error(), "ideal closed loop is unstable at kp=6.1: poles 0.0081±1.42i (poles of 1 + C·H in the closed right half plane)"; got != want {
		t.Errorf("%q, want %q", got, want)
	}
	if got := DampingTarget(0.7).String(); got != "damping 0.7" {
		t.Errorf("%q", got)
	}
	if got := OvershootTarget(5).String(); got != "overshoot 5 %" {
		t.Errorf("%q", got)
	}
	if Ideal.String() != "ideal" || Realised.String() != "realised" {
		t.Error("kind names")
	}
	_, err := Build(Config{ReferenceTest: &ReferenceTest{Gain: 1, StaticGain: 1, Damping: -0.2, NaturalFrequency: 20}, Controller: Controller{Kp: 1}})
	if err == nil || !strings.HasPrefix(err.Error(), "model.reference_test.damping: ") || !strings.Contains(err.Error(), "-0.2") {
		t.Errorf("error %v does not name the key and the value", err)
	}
}
