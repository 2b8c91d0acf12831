package metrics

import (
	"fmt"
	"math"
)

// The functions in this file measure what a profiled move adds to a step:
// how long the command travelled, how far the response lagged behind it
// on the way, and how long the response took to settle once the command
// had arrived. On an ideal step, whose command arrives in one sample, the
// move time is 0 and the settling time after the move is the settling time.

// MeasureMoveTime is the duration of the commanded move: the time from the
// move start t[start] (the first sample at which the command has left its
// level) to t[end] (the first sample from which it holds its final value).
// It is 0 for an ideal step (end ≤ start). Unknown when unfinished: the
// record ended before the command held its value for the steady time.
func MeasureMoveTime(t []float64, start, end int, unfinished bool, steady float64) Value {
	if unfinished {
		return Unknown(unfinishedWhy(t, end, steady))
	}
	if end <= start {
		return Known(0)
	}
	return Known(t[end] - t[start])
}

// MeasureMaxFollowingError is the largest |command − response| over the
// samples of the commanded move, c[i] and y[i] for i from start to end
// inclusive: the following error of a servo drive at its worst during the
// move. For an ideal step the only sample is the step instant, so it is
// the error there, about the step size. The samples are taken as recorded,
// not interpolated. Unknown when unfinished (the move's end is not in the
// record, so its worst error may not be either).
func MeasureMaxFollowingError(t, c, y []float64, start, end int, unfinished bool, steady float64) Value {
	if unfinished {
		return Unknown(unfinishedWhy(t, end, steady))
	}
	worst := 0.0
	for i := start; i <= max(end, start); i++ {
		worst = math.Max(worst, math.Abs(c[i]-y[i]))
	}
	return Known(worst)
}

// MeasureSettlingAfterMove is the settling time measured from the end of
// the commanded move rather than from its start: settling − moveTime, or 0
// when the response was already within the band, for good, before the
// command arrived. Servo builders quote it as the settling part of a
// move-and-settle time. It is unknown when either input is.
func MeasureSettlingAfterMove(settling, moveTime Value) Value {
	switch {
	case !moveTime.OK:
		return Unknown("move end unknown: " + moveTime.Why)
	case !settling.OK:
		return settling
	}
	return Known(math.Max(0, settling.V-moveTime.V))
}

// unfinishedWhy says why a move's end is not known.
func unfinishedWhy(t []float64, end int, steady float64) string {
	held := t[len(t)-1] - t[end]
	return fmt.Sprintf("the command was still moving %s s before the record ended; it must hold its value for %s s (steps.steady_s) to end the move",
		num(held), num(steady))
}
