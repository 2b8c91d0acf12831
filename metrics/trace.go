package metrics

// Trace is a sampled record of one unit's step test: parallel slices of equal
// length, time strictly increasing, all values finite. Effort is nil when the
// rig did not log the drive effort.
type Trace struct {
	Time     []float64 // seconds
	Command  []float64 // commanded position, response units
	Response []float64 // measured position, response units
	Effort   []float64 // drive effort, optional (nil when absent)

	// checked records the slices a successful Validate saw, so that the
	// measurement functions need not check the same samples again. A trace
	// whose slices are replaced or resized no longer matches it and is
	// checked as any other; one whose samples are changed in place after
	// Validate must be validated again.
	checked shape
}

// shape identifies a trace's slices: where each starts and how long it is.
type shape struct {
	time, command, response, effort *float64
	n, effortN                      int
}

func first(v []float64) *float64 {
	if len(v) == 0 {
		return nil
	}
	return &v[0]
}

func (t *Trace) shape() shape {
	return shape{first(t.Time), first(t.Command), first(t.Response), first(t.Effort), len(t.Time), len(t.Effort)}
}

// validated reports whether Validate has passed these very slices.
func (t *Trace) validated() bool {
	return t.checked.n > 0 && t.checked == t.shape() &&
		len(t.Command) == t.checked.n && len(t.Response) == t.checked.n
}

// Len returns the number of samples.
func (t Trace) Len() int { return len(t.Time) }

// Step is one command change found in a trace: an ideal step, where the
// command jumps in one sample, or a profiled move (ramp, trapezoid,
// S-curve), where it travels over several samples (see FindMoves). Samples
// Start..End-1 belong to the step; Start is the first sample at which the
// command has left its level (the step instant, or the move start), and
// MoveEnd the first sample from which it holds its new value (the end of
// the commanded move; Start for an ideal step). PreStart is the first
// sample of the window before the step that the initial value is measured
// from (the previous step's MoveEnd, or 0).
//
// A Step built by hand with MoveEnd at or before Start is an ideal step.
type Step struct {
	Index    int     // 1-based position of the step in the record
	PreStart int     // first sample of the pre-step window
	Start    int     // first sample at which the command has left its level
	MoveEnd  int     // first sample holding the final command; ≤ Start for an ideal step
	End      int     // one past the last sample of the step
	From     float64 // command level before the step
	To       float64 // command level after the step
	// Unfinished is true when the record ends before the command has
	// held its value for the steady time: the end of the move is not known.
	Unfinished bool
}

// moveEnd returns the sample at which the commanded move ends: MoveEnd, or
// Start when MoveEnd is not after it.
func (s Step) moveEnd() int { return max(s.MoveEnd, s.Start) }

// Profiled reports whether the command travelled over several samples (a
// profiled move) rather than jumping in one (an ideal step).
func (s Step) Profiled() bool { return s.MoveEnd > s.Start }

// Size is the command change To − From (negative for a down-step).
func (s Step) Size() float64 { return s.To - s.From }

// Clone returns a trace that owns copies of t's samples (nil slices stay
// nil).
func (t Trace) Clone() Trace {
	c := func(v []float64) []float64 {
		if v == nil {
			return nil
		}
		return append([]float64(nil), v...)
	}
	out := Trace{Time: c(t.Time), Command: c(t.Command), Response: c(t.Response), Effort: c(t.Effort)}
	if t.validated() {
		out.checked = out.shape() // the same samples
	}
	return out
}
