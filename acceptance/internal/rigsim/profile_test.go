package rigsim

import (
	"math"
	"testing"
)

// kinematics differentiates a profile numerically on a fine grid and
// returns the largest |velocity|, |acceleration| and |jerk| seen, and the
// largest jump between neighbouring samples of position and velocity
// (continuity).
func kinematics(p Profile, t0, t1, dt float64) (vmax, amax, jmax, dpos, dvel float64) {
	n := int((t1 - t0) / dt)
	x := make([]float64, n)
	for i := range x {
		x[i] = p.At(t0 + float64(i)*dt)
	}
	var prevV, prevA float64
	for i := 1; i < n; i++ {
		v := (x[i] - x[i-1]) / dt
		a := (v - prevV) / dt
		if i > 1 {
			jmax = math.Max(jmax, math.Abs(a-prevA)/dt)
			dvel = math.Max(dvel, math.Abs(v-prevV))
		}
		vmax, amax = math.Max(vmax, math.Abs(v)), math.Max(amax, math.Abs(a))
		dpos = math.Max(dpos, math.Abs(x[i]-x[i-1]))
		prevV, prevA = v, a
	}
	return
}

// Trapezoidal moves follow the constant-acceleration relations
// s = v²/(2a), t = v/a (elementary kinematics): durations and positions
// at phase boundaries from the closed form, triangular when too short to
// reach the velocity.
func TestTrapezoidClosedForm(t *testing.T) {
	cases := []struct {
		name               string
		dist, v, a, d      float64
		wantDur, wantPeakV float64
		probeT, probeX     float64 // a time after the start and the position there
	}{
		// ta = 0.1 s (0.01 covered), td = 0.2 s (0.02), cruise 0.07/0.2 = 0.35 s.
		{"trapezoid", 0.1, 0.2, 2, 1, 0.65, 0.2, 0.05, 0.0025},
		{"trapezoid, down", -0.1, 0.2, 2, 1, 0.65, 0.2, 0.3, -(0.01 + 0.2*0.2)},
		// vpeak = √(2·0.01·2·2/4) = √0.02, each half √0.02/2 s.
		{"triangle", 0.01, 1, 2, 2, math.Sqrt(0.02), math.Sqrt(0.02), math.Sqrt(0.02) / 2, 0.005},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			m, err := NewTrapezoid(1, 5, c.dist, c.v, c.a, c.d)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(m.Duration()-c.wantDur) > 1e-12 {
				t.Errorf("duration %.15g, want %.15g", m.Duration(), c.wantDur)
			}
			if got := m.At(1+c.probeT) - 5; math.Abs(got-c.probeX) > 1e-12 {
				t.Errorf("position %.3g s after the start %.15g, want %.15g", c.probeT, got, c.probeX)
			}
			if m.At(0.5) != 5 || m.At(m.End()+1) != 5+c.dist {
				t.Errorf("before %g, after %g; want 5 and %g", m.At(0.5), m.At(m.End()+1), 5+c.dist)
			}
			vmax, amax, _, _, _ := kinematics(m, 0.9, m.End()+0.1, 1e-5)
			if math.Abs(vmax-c.wantPeakV) > 1e-4 || amax > math.Max(c.a, c.d)*1.01 {
				t.Errorf("peak velocity %.6g (want %.6g), peak acceleration %.4g (limit %g)", vmax, c.wantPeakV, amax, math.Max(c.a, c.d))
			}
		})
	}
}

// A jerk-limited (double S) move respects its jerk, acceleration and
// velocity limits, has continuous velocity and acceleration, and ends at
// rest at the distance (L. Biagiotti, C. Melchiorri, Trajectory Planning
// for Automatic Machines and Robots, Springer 2008, §3.4, from memory;
// times for the long move from the relations tj = A/J, ta = V/A − tj,
// cruise = (D − V·(2tj + ta))/V).
func TestSCurveLimitsAndContinuity(t *testing.T) {
	cases := []struct {
		name          string
		dist, v, a, j float64
		wantDur       float64 // NaN: not checked
	}{
		{"long: all seven phases", 1, 0.5, 2, 20, 2*(0.1+0.15+0.1) + 1.65},
		{"no constant acceleration", 1, 0.1, 2, 20, 2*2*math.Sqrt(0.1/20) + (1-0.1*2*math.Sqrt(0.1/20))/0.1},
		{"short: velocity not reached", 0.01, 0.5, 2, 20, math.NaN()},
		{"very short, down", -1e-4, 0.5, 2, 20, math.NaN()},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			m, err := NewSCurve(0.2, 0, c.dist, c.v, c.a, c.j) // from 0: no round-off in the differences
			if err != nil {
				t.Fatal(err)
			}
			if !math.IsNaN(c.wantDur) && math.Abs(m.Duration()-c.wantDur) > 1e-12 {
				t.Errorf("duration %.15g, want %.15g", m.Duration(), c.wantDur)
			}
			if got := m.At(m.End() - 1e-12); math.Abs(got-c.dist) > 1e-9*math.Abs(c.dist) {
				t.Errorf("position just before the end %.15g, want %.15g (continuous arrival)", got, c.dist)
			}
			dt := m.Duration() / 2000
			vmax, amax, jmax, dpos, dvel := kinematics(m, 0.2-dt*100, m.End()+dt*100, dt)
			if vmax > c.v*(1+1e-6) || amax > c.a*(1+1e-3) || jmax > c.j*(1+1e-2) {
				t.Errorf("peaks v %.6g a %.6g j %.6g beyond the limits %g %g %g", vmax, amax, jmax, c.v, c.a, c.j)
			}
			if dpos > vmax*dt*1.001 || dvel > amax*dt*1.01 {
				t.Errorf("position or velocity jumps: %.3g, %.3g per sample", dpos, dvel)
			}
		})
	}
}

// Moves out and back return to the start after each cycle, and a sequence
// adds the parts' changes.
func TestOutAndBack(t *testing.T) {
	m, err := NewSCurve(0.1, 2, 0.5, 1, 10, 100)
	if err != nil {
		t.Fatal(err)
	}
	seq := OutAndBack(m, 0.3, 2)
	if len(seq.Parts) != 4 || InitialLevel(seq) != 2 {
		t.Fatalf("%d parts from %g, want 4 from 2", len(seq.Parts), InitialLevel(seq))
	}
	d := m.Duration()
	for _, p := range []struct{ t, want float64 }{
		{0, 2}, {0.1 + d, 2.5}, {0.1 + d + 0.3, 2.5}, {0.1 + 2*d + 0.3, 2}, {0.1 + 2*d + 0.6, 2},
		{0.1 + 3*d + 0.6, 2.5}, {0.1 + 4*d + 0.9, 2}, {100, 2},
	} {
		if got := seq.At(p.t); math.Abs(got-p.want) > 1e-12 {
			t.Errorf("at %.4g s: %.15g, want %g", p.t, got, p.want)
		}
	}
}
