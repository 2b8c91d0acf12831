package metrics

import (
	"errors"
	"fmt"
	"math"
)

// Sentinel causes carried by a SampleError, for use with errors.Is.
var (
	// ErrLength means the trace's slices differ in length.
	ErrLength = errors.New("signal lengths differ")
	// ErrTooShort means the trace has fewer than two samples.
	ErrTooShort = errors.New("too few samples")
	// ErrNotFinite means a sample holds NaN or an infinity.
	ErrNotFinite = errors.New("value is not a finite number")
	// ErrTimeOrder means a time stamp is not after the one before it.
	ErrTimeOrder = errors.New("time does not increase")
)

// SampleError reports why a trace cannot be measured: which sample, which
// signal, and what is wrong with it. Index is the 0-based sample index, or -1
// when the problem concerns the whole trace (lengths, sample count); a reader
// that knows the log layout maps Index to a file line.
type SampleError struct {
	Index  int    // 0-based sample index; -1 for the whole trace
	Signal string // "time", "command", "response" or "effort"; empty for the whole trace
	Msg    string // what is wrong, in words
	Err    error  // sentinel cause (ErrLength, ErrTooShort, ErrNotFinite, ErrTimeOrder)
}

// Error returns a message naming the sample, the signal and the problem.
func (e *SampleError) Error() string {
	switch {
	case e.Index < 0 && e.Signal == "":
		return "trace: " + e.Msg
	case e.Index < 0:
		return fmt.Sprintf("trace: %s: %s", e.Signal, e.Msg)
	default:
		return fmt.Sprintf("trace: sample index %d, %s: %s", e.Index, e.Signal, e.Msg)
	}
}

// Unwrap returns the sentinel cause.
func (e *SampleError) Unwrap() error { return e.Err }

// Validate checks that the trace can be measured: Command and Response as
// long as Time, Effort either absent (nil or empty) or as long as Time, at
// least two samples, every value finite and time strictly increasing. The
// first problem found is returned as a *SampleError. A trace that passes
// is marked, so that measuring its steps does not check the same samples
// again; changing its samples in place afterwards voids the mark (replacing
// or resizing a slice is noticed).
func (t *Trace) Validate() error {
	t.checked = shape{}
	if err := t.validate(); err != nil {
		return err
	}
	t.checked = t.shape()
	return nil
}

func (t *Trace) validate() error {
	n := len(t.Time)
	for _, s := range []struct {
		name string
		len  int
	}{{"command", len(t.Command)}, {"response", len(t.Response)}} {
		if s.len != n {
			return &SampleError{Index: -1, Signal: s.name, Err: ErrLength,
				Msg: fmt.Sprintf("has %d samples but time has %d", s.len, n)}
		}
	}
	if len(t.Effort) != 0 && len(t.Effort) != n {
		return &SampleError{Index: -1, Signal: "effort", Err: ErrLength,
			Msg: fmt.Sprintf("has %d samples but time has %d", len(t.Effort), n)}
	}
	if n < 2 {
		return &SampleError{Index: -1, Err: ErrTooShort,
			Msg: fmt.Sprintf("has %d samples; at least 2 are needed", n)}
	}
	return t.checkRange(0, n)
}

// checkRange validates samples lo..hi-1 (finite values, increasing time). The
// caller guarantees the slices are at least hi long.
func (t Trace) checkRange(lo, hi int) error {
	if lo >= hi || t.rangeOK(lo, hi) {
		return nil
	}
	for i := lo; i < hi; i++ {
		if !finite(t.Time[i]) {
			return notFinite(i, "time", t.Time[i])
		}
		if i > lo && !(t.Time[i] > t.Time[i-1]) {
			return &SampleError{Index: i, Signal: "time", Err: ErrTimeOrder,
				Msg: fmt.Sprintf("%s s is not after the previous sample's %s s", num(t.Time[i]), num(t.Time[i-1]))}
		}
		if !finite(t.Command[i]) {
			return notFinite(i, "command", t.Command[i])
		}
		if !finite(t.Response[i]) {
			return notFinite(i, "response", t.Response[i])
		}
		if len(t.Effort) > i && !finite(t.Effort[i]) {
			return notFinite(i, "effort", t.Effort[i])
		}
	}
	return nil
}

// rangeOK is the fast path of checkRange: it reports whether samples
// lo..hi-1 are all finite with increasing time, without saying where they
// are not. x − x is 0 for a finite x and NaN for ±Inf and NaN, so one sum
// per signal carries the finiteness test without a branch per sample.
func (t Trace) rangeOK(lo, hi int) bool {
	tm, c, r := t.Time[lo:hi], t.Command[lo:hi], t.Response[lo:hi]
	c, r = c[:len(tm)], r[:len(tm)]
	var acc float64
	ordered := true
	prev := math.Inf(-1)
	for i, x := range tm {
		acc += (x - x) + (c[i] - c[i]) + (r[i] - r[i])
		ordered = ordered && x > prev
		prev = x
	}
	if e := t.Effort; len(e) > lo {
		e = e[lo:min(hi, len(e))]
		for _, x := range e {
			acc += x - x
		}
	}
	return ordered && acc == 0
}

func notFinite(i int, signal string, v float64) error {
	return &SampleError{Index: i, Signal: signal, Err: ErrNotFinite,
		Msg: fmt.Sprintf("value %v is not a finite number", v)}
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// Validate checks that the options describe a measurement: 0 ≤ RiseLow <
// RiseHigh ≤ 1, 0 < Band < 1, 0 < DeadTimeLevel < 1, 0 < FinalWindow ≤ 1,
// MinSamples ≥ 2 and SteadyTime ≥ 0. The error names the offending field and its value.
func (o Options) Validate() error {
	bad := func(field string, v float64, want string) error {
		return fmt.Errorf("metrics options: %s = %v: %s", field, v, want)
	}
	switch {
	case !finite(o.RiseLow) || o.RiseLow < 0 || o.RiseLow >= 1:
		return bad("RiseLow", o.RiseLow, "must be at least 0 and below 1")
	case !finite(o.RiseHigh) || o.RiseHigh <= 0 || o.RiseHigh > 1:
		return bad("RiseHigh", o.RiseHigh, "must be above 0 and at most 1")
	case o.RiseLow >= o.RiseHigh:
		return fmt.Errorf("metrics options: RiseLow = %v is not below RiseHigh = %v", o.RiseLow, o.RiseHigh)
	case !finite(o.Band) || o.Band <= 0 || o.Band >= 1:
		return bad("Band", o.Band, "must be above 0 and below 1")
	case !finite(o.DeadTimeLevel) || o.DeadTimeLevel <= 0 || o.DeadTimeLevel >= 1:
		return bad("DeadTimeLevel", o.DeadTimeLevel, "must be above 0 and below 1")
	case !finite(o.FinalWindow) || o.FinalWindow <= 0 || o.FinalWindow > 1:
		return bad("FinalWindow", o.FinalWindow, "must be above 0 and at most 1")
	case o.MinSamples < 2:
		return fmt.Errorf("metrics options: MinSamples = %d: must be at least 2", o.MinSamples)
	case !finite(o.SteadyTime) || o.SteadyTime < 0:
		return bad("SteadyTime", o.SteadyTime, "must be zero or positive")
	}
	return nil
}
