package metrics

import (
	"fmt"
	"math"
	"strconv"
	"sync"
)

// Window lengths used for the state levels.
const (
	// minPreSamples is the fewest pre-step samples an initial value is
	// measured from.
	minPreSamples = 3
	// preWindowSeconds caps the initial-value window: the last half of the
	// pre-step samples or the last preWindowSeconds before the step,
	// whichever holds fewer samples (common practice, no source).
	preWindowSeconds = 0.5
	// minFinalSamples is the fewest samples a final value is measured from,
	// three per half so the drift between halves means something.
	minFinalSamples = 6
)

// steadyFraction is the stability limit of a state-level window as a
// fraction of the settling band's half-width: the window's drift between its
// halves and its robust spread must each be at most half the half-width, a
// quarter of the band's full width (stepgate's choice; common practice, no
// source). A looser limit would let a final value still moving by most of
// the band centre the band that the settling time is judged against.
const steadyFraction = 0.5

// Measure finds the steps of tr (FindMoves with minChange and
// o.SteadyTime) and measures each with MeasureStep. tr must pass Validate. It returns nil when the record
// has no step.
func Measure(tr Trace, minChange float64, o Options) []StepMetrics {
	steps := FindMoves(tr, minChange, o.SteadyTime)
	if len(steps) == 0 {
		return nil
	}
	out := make([]StepMetrics, len(steps))
	bp := scratchPool.Get().(*[]float64)
	for i, s := range steps {
		out[i] = measureStep(tr, s, o, bp)
	}
	scratchPool.Put(bp)
	return out
}

// MeasureStep measures every metric of step s of tr with the levels in o.
// Times are seconds from the step instant tr.Time[s.Start].
//
//   - StepSize is To − From, always known.
//   - InitialValue is the state level (see StateLevel) of the tail of the
//     pre-step window PreStart..Start−1: its last half or its last 0.5 s,
//     whichever holds fewer samples, at least 3. Unknown with fewer than 3
//     pre-step samples, or when that tail is not steady.
//   - FinalValue is the state level of the step's last FinalWindow fraction
//     of samples (at least 6). Unknown when that window is not steady: the
//     level of its second half differs from that of its first half, or its
//     robust spread (1.4826 × MAD) is, by more than a quarter of the settling
//     band's full width (0.5 × Band × |StepSize|); i.e. the record ends
//     before the response settles, or the response keeps oscillating.
//   - DeadTime, RiseTime and Overshoot need a transition: unknown when either
//     state level is unknown, when |final − initial| is within the settling
//     band's half-width (the response did not move), or when the response
//     moved against the command.
//   - PeakValue and PeakTime: extreme in the command's direction
//     (MeasurePeak).
//   - SettlingTime: band ±Band × |StepSize| around FinalValue
//     (MeasureSettlingTime); unknown when FinalValue is.
//   - SteadyStateError(Pct): |To − FinalValue| (MeasureSteadyStateError).
//   - LastOutside: MeasureLastOutside around FinalValue, or around To when
//     FinalValue is unknown; known whenever the step has samples.
//   - MoveTime: t[MoveEnd] − t[Start], 0 for an ideal step
//     (MeasureMoveTime); MaxFollowingError: the largest |command −
//     response| from Start to MoveEnd (MeasureMaxFollowingError). Both are
//     unknown for an Unfinished move.
//   - SettlingAfterMove: SettlingTime − MoveTime, at least 0
//     (MeasureSettlingAfterMove).
//
// Times are from the move start for a profiled move, as for a step: dead
// time, peak time and settling time count from the first command change;
// rise time, overshoot, the final value and the steady-state error are
// defined as for a step.
//
// A step whose record has a gap, an interval between samples (from the last
// one before the step instant on) longer than 10 times the median sample
// period, has every metric unknown except StepSize, with the gap's size and
// place as the reason; LastOutside, which needs no interpolation, is still
// given around To. Irregular sampling without such a gap is measured
// normally.
//
// A step with fewer than o.MinSamples samples has every metric unknown
// except StepSize (LastOutside and Duration are still given). Invalid
// options, a step that does not fit the trace, or a non-finite or
// non-increasing sample in the step's range make every metric unknown with
// the reason. Start and Duration are 0 only when the step does not fit the
// trace.
func MeasureStep(tr Trace, s Step, o Options) StepMetrics {
	bp := scratchPool.Get().(*[]float64)
	m := measureStep(tr, s, o, bp)
	scratchPool.Put(bp)
	return m
}

// scratchPool recycles the sorting buffers of the state levels between
// calls, so that measuring a batch does not allocate one per step. The
// results never refer to the buffer.
var scratchPool = sync.Pool{New: func() any { return new([]float64) }}

func measureStep(tr Trace, s Step, o Options, buf *[]float64) StepMetrics {
	m := StepMetrics{Step: s, StepSize: Known(s.Size())}
	n := min(len(tr.Time), len(tr.Command), len(tr.Response))
	if s.PreStart < 0 || s.PreStart > s.Start || s.Start >= s.End || s.End > n || s.moveEnd() >= s.End {
		m.setAll(fmt.Sprintf("step %d spans samples %d..%d (pre-step from %d), which do not fit a record of %d samples",
			s.Index, s.Start, s.End-1, s.PreStart, n))
		m.LastOutside = Unknown("step has no samples in the record")
		return m
	}
	t := tr.Time[s.Start:s.End]
	y := tr.Response[s.Start:s.End]
	m.Start = t[0]
	m.Duration = t[len(t)-1] - t[0]
	size := s.Size()
	halfWidth := o.Band * math.Abs(size)
	if err := o.Validate(); err != nil {
		m.setAll(err.Error())
		m.LastOutside = Unknown(err.Error())
		return m
	}
	// A trace that passed Validate has had every sample checked already.
	if !tr.validated() {
		if err := tr.checkRange(s.PreStart, s.End); err != nil {
			m.setAll(err.Error())
			m.LastOutside = Unknown(err.Error())
			return m
		}
	}
	if size == 0 || !finite(size) {
		m.setAll(fmt.Sprintf("command does not change (from %s to %s)", num(s.From), num(s.To)))
		m.LastOutside = Unknown("command does not change, so there is no settling band")
		return m
	}
	// Without a final value the band is taken about the command; with one,
	// about the final value (at the end).
	aboutCommand := func() Value { return MeasureLastOutside(t, y, s.To, halfWidth) }
	if len(y) < o.MinSamples {
		m.setAll(fmt.Sprintf("step has only %s (%s s); %d are needed to measure it",
			samples(len(y)), num(m.Duration), o.MinSamples))
		m.LastOutside = aboutCommand()
		return m
	}
	if why := timeGap(tr.Time, s, buf); why != "" {
		m.setAll(why)
		m.LastOutside = aboutCommand()
		return m
	}
	tol := steadyFraction * halfWidth
	// One scratch buffer, large enough for either state-level window.
	scratch(buf, max((s.Start-s.PreStart+1)/2, minPreSamples, int(math.Ceil(o.FinalWindow*float64(len(y)))), minFinalSamples))

	m.InitialValue = initialValue(tr, s, tol, buf)
	m.FinalValue = finalValue(t, y, o.FinalWindow, tol, m.Duration, buf)

	rising := size > 0
	m.PeakValue, m.PeakTime = MeasurePeak(t, y, rising)

	if why := transition(m.InitialValue, m.FinalValue, size, halfWidth); why != "" {
		m.DeadTime, m.RiseTime, m.Overshoot = Unknown(why), Unknown(why), Unknown(why)
	} else {
		y0, y1 := m.InitialValue.V, m.FinalValue.V
		m.DeadTime = MeasureDeadTime(t, y, y0, y1, o.DeadTimeLevel)
		m.RiseTime = MeasureRiseTime(t, y, y0, y1, o.RiseLow, o.RiseHigh)
		m.Overshoot = MeasureOvershoot(m.PeakValue.V, y0, y1)
	}

	end := s.moveEnd()
	m.MoveTime = MeasureMoveTime(tr.Time[:s.End], s.Start, end, s.Unfinished, o.SteadyTime)
	m.MaxFollowingError = MeasureMaxFollowingError(tr.Time[:s.End], tr.Command, tr.Response, s.Start, end, s.Unfinished, o.SteadyTime)

	m.settle(t, y, s.To, halfWidth)
	return m
}

// settle measures what the band around the final value gives: the settling
// time, the steady-state error and the last sample outside the band; without
// a final value, the last sample outside the band around the command to.
func (m *StepMetrics) settle(t, y []float64, to, halfWidth float64) {
	if !m.FinalValue.OK {
		why := "final value unknown: " + m.FinalValue.Why
		m.SettlingTime = Unknown(why)
		m.SettlingAfterMove = MeasureSettlingAfterMove(m.SettlingTime, m.MoveTime)
		m.SteadyStateError, m.SteadyStateErrorPct = Unknown(why), Unknown(why)
		m.LastOutside = MeasureLastOutside(t, y, to, halfWidth)
		return
	}
	// One backward scan gives both the settling time and the last sample
	// outside the band.
	last := lastOutside(y, m.FinalValue.V, halfWidth)
	m.SettlingTime = settlingTime(t, y, m.FinalValue.V, halfWidth, last)
	m.SettlingAfterMove = MeasureSettlingAfterMove(m.SettlingTime, m.MoveTime)
	m.SteadyStateError, m.SteadyStateErrorPct = MeasureSteadyStateError(to, m.FinalValue.V, m.StepSize.V)
	m.LastOutside = lastOutsideTime(t, last)
}

// maxGapPeriods is how many median sample periods one interval between
// samples may span inside a step before the step counts as having a gap in
// the record (stepgate's choice; common practice, no source). Jitter of a
// rig's logging clock stays far below it; a rig that stopped logging for a
// while exceeds it.
const maxGapPeriods = 10

// timeGap returns why step s cannot be measured when its record has a gap:
// an interval between consecutive samples, from the last sample before the
// step instant to the step's last sample, longer than maxGapPeriods times
// the median interval over the step and its pre-step window. Every metric
// measured across such a gap would rest on samples that were never taken:
// a crossing interpolated over it, a peak or a band exit missed inside it.
// It returns "" when there is no gap.
func timeGap(time []float64, s Step, buf *[]float64) string {
	lo := max(s.PreStart, 0)
	n := s.End - lo - 1
	if n < 2 {
		return ""
	}
	// The intervals are finite and positive (the trace is validated), so
	// plain comparisons do; the median is needed only when some interval is
	// ten times the shortest.
	// One pass: the shortest interval over the whole span, the longest
	// from the step instant on.
	shortest := math.Inf(1)
	first := max(s.Start, lo+1)
	for i := lo + 1; i < first; i++ {
		if g := time[i] - time[i-1]; g < shortest {
			shortest = g
		}
	}
	worst, at := 0.0, -1
	for i := first; i < s.End; i++ {
		g := time[i] - time[i-1]
		if g < shortest {
			shortest = g
		}
		if g > worst {
			worst, at = g, i
		}
	}
	// No interval is ten times the shortest: no gap, whatever the median.
	if at < 0 || worst <= maxGapPeriods*shortest {
		return ""
	}
	d := scratch(buf, n)
	for i := range d {
		d[i] = time[lo+i+1] - time[lo+i]
	}
	med := median(d)
	if !(med > 0) || worst <= maxGapPeriods*med {
		return ""
	}
	return fmt.Sprintf("time gap of %s s at %s s (no sample between %s s and %s s), %s× the median sample period of %s s: the record is missing data inside step %d, so it is not measured",
		num(worst), num(time[at]), num(time[at-1]), num(time[at]), num(worst/med), num(med), s.Index)
}

// samples writes a sample count with its noun, "1 sample", "5 samples".
func samples(n int) string {
	if n == 1 {
		return "1 sample"
	}
	return strconv.Itoa(n) + " samples"
}

// setAll marks every metric but StepSize unknown with the same reason.
func (m *StepMetrics) setAll(why string) {
	for _, c := range catalogue {
		if c.Name != StepSize {
			*c.field(m) = Unknown(why)
		}
	}
}

// scratch returns *buf grown to at least n elements.
func scratch(buf *[]float64, n int) []float64 {
	if cap(*buf) < n {
		*buf = make([]float64, n)
	}
	return (*buf)[:n]
}

// initialValue measures the state level before step s.
func initialValue(tr Trace, s Step, tol float64, buf *[]float64) Value {
	m := s.Start - s.PreStart
	if m < minPreSamples {
		return Unknown(fmt.Sprintf("only %d samples before the step; %d are needed for the initial value", m, minPreSamples))
	}
	lo := preWindowStart(tr, s)
	k := s.Start - lo
	tStep := tr.Time[s.Start]
	w := tr.Response[lo:s.Start]
	l := stateLevel(w, scratch(buf, k))
	span := num(tStep - tr.Time[lo])
	if l.Drift > tol {
		return Unknown(fmt.Sprintf("response is not steady before the step: its level drifts by %s over the %s s before it (limit %s)",
			num(l.Drift), span, num(tol)))
	}
	if l.Spread > tol {
		return Unknown(fmt.Sprintf("response is too noisy before the step: robust spread %s over the %s s before it (limit %s)",
			num(l.Spread), span, num(tol)))
	}
	return Known(l.Value)
}

// preWindowStart returns the first sample of the window the initial value
// of step s is measured from: the last half of the pre-step samples or the
// last preWindowSeconds before the step instant, whichever holds fewer, and
// at least minPreSamples. s has at least minPreSamples pre-step samples.
func preWindowStart(tr Trace, s Step) int {
	k := (s.Start - s.PreStart + 1) / 2
	tStep := tr.Time[s.Start]
	inTime := 0
	for i := s.Start - 1; i >= s.PreStart && tr.Time[i] >= tStep-preWindowSeconds; i-- {
		inTime++
	}
	return s.Start - max(min(k, inTime), minPreSamples)
}

// finalWindowLen returns how many samples at the end of a step of n samples
// the final value is measured from: the fraction frac of them, at least
// minFinalSamples (which may exceed n).
func finalWindowLen(n int, frac float64) int {
	return max(int(math.Ceil(frac*float64(n)-1e-9)), minFinalSamples)
}

// finalValue measures the state level at the end of a step.
func finalValue(t, y []float64, frac, tol, dur float64, buf *[]float64) Value {
	n := len(y)
	k := finalWindowLen(n, frac)
	if k > n {
		return Unknown(fmt.Sprintf("step has only %d samples; %d are needed for the final value", n, minFinalSamples))
	}
	w := y[n-k:]
	l := stateLevel(w, scratch(buf, k))
	span := num(t[n-1] - t[n-k])
	if l.Drift > tol {
		return Unknown(fmt.Sprintf("record ends %s s after the step, before the response settles: its level drifts by %s over the last %s s (limit %s)",
			num(dur), num(l.Drift), span, num(tol)))
	}
	if l.Spread > tol {
		return Unknown(fmt.Sprintf("response does not hold a steady level by the end of the record, %s s after the step: robust spread %s over the last %s s (limit %s)",
			num(dur), num(l.Spread), span, num(tol)))
	}
	return Known(l.Value)
}

// transition returns why the step has no transition to time, or "".
func transition(initial, final Value, size, halfWidth float64) string {
	switch {
	case !initial.OK:
		return "initial value unknown: " + initial.Why
	case !final.OK:
		return "final value unknown: " + final.Why
	}
	d := final.V - initial.V
	switch {
	case math.Abs(d) <= halfWidth:
		return fmt.Sprintf("response moved only %s (from %s to %s), within the ±%s settling band: no transition to time",
			num(d), num(initial.V), num(final.V), num(halfWidth))
	case (d > 0) != (size > 0):
		return fmt.Sprintf("response moved %s (from %s to %s), against the command change of %s",
			num(d), num(initial.V), num(final.V), num(size))
	}
	return ""
}
