package metrics

import "math"

// FindSteps splits a trace into steps at command changes. The first sample
// sets the command level; every later sample whose command differs from the
// current level by at least minChange (and by more than zero) starts a step,
// and the level becomes that sample's command. A step runs to the next step's
// start or to the end of the record; its pre-step window starts at the
// previous step's start (0 for the first step). Index is 1-based.
//
// Changes smaller than minChange never start a step, however many of them
// accumulate, so command jitter below the threshold is ignored. A command
// that ramps in increments of at least minChange is seen as several steps.
// A trace with no qualifying change has no steps (nil). A NaN minChange
// finds no steps; minChange ≤ 0 makes any change a step.
func FindSteps(tr Trace, minChange float64) []Step {
	n := min(len(tr.Time), len(tr.Command))
	if n == 0 {
		return nil
	}
	var steps []Step
	level := tr.Command[0]
	for i := 1; i < n; i++ {
		c := tr.Command[i]
		d := math.Abs(c - level)
		if d == 0 || !(d >= minChange) {
			continue
		}
		pre := 0
		if k := len(steps); k > 0 {
			steps[k-1].End = i
			pre = steps[k-1].Start
		}
		steps = append(steps, Step{Index: len(steps) + 1, PreStart: pre, Start: i, End: n, From: level, To: c})
		level = c
	}
	return steps
}
