package model
import ("testing";"fmt")
func TestDumpFits(t *testing.T) {
	for _, tc := range []struct{dr, g, zeta, wn, th float64}{{10, 1, 0.45, 22, 0.004},{-8, 0.8, 0.3, 40, 0.002},{10, 0.95, 1.6, 30, 0.006},{5, 1, 1, 25, 0.003}} {
		tr, st := synthLog(7, 1e-3, 0.2, 1.0, 1.5, tc.dr, tc.g, tc.zeta, tc.wn, tc.th, 0.01, 0.01)
		got, err := Identify(tr, st, 0.55)
		fmt.Printf("%+v %v\n", got, err)
	}
}
