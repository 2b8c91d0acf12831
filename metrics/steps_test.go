package metrics

import (
	"reflect"
	"testing"
)

// TestFindSteps checks segmentation against the rule stated in FindMoves:
// the first sample sets the level, a change of at least minChange from the
// current level detects a move, which starts at the first command change
// and ends where the command holds (one sample of 1 s here, longer than the
// default steady time) or turns back; each runs to the next one's start.
func TestFindSteps(t *testing.T) {
	for _, tc := range findStepsCases() {
		t.Run(tc.name, func(t *testing.T) { checkFindSteps(t, tc) })
	}
}

// checkFindSteps checks one case of TestFindSteps.
func checkFindSteps(t *testing.T, tc findStepsCase) {
	t.Helper()
	tr := Trace{Command: tc.cmd, Time: make([]float64, len(tc.cmd)), Response: make([]float64, len(tc.cmd))}
	for i := range tr.Time {
		tr.Time[i] = float64(i)
	}
	got := FindSteps(tr, tc.minChange)
	if !reflect.DeepEqual(got, tc.want) {
		t.Errorf("FindSteps = %+v\nwant        %+v", got, tc.want)
	}
	// Steps tile the record from the first step on.
	for i, s := range got {
		if s.Start >= s.End || (i > 0 && s.Start != got[i-1].End) || (i == len(got)-1 && s.End != len(tc.cmd)) {
			t.Errorf("step %d bounds %d..%d do not tile the record", s.Index, s.Start, s.End)
		}
	}
}

// findStepsCase is one case of TestFindSteps.
type findStepsCase struct {
	name      string
	cmd       []float64
	minChange float64
	want      []Step
}

// findStepsCases are the cases of TestFindSteps.
func findStepsCases() []findStepsCase {
	return []findStepsCase{
		{"no change", []float64{5, 5, 5, 5}, 0.1, nil},
		{"empty", nil, 0.1, nil},
		{"one up-step", []float64{0, 0, 0, 25, 25, 25}, 1,
			[]Step{{Index: 1, PreStart: 0, Start: 3, MoveEnd: 3, End: 6, From: 0, To: 25}}},
		{"one down-step", []float64{25, 25, 0, 0}, 1,
			[]Step{{Index: 1, PreStart: 0, Start: 2, MoveEnd: 2, End: 4, From: 25, To: 0}}},
		{"out and back", []float64{0, 0, 25, 25, 25, 0, 0}, 1, []Step{
			{Index: 1, PreStart: 0, Start: 2, MoveEnd: 2, End: 5, From: 0, To: 25},
			{Index: 2, PreStart: 2, Start: 5, MoveEnd: 5, End: 7, From: 25, To: 0},
		}},
		// The last step, on the last sample, never holds: unfinished.
		{"three steps", []float64{0, 10, 10, 35, 35, 20}, 1, []Step{
			{Index: 1, PreStart: 0, Start: 1, MoveEnd: 1, End: 3, From: 0, To: 10},
			{Index: 2, PreStart: 1, Start: 3, MoveEnd: 3, End: 5, From: 10, To: 35},
			{Index: 3, PreStart: 3, Start: 5, MoveEnd: 5, End: 6, From: 35, To: 20, Unfinished: true},
		}},
		{"jitter below threshold ignored", []float64{0, 0.02, -0.03, 0.01, 0.04, -0.04}, 0.05, nil},
		// Jitter around the new level after a step does not start steps
		// nor prolong the move: it is within twice the jitter the command
		// showed before the step (0.02).
		{"jitter after a step", []float64{0, 0.01, -0.01, 0.02, 0, 25, 25.02, 24.97, 25.01}, 0.05,
			[]Step{{Index: 1, PreStart: 0, Start: 5, MoveEnd: 5, End: 9, From: 0, To: 25}}},
		{"change exactly minChange is a step", []float64{0, 0, 0.5, 0.5}, 0.5,
			[]Step{{Index: 1, PreStart: 0, Start: 2, MoveEnd: 2, End: 4, From: 0, To: 0.5}}},
		{"change just below minChange is not", []float64{0, 0, 0.4999, 0.4999}, 0.5, nil},
		// Small changes that accumulate past minChange are one move from
		// the first change; the record ends before the command holds.
		{"creeping command", []float64{0, 0.3, 0.6, 0.9, 1.2}, 1,
			[]Step{{Index: 1, PreStart: 0, Start: 1, MoveEnd: 4, End: 5, From: 0, To: 1.2, Unfinished: true}}},
		// A command ramped in increments of at least minChange is one move.
		{"ramped command", []float64{0, 0, 12.5, 25, 25}, 10, []Step{
			{Index: 1, PreStart: 0, Start: 2, MoveEnd: 3, End: 5, From: 0, To: 25},
		}},
		// A ramp in increments far below minChange, held, then ramped back.
		{"ramp, hold, ramp back", []float64{0, 0, 0.1, 0.2, 0.3, 0.4, 0.5, 0.5, 0.5, 0.25, 0, 0}, 0.3, []Step{
			{Index: 1, PreStart: 0, Start: 2, MoveEnd: 6, End: 9, From: 0, To: 0.5},
			{Index: 2, PreStart: 6, Start: 9, MoveEnd: 10, End: 12, From: 0.5, To: 0},
		}},
		// A command that turns back without a hold is two moves, split at
		// its furthest point.
		{"triangle", []float64{0, 0, 1, 2, 3, 2, 1, 0, 0}, 0.5, []Step{
			{Index: 1, PreStart: 0, Start: 2, MoveEnd: 4, End: 5, From: 0, To: 3},
			{Index: 2, PreStart: 4, Start: 5, MoveEnd: 7, End: 9, From: 3, To: 0},
		}},
		// An S-curve-like ease into the target: the move ends at the first
		// sample at its final value, or within 1e-5 of minChange of it.
		{"eased arrival", []float64{0, 0, 1, 5, 9, 9.9995, 10, 10, 10}, 1, []Step{
			{Index: 1, PreStart: 0, Start: 2, MoveEnd: 6, End: 9, From: 0, To: 10},
		}},
		{"eased arrival below the floor", []float64{0, 0, 1, 5, 9, 9.999995, 10, 10, 10}, 1, []Step{
			{Index: 1, PreStart: 0, Start: 2, MoveEnd: 5, End: 9, From: 0, To: 10},
		}},
		// Float rounding that flickers about the target holds; a larger
		// flicker turns back and so ends the move at its furthest point.
		{"rounding flicker after a step", []float64{0, 0, 25, 25.000001, 24.999999, 25.000001}, 1, []Step{
			{Index: 1, PreStart: 0, Start: 2, MoveEnd: 2, End: 6, From: 0, To: 25},
		}},
		{"flicker after a step", []float64{0, 0, 25, 25.001, 24.999, 25.001}, 1, []Step{
			{Index: 1, PreStart: 0, Start: 2, MoveEnd: 3, End: 6, From: 0, To: 25.001},
		}},
		{"zero minChange: any change", []float64{1, 1, 1.001, 1.001}, 0,
			[]Step{{Index: 1, PreStart: 0, Start: 2, MoveEnd: 2, End: 4, From: 1, To: 1.001}}},
		{"step on the last sample", []float64{0, 0, 0, 3}, 1,
			[]Step{{Index: 1, PreStart: 0, Start: 3, MoveEnd: 3, End: 4, From: 0, To: 3, Unfinished: true}}},
	}
}
