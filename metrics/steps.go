package metrics

import "math"

// DefaultSteadyTime is how long, in seconds, the command must hold its
// value for a move to count as ended when the caller sets no time (the
// spec's steps.steady_s): long enough to bridge the samples a quantised
// slow command repeats within a profiled move, short enough that a step
// test's dwell between steps (commonly half a second or more) always ends
// one move before the next begins (stepgate's choice; common practice, no
// source).
const DefaultSteadyTime = 0.05

// steadyFloor is the smallest command change, as a fraction of minChange,
// that keeps a move going: changes smaller than this are treated as the
// command holding still (a command printed with float rounding flickers
// in its last digits and turns back, which ends a move; stepgate's choice, common practice, no source).
const steadyFloor = 1e-5

// FindSteps is FindMoves with the default steady time (DefaultSteadyTime).
func FindSteps(tr Trace, minChange float64) []Step {
	return FindMoves(tr, minChange, DefaultSteadyTime)
}

// FindMoves splits a trace into moves: ideal steps, where the command
// jumps to its new value in one sample, and profiled moves (ramp,
// trapezoid, S-curve), where it travels over several samples. Each is one
// Step.
//
// The first sample sets the command level. A move is detected at the first
// later sample whose command differs from the level by at least minChange
// (and by more than zero); changes smaller than minChange never start a
// move, so command jitter is ignored.
//
//   - Start, the move's first sample, is the first command change: from the
//     detecting sample, back over the samples that lead to it monotonically
//     and lie beyond the command's jitter on the move's side of the level.
//     The jitter is the largest departure of the command from its level
//     over the samples held before the move (0 for an exact command). For an
//     ideal step Start is the detecting sample, as it always was.
//   - MoveEnd, the end of the commanded move, is the first sample from which
//     the command holds its final value: it then changes by no more than a
//     tolerance (twice the jitter plus 1e-5 of minChange) for at
//     least steady seconds. The command moves on, and the move with it, as
//     long as it has not held that long, unless it turns back by more than
//     the tolerance: the move then ends at its furthest point and the
//     return is the next move. To is the value the command holds (for an
//     ideal step or a command with jitter, its value at MoveEnd) and
//     becomes the level for the next move. For an ideal step MoveEnd is
//     Start.
//   - A move whose command has not held for steady seconds when the record
//     ends is Unfinished; MoveEnd is then the last command change.
//
// A move runs to the next move's Start or to the end of the record; its
// pre-move window starts at the previous move's end (0 for the first move).
// Index is 1-based. A trace with no qualifying change has no moves (nil). A
// NaN minChange finds none; minChange ≤ 0 makes any change a move. A steady
// time that is not positive ends a move at the first sample that does not
// change the command.
func FindMoves(tr Trace, minChange, steady float64) []Step {
	n := min(len(tr.Time), len(tr.Command))
	if n == 0 {
		return nil
	}
	c := tr.Command
	var steps []Step
	level, lo := c[0], 0 // the held level and the first sample holding it
	for j := 1; j < n; j++ {
		d := math.Abs(c[j] - level)
		if d == 0 || !(d >= minChange) {
			continue
		}
		dir := 1.0
		if c[j] < level {
			dir = -1
		}
		start, jitter := moveStart(c, lo, j, level, dir)
		tol := 2*jitter + steadyFloor*math.Max(minChange, 0)
		end, hold, unfinished := moveEnd(tr.Time[:n], c[:n], j, dir, level, minChange, tol, steady)
		if k := len(steps); k > 0 {
			steps[k-1].End = start
		}
		// An exact profiled command arrives at the value it holds; a step,
		// or a command with jitter, is taken at the move's end (a step's
		// instant, as it always was).
		to := c[end]
		if jitter == 0 && end > start {
			to = c[hold]
		}
		steps = append(steps, Step{Index: len(steps) + 1, PreStart: lo, Start: start, MoveEnd: end, End: n,
			From: level, To: to, Unfinished: unfinished})
		level, lo, j = to, end, end
	}
	return steps
}

// moveStart walks back from j, the sample that detected a move from level
// (held since sample lo), to the move's first sample, and returns it with
// the command's jitter before the move. A first walk, with no jitter,
// separates the samples held at the level from the move; the jitter is the
// largest departure from the level among the held ones; a second walk with
// that jitter gives the start.
func moveStart(c []float64, lo, j int, level, dir float64) (start int, jitter float64) {
	walk := func(tol float64) int {
		s := j
		for s-1 > lo && dir*(c[s-1]-level) > tol && dir*(c[s]-c[s-1]) >= 0 {
			s--
		}
		return s
	}
	s0 := walk(0)
	for _, v := range c[lo:s0] {
		jitter = math.Max(jitter, math.Abs(v-level))
	}
	if jitter == 0 {
		return s0, 0
	}
	return walk(jitter), jitter
}

// moveEnd scans forward from j, the sample that detected a move from level
// in the direction dir (+1 up, −1 down), for the move's end: the command's
// furthest point in the move's direction, once the command has held within
// tol of it for at least steady seconds or has turned back by more than
// tol. A held end is moved back to the first sample within tol of where the
// command holds (and still minChange from level); hold is the sample that
// completed the hold (end when the command turned back). unfinished is
// true when the record ends first; end is then the furthest point reached.
func moveEnd(t, c []float64, j int, dir, level, minChange, tol, steady float64) (end, hold int, unfinished bool) {
	e := j
	for k := j + 1; k < len(c); k++ {
		d := dir * (c[k] - c[e])
		switch {
		case d > tol:
			e = k
		case d < -tol:
			return e, e, false // the command turned back: a new move begins
		case t[k]-t[e] >= steady:
			// A command easing into its final value (an S-curve's tail)
			// ends where it is first within tol of where it holds.
			for e > j && math.Abs(c[e-1]-c[k]) <= tol && dir*(c[e-1]-level) >= minChange {
				e--
			}
			return e, k, false
		}
	}
	return e, e, true
}
