package metrics

import "testing"

// BenchmarkMeasureStep measures one 6000-sample step (6 s at 1 kHz) of the
// Ogata Example 5-1 loop with noise and quantisation, after a 0.5 s hold.
func BenchmarkMeasureStep(b *testing.B) {
	tr := rig{dt: dt, f: underdamped(0.6, 5), noise: 0.02, quant: 0.01, seed: 1}.record([]segment{{0.5, 0}, {5.999, 25}})
	s := FindSteps(tr, 1)[0]
	if n := s.End - s.Start; n != 6000 {
		b.Fatalf("step has %d samples, want 6000", n)
	}
	o := DefaultOptions()
	b.ReportAllocs()
	for b.Loop() {
		m := MeasureStep(tr, s, o)
		if !m.SettlingTime.OK {
			b.Fatal(m.SettlingTime.Why)
		}
	}
}
