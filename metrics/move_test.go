package metrics

import (
	"math"
	"testing"
)

// The profiled-move metrics checked against the closed-form ramp response
// of the standard second-order loop ωn²/(s² + 2ζωn s + ωn²): for a unit
// ramp applied at t = 0,
//
//	c(t) = t − 2ζ/ωn + (e^(−ζωn t)/ωd)·sin(ωd t + 2φ),  φ = arccos ζ
//
// (K. Ogata, Modern Control Engineering, 5th ed., §5-3, from memory;
// references.md §12), and by linearity a ramp-and-hold of size A over Td,
// the command r(t) = A·min(t, Td)/Td, gives y(t) = (A/Td)·(c(t) − c(t − Td))
// (the second term from t = Td on). The reference figures are found from
// these formulas on a fine grid with bisection, independently of the code
// under test.

// unitRamp is Ogata's c(t) for t ≥ 0 and 0 before.
func unitRamp(zeta, wn float64) func(float64) float64 {
	wd := wn * math.Sqrt(1-zeta*zeta)
	phi := math.Acos(zeta)
	return func(t float64) float64 {
		if t <= 0 {
			return 0
		}
		return t - 2*zeta/wn + math.Exp(-zeta*wn*t)/wd*math.Sin(wd*t+2*phi)
	}
}

// rampHold is the response to a ramp-and-hold of size a over td.
func rampHold(zeta, wn, a, td float64) unitResponse {
	c := unitRamp(zeta, wn)
	return func(t float64) float64 { return a / td * (c(t) - c(t-td)) }
}

// moveRecord samples a ramp-and-hold response every dtm seconds from
// −pre to td + post, the ramp starting exactly on a sample at t = 0.
func moveRecord(f unitResponse, a, td, dtm, pre, post float64) Trace {
	n0 := int(math.Round(pre / dtm))
	nr := int(math.Round(td / dtm))
	n := n0 + nr + int(math.Round(post/dtm)) + 1
	var tr Trace
	for i := range n {
		k := i - n0
		t := float64(k) * dtm
		tr.Time = append(tr.Time, t)
		tr.Command = append(tr.Command, a*float64(min(max(k, 0), nr))/float64(nr))
		tr.Response = append(tr.Response, f(t))
	}
	return tr
}

// argMax returns the t in [a, b] where f is largest: a scan on a grid of
// h, then golden-section search around the best grid point.
func argMax(f func(float64) float64, a, b, h float64) float64 {
	best := a
	for t := a; t <= b; t += h {
		if f(t) > f(best) {
			best = t
		}
	}
	if f(b) > f(best) {
		return b
	}
	lo, hi := math.Max(a, best-h), math.Min(b, best+h)
	g := (math.Sqrt(5) - 1) / 2
	for hi-lo > 1e-12 {
		x1, x2 := hi-g*(hi-lo), lo+g*(hi-lo)
		if f(x1) < f(x2) {
			lo = x1
		} else {
			hi = x2
		}
	}
	return (lo + hi) / 2
}

// TestMoveClosedForm measures ramp-and-hold moves of the second-order loop
// and compares every move metric with the closed form. Sampling at 0.2 ms:
// the move starts at the first sample at which the command has left its
// level, one sample period after the ramp's start at t = 0, so times from
// the move start are the closed form's times less dtm; the following error
// and the peak are samples (their extremes lie on flat stretches or at
// the sampled move end), the crossings are interpolated (error below
// dtm²·|y″|/(8·|y′|), under a microsecond here).
func TestMoveClosedForm(t *testing.T) {
	const dtm = 0.2e-3
	cases := []struct {
		name          string
		zeta, wn      float64
		size, td      float64 // move size and ramp duration
		pre, post     float64 // record before the ramp and after it
		rampErrorOnly bool    // the ramp is long: check Ogata's 2ζ/ωn lag
	}{
		{"ζ=0.6 ωn=5, 10 over 0.5 s", 0.6, 5, 10, 0.5, 0.5, 6, false},
		{"ζ=0.3 ωn=20, −2 over 0.2 s", 0.3, 20, -2, 0.2, 0.5, 2, false},
		{"ζ=0.8 ωn=30, 5 over 0.05 s", 0.8, 30, 5, 0.05, 0.5, 1, false},
		{"ζ=0.9 ωn=5, 30 over 6 s (unit-ramp lag)", 0.9, 5, 30, 6, 0.5, 4, true},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			f := rampHold(tc.zeta, tc.wn, tc.size, tc.td)
			tr := moveRecord(f, tc.size, tc.td, dtm, tc.pre, tc.post)
			if err := tr.Validate(); err != nil {
				t.Fatal(err)
			}
			o := DefaultOptions()
			steps := FindMoves(tr, math.Abs(tc.size)/4, o.SteadyTime)
			if len(steps) != 1 {
				t.Fatalf("found %d moves, want one: %+v", len(steps), steps)
			}
			s := steps[0]
			if got, want := tr.Time[s.Start], dtm; math.Abs(got-want) > 1e-12 {
				t.Errorf("move starts at %v s, want the first changed sample %v s", got, want)
			}
			if got := tr.Time[s.MoveEnd]; math.Abs(got-tc.td) > 1e-12 || s.Unfinished {
				t.Errorf("move ends at %v s (unfinished %v), want %v s", got, s.Unfinished, tc.td)
			}
			m := MeasureStep(tr, s, o)
			a, sign := math.Abs(tc.size), math.Copysign(1, tc.size)

			// Move time: from the first changed sample to Td.
			near(t, "move time", m.MoveTime, tc.td-dtm, 1e-9)

			// Largest following error over the ramp: (A/Td)·max (t − c(t)).
			c := unitRamp(tc.zeta, tc.wn)
			lag := func(x float64) float64 { return a / tc.td * (x - c(x)) }
			tm := argMax(lag, 0, tc.td, 1e-4)
			near(t, "max following error", m.MaxFollowingError, lag(tm), 1e-6*a)
			if tc.rampErrorOnly {
				// Ogata §5-3: the steady following error of a unit ramp is
				// 2ζ/ωn; for ζ = 0.9 the transient lags at most 0.21 % more
				// (the largest −e^(−σt)·sin(ωd t + 2φ)/ωd over 2ζ/ωn,
				// computed from the closed form).
				ess := a / tc.td * 2 * tc.zeta / tc.wn
				if got := m.MaxFollowingError.V; got < ess || got > ess*1.0022 {
					t.Errorf("max following error %v, want at least Ogata's 2ζ/ωn lag %v and near it", got, ess)
				}
			}

			// Response normalised to a rising unit move.
			u := func(x float64) float64 { return sign * f(x) / a }
			end := tc.td + tc.post
			settle := exactSettling(u, 1, o.Band, end)
			near(t, "settling after move end", m.SettlingAfterMove, math.Max(0, settle-tc.td), 2e-6)
			near(t, "settling time from move start", m.SettlingTime, settle-dtm, 2e-6)

			tp := argMax(u, tc.td, end, 1e-4)
			near(t, "overshoot", m.Overshoot, math.Max(0, (u(tp)-1)*100), 1e-4)
			near(t, "rise time", m.RiseTime, exactCrossing(u, o.RiseHigh, end)-exactCrossing(u, o.RiseLow, end), 2e-6)
			near(t, "dead time", m.DeadTime, exactCrossing(u, o.DeadTimeLevel, end)-dtm, 2e-6)
			near(t, "steady-state error", m.SteadyStateError, 0, 1e-6*a)
			t.Logf("following error %.9g (closed form %.9g); settling after move %.7g s (%.7g); overshoot %.6g %% (%.6g)",
				m.MaxFollowingError.V, lag(tm), m.SettlingAfterMove.V, math.Max(0, settle-tc.td), m.Overshoot.V, math.Max(0, (u(tp)-1)*100))
			near(t, "move size", m.StepSize, tc.size, 0)
		})
	}
}

// TestIdealStepUnchanged checks that an ideal step is measured as before
// moves were found: FindMoves gives the step its old bounds (MoveEnd at the
// step instant), the metrics common to both are the very same numbers, the
// move time is 0 and the settling time after the move is the settling time.
func TestIdealStepUnchanged(t *testing.T) {
	r := rig{dt: dt, f: underdamped(0.6, 5)}
	tr := r.record([]segment{{0.5, 0}, {3, 10}, {3, -5}})
	o := DefaultOptions()
	steps := FindSteps(tr, 1)
	if len(steps) != 2 {
		t.Fatalf("found %d steps, want 2", len(steps))
	}
	for _, s := range steps {
		old := Step{Index: s.Index, PreStart: s.PreStart, Start: s.Start, End: s.End, From: s.From, To: s.To}
		if s.MoveEnd != s.Start || s.Unfinished || s.Profiled() {
			t.Errorf("step %d: %+v is not an ideal step", s.Index, s)
		}
		got, want := MeasureStep(tr, s, o), MeasureStep(tr, old, o)
		for _, n := range Names {
			g, _ := got.Get(n)
			w, _ := want.Get(n)
			if g != w {
				t.Errorf("step %d %s: %+v, hand-built step gives %+v", s.Index, n, g, w)
			}
		}
		if got.MoveTime != Known(0) || got.SettlingAfterMove != got.SettlingTime {
			t.Errorf("step %d: move time %+v, settling after move %+v vs %+v", s.Index, got.MoveTime, got.SettlingAfterMove, got.SettlingTime)
		}
		// The following error of a step is the error at its instant.
		if e := math.Abs(tr.Command[s.Start] - tr.Response[s.Start]); got.MaxFollowingError != Known(e) {
			t.Errorf("step %d: max following error %+v, want %v", s.Index, got.MaxFollowingError, e)
		}
	}
}

// TestUnfinishedMove checks that a move whose command is still changing at
// the end of the record has its move metrics unknown, with the reason.
func TestUnfinishedMove(t *testing.T) {
	f := rampHold(0.6, 5, 10, 100)
	tr := moveRecord(f, 10, 100, 1e-3, 0.5, 0)
	tr.Time, tr.Command, tr.Response = tr.Time[:3000], tr.Command[:3000], tr.Response[:3000]
	steps := FindSteps(tr, 0.1)
	if len(steps) != 1 || !steps[0].Unfinished {
		t.Fatalf("steps %+v, want one unfinished move", steps)
	}
	m := MeasureStep(tr, steps[0], DefaultOptions())
	for _, v := range []Value{m.MoveTime, m.MaxFollowingError, m.SettlingAfterMove} {
		if v.OK || v.Why == "" {
			t.Errorf("move metric %+v, want unknown with a reason", v)
		}
	}
}
