package metrics

import (
	"strings"
	"testing"
)

// TestTimeGap checks the rule that a step whose record has a gap longer
// than 10 median sample periods is not measured (stepgate's choice; common
// practice, no source), on the Ogata Example 5-1 loop (K. Ogata, Modern
// Control Engineering, 5th ed., ζ = 0.6, ωn = 5 rad/s; references.md §2)
// sampled every 1 ms: samples removed from inside the step, just before the
// step instant and in the pre-step window, and a jittered clock.
func TestTimeGap(t *testing.T) {
	ogata := underdamped(0.6, 5)
	base := rig{dt: dt, f: ogata}.record([]segment{{0.5, 0}, {3, 25}})
	step := FindSteps(base, 1)[0]
	cases := []struct {
		name     string
		from, to int    // samples from..to-1 are removed (step.Start-relative)
		why      string // substring of the reason; "" when measured
	}{
		{"no gap", 0, 0, ""},
		{"9 periods inside the step", 100, 108, ""},
		{"11 periods inside the step", 100, 110, "time gap of 0.011 s at 0.61 s (no sample between 0.599 s and 0.61 s), 11× the median sample period of 0.001 s"},
		{"250 periods inside the step", 1000, 1249, "time gap of 0.25 s at 1.749 s"},
		{"gap ending at the step instant", -20, 0, "time gap of 0.021 s at 0.5 s"},
		{"gap in the pre-step window only", -300, -200, ""},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			tr := Trace{}
			for i := range base.Time {
				if k := i - step.Start; k >= c.from && k < c.to {
					continue
				}
				tr.Time = append(tr.Time, base.Time[i])
				tr.Command = append(tr.Command, base.Command[i])
				tr.Response = append(tr.Response, base.Response[i])
			}
			m := MeasureStep(tr, FindSteps(tr, 1)[0], DefaultOptions())
			if c.why == "" {
				if !m.SettlingTime.OK || !m.RiseTime.OK {
					t.Fatalf("not measured: %s / %s", m.SettlingTime.Why, m.RiseTime.Why)
				}
				return
			}
			for _, n := range Names {
				v, _ := m.Get(n)
				if n == StepSize {
					if !v.OK {
						t.Errorf("step size unknown: %s", v.Why)
					}
					continue
				}
				if v.OK || !strings.Contains(v.Why, c.why) {
					t.Errorf("%s = %+v, want unknown with %q", n, v, c.why)
				}
			}
			if !m.LastOutside.OK {
				t.Errorf("last outside unknown: %s", m.LastOutside.Why)
			}
		})
	}
	// A clock jittered by ±40 % of its period has no gap (the worst interval
	// is 1.4/0.6 = 2.3 times the shortest): the step is measured.
	jit := rig{dt: dt, f: ogata, jitter: 0.4, seed: 3}.record([]segment{{0.5, 0}, {3, 25}})
	if m := MeasureStep(jit, FindSteps(jit, 1)[0], DefaultOptions()); !m.SettlingTime.OK {
		t.Errorf("jittered clock: %s", m.SettlingTime.Why)
	}
}
