package metrics

import (
	"reflect"
	"testing"
)

// TestFindSteps checks segmentation against the rule stated in FindSteps:
// the first sample sets the level, a change of at least minChange from the
// current level starts a step, and each step runs to the next one's start.
func TestFindSteps(t *testing.T) {
	tests := []struct {
		name      string
		cmd       []float64
		minChange float64
		want      []Step
	}{
		{"no change", []float64{5, 5, 5, 5}, 0.1, nil},
		{"empty", nil, 0.1, nil},
		{"one up-step", []float64{0, 0, 0, 25, 25, 25}, 1,
			[]Step{{Index: 1, PreStart: 0, Start: 3, End: 6, From: 0, To: 25}}},
		{"one down-step", []float64{25, 25, 0, 0}, 1,
			[]Step{{Index: 1, PreStart: 0, Start: 2, End: 4, From: 25, To: 0}}},
		{"out and back", []float64{0, 0, 25, 25, 25, 0, 0}, 1, []Step{
			{Index: 1, PreStart: 0, Start: 2, End: 5, From: 0, To: 25},
			{Index: 2, PreStart: 2, Start: 5, End: 7, From: 25, To: 0},
		}},
		{"three steps", []float64{0, 10, 10, 35, 35, 20}, 1, []Step{
			{Index: 1, PreStart: 0, Start: 1, End: 3, From: 0, To: 10},
			{Index: 2, PreStart: 1, Start: 3, End: 5, From: 10, To: 35},
			{Index: 3, PreStart: 3, Start: 5, End: 6, From: 35, To: 20},
		}},
		{"jitter below threshold ignored", []float64{0, 0.02, -0.03, 0.01, 0.04, -0.04}, 0.05, nil},
		// Jitter around the new level after a step does not start steps:
		// it is compared with the level the step set, 25.
		{"jitter after a step", []float64{0, 0.01, 25, 25.02, 24.97, 25.01}, 0.05,
			[]Step{{Index: 1, PreStart: 0, Start: 2, End: 6, From: 0, To: 25}}},
		{"change exactly minChange is a step", []float64{0, 0, 0.5, 0.5}, 0.5,
			[]Step{{Index: 1, PreStart: 0, Start: 2, End: 4, From: 0, To: 0.5}}},
		{"change just below minChange is not", []float64{0, 0, 0.4999, 0.4999}, 0.5, nil},
		// Small changes that accumulate past minChange start a step once
		// the command is minChange from the level, not before.
		{"creeping command", []float64{0, 0.3, 0.6, 0.9, 1.2}, 1,
			[]Step{{Index: 1, PreStart: 0, Start: 4, End: 5, From: 0, To: 1.2}}},
		// A command ramped in increments of at least minChange is several
		// steps, as documented.
		{"ramped command", []float64{0, 0, 12.5, 25, 25}, 10, []Step{
			{Index: 1, PreStart: 0, Start: 2, End: 3, From: 0, To: 12.5},
			{Index: 2, PreStart: 2, Start: 3, End: 5, From: 12.5, To: 25},
		}},
		{"zero minChange: any change", []float64{1, 1, 1.001, 1.001}, 0,
			[]Step{{Index: 1, PreStart: 0, Start: 2, End: 4, From: 1, To: 1.001}}},
		{"step on the last sample", []float64{0, 0, 0, 3}, 1,
			[]Step{{Index: 1, PreStart: 0, Start: 3, End: 4, From: 0, To: 3}}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
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
		})
	}
}
