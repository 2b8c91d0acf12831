package causes

import (
	"fmt"
	"math"
	"sort"

	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/metrics"
)

// Thresholds of the step evidence: stepgate's choices (common practice,
// no source). Each is set so that the spread of a healthy lot and the
// measurement noise stay below it.
const (
	// FlatTolerance is how close, as a share of the largest |effort| of the
	// step, a sample must be to it to belong to the flat top.
	FlatTolerance = 1e-6
	// SaturationExcess is how many sample periods the flat top of the
	// effort must outlast the predicted one by, and SaturationShare the
	// share of the predicted flat top it must outlast it by, whichever is
	// larger, for saturation to be indicated.
	SaturationExcess = 5
	SaturationShare  = 0.5
	// MinFlat is the fewest samples at the largest |effort| that make a
	// flat top (a clamp) rather than a peak.
	MinFlat = 3
	// LevelShare is how far below the predicted clamp, as a share of it,
	// the record's flat top must lie to be a clamp of its own.
	LevelShare = 0.02
	// LeaveShare is the share of the effort's largest change (and of the
	// response's step size) that marks when a signal leaves its initial
	// level.
	LeaveShare = 0.1
	// ResponseLeaveShare marks when the response leaves its initial level:
	// this share of the step size, or NoiseMultiple noise standard
	// deviations, whichever is larger.
	ResponseLeaveShare = 0.01
	NoiseMultiple      = 5
	// DelayExcess is how many sample periods later than predicted the
	// effort and the response must leave their initial levels for a loop
	// delay to be indicated (see delayed). A healthy unit's effort leaves
	// up to one sample period from the prediction (the sampling instant of
	// the step); 2.5 keeps a margin to that and to a delay of four.
	DelayExcess = 2.5
	// OffsetBandShare: a residual offset beyond the prediction's by more
	// than this share of the settling band (and beyond NoiseMultiple noise
	// standard deviations) indicates friction when the final value is
	// flat: its drift over the final window at most FlatBandShare of the
	// band.
	OffsetBandShare = 0.10
	FlatBandShare   = 0.05
)

// Input is one recorded step and the model's realised prediction of the
// same step.
type Input struct {
	Record    metrics.Trace
	Step      metrics.Step
	Predicted metrics.Trace
	PredStep  metrics.Step
	// Band is the settling band as a share of the step size; FinalWindow
	// the share of the step's samples that makes its final window.
	Band, FinalWindow float64
	// Kp is the proportional gain the step was recorded with, for the fit;
	// 0 leaves the fit to the caller (WnSquared and StaticGain unknown).
	Kp float64
}

// StepEvidence is what the record of one step shows beside its prediction.
// Times are seconds after the step instant; a value that cannot be found is
// unknown with the reason.
type StepEvidence struct {
	// EffortFlat is the duration of the flat top of |effort|, at level
	// EffortLevel; PredictedFlat and PredictedLevel the prediction's.
	EffortFlat, EffortLevel, PredictedFlat, PredictedLevel metrics.Value
	// EffortLeave and ResponseLeave are when the effort and the response
	// leave their initial levels; PredEffortLeave and PredResponseLeave
	// the prediction's.
	EffortLeave, PredEffortLeave, ResponseLeave, PredResponseLeave metrics.Value
	// Offset is |final level − command| over the final window, PredOffset
	// the prediction's; Drift the change of the final level over the
	// window, Ripple the standard deviation of the response about its mean
	// there; Noise the response's noise standard deviation before the
	// step (robust).
	Offset, PredOffset, Drift, Ripple metrics.Value
	Noise                             float64
	// WnSquared and StaticGain come from the fitted second-order loop.
	WnSquared, StaticGain metrics.Value
	// SamplePeriod is the record's median sample period.
	SamplePeriod float64
	// Causes are the causes this step's own evidence indicates (never
	// GainSpread, which only a batch shows).
	Causes Cause
}

// Measure gathers the evidence of one step and names the causes it
// indicates on its own.
func Measure(in Input) StepEvidence {
	var ev StepEvidence
	rec, pred := in.Record, in.Predicted
	ev.SamplePeriod = samplePeriod(rec.Time[in.Step.Start:in.Step.End])
	ev.Noise = noiseSD(rec.Response[in.Step.PreStart:in.Step.Start])
	ev.EffortFlat, ev.EffortLevel = flatTop(rec, in.Step)
	ev.PredictedFlat, ev.PredictedLevel = flatTop(pred, in.PredStep)
	ev.EffortLeave = effortLeave(rec, in.Step)
	ev.PredEffortLeave = effortLeave(pred, in.PredStep)
	ev.ResponseLeave = responseLeave(rec, in.Step, ev.Noise)
	ev.PredResponseLeave = responseLeave(pred, in.PredStep, 0)
	ev.Offset, ev.Drift, ev.Ripple = finalLevel(rec, in.Step, in.FinalWindow)
	ev.PredOffset, _, _ = finalLevel(pred, in.PredStep, in.FinalWindow)
	if !(in.Kp > 0) {
		why := metrics.Unknown("the step was not fitted")
		ev.WnSquared, ev.StaticGain = why, why
	} else if id, err := model.Identify(rec, in.Step, in.Kp); err != nil {
		ev.WnSquared, ev.StaticGain = metrics.Unknown(err.Error()), metrics.Unknown(err.Error())
	} else {
		ev.WnSquared = metrics.Known(id.NaturalFrequency * id.NaturalFrequency)
		ev.StaticGain = metrics.Known(id.StaticGain)
	}
	ev.Causes = ev.indicate(math.Abs(in.Step.To-in.Step.From) * in.Band)
	return ev
}

// indicate names the causes whose own evidence is beyond the noise; band is
// the settling band in response units.
func (ev *StepEvidence) indicate(band float64) Cause {
	var c Cause
	dt := ev.SamplePeriod
	if ev.saturates(dt) {
		c |= EffortSaturation
	}
	flat := math.Max(FlatBandShare*band, NoiseMultiple*ev.Noise)
	if ev.Offset.OK && ev.PredOffset.OK && ev.Drift.OK && ev.Ripple.OK &&
		ev.Offset.V-ev.PredOffset.V > math.Max(OffsetBandShare*band, NoiseMultiple*ev.Noise) &&
		math.Abs(ev.Drift.V) <= flat && ev.Ripple.V <= flat {
		c |= StaticFriction
	}
	if ev.delayed(dt, c) {
		c |= LoopDelay
	}
	return c
}

// delayed tells whether the response leaves its initial level later than
// predicted by more than DelayExcess sample periods and, with an effort
// record, the effort does too: the drive's effort starts when the loop
// acts, whatever friction or a clamp do to the motion. Without an effort
// record the response must lag by twice as much, four times when friction
// is indicated (friction too holds the start of the motion back).
func (ev *StepEvidence) delayed(dt float64, found Cause) bool {
	if !ev.ResponseLeave.OK || !ev.PredResponseLeave.OK {
		return false
	}
	lag := ev.ResponseLeave.V - ev.PredResponseLeave.V
	need := DelayExcess * dt
	if ev.EffortLeave.OK && ev.PredEffortLeave.OK {
		return ev.EffortLeave.V-ev.PredEffortLeave.V > need && lag > need
	}
	need *= 2
	if found&StaticFriction != 0 {
		need *= 2
	}
	return lag > need
}

// saturates tells whether the effort's flat top outlasts the predicted one
// beyond the thresholds at a level of its own: a level below the
// predicted clamp by more than LevelShare, or a flat top where the
// prediction has none. A longer flat top at the predicted clamp is the
// model's own saturation, drawn out by another cause.
func (ev *StepEvidence) saturates(dt float64) bool {
	if !ev.EffortFlat.OK || !ev.PredictedFlat.OK {
		return false
	}
	if ev.EffortFlat.V-ev.PredictedFlat.V <= math.Max(SaturationExcess*dt, SaturationShare*ev.PredictedFlat.V) {
		return false
	}
	predClamp := ev.PredictedFlat.V >= (MinFlat-1)*dt
	return !predClamp || ev.EffortLevel.V < (1-LevelShare)*ev.PredictedLevel.V
}

// window is the number of samples of the step's final window.
func window(st metrics.Step, share float64) int {
	n := st.End - st.Start
	return max(2, min(n, int(math.Round(share*float64(n)))))
}

// samplePeriod is the median sample period of t.
func samplePeriod(t []float64) float64 {
	if len(t) < 2 {
		return 0
	}
	d := make([]float64, len(t)-1)
	for i := range d {
		d[i] = t[i+1] - t[i]
	}
	sort.Float64s(d)
	return d[len(d)/2]
}

// noiseSD estimates the standard deviation of white noise on y from its
// successive differences: the median absolute difference / (0.6745·√2)
// (the MAD estimator of a normal scale; common practice, no source).
func noiseSD(y []float64) float64 {
	if len(y) < 3 {
		return 0
	}
	d := make([]float64, len(y)-1)
	for i := range d {
		d[i] = math.Abs(y[i+1] - y[i])
	}
	sort.Float64s(d)
	return d[len(d)/2] / (0.6745 * math.Sqrt2)
}

// flatTop finds the longest run of samples of the step at its largest
// |effort|, and returns its duration and that level.
func flatTop(tr metrics.Trace, st metrics.Step) (dur, level metrics.Value) {
	if tr.Effort == nil {
		why := "the record has no effort"
		return metrics.Unknown(why), metrics.Unknown(why)
	}
	e := tr.Effort[st.Start:st.End]
	peak := 0.0
	for _, v := range e {
		peak = math.Max(peak, math.Abs(v))
	}
	if peak == 0 {
		why := "the effort is zero throughout the step"
		return metrics.Unknown(why), metrics.Unknown(why)
	}
	run, best := 0, 0
	for _, v := range e {
		if math.Abs(v) >= peak*(1-FlatTolerance) {
			run++
			best = max(best, run)
		} else {
			run = 0
		}
	}
	return metrics.Known(float64(best-1) * samplePeriod(tr.Time[st.Start:st.End])), metrics.Known(peak)
}

// effortLeave is when the effort first changes from its mean level before
// the step by LeaveShare of its largest change over the step.
func effortLeave(tr metrics.Trace, st metrics.Step) metrics.Value {
	if tr.Effort == nil {
		return metrics.Unknown("the record has no effort")
	}
	if st.Start == st.PreStart {
		return metrics.Unknown("the step has no pre-step window")
	}
	e0, big := mean(tr.Effort[st.PreStart:st.Start]), 0.0
	for _, v := range tr.Effort[st.Start:st.End] {
		big = math.Max(big, math.Abs(v-e0))
	}
	if big == 0 {
		return metrics.Unknown("the effort does not change over the step")
	}
	for i := st.Start; i < st.End; i++ {
		if math.Abs(tr.Effort[i]-e0) >= LeaveShare*big {
			return metrics.Known(tr.Time[i] - tr.Time[st.Start])
		}
	}
	return metrics.Unknown("the effort does not change over the step")
}

// responseLeave is when the response first moves from its pre-step level
// towards the command by ResponseLeaveShare of the step, or NoiseMultiple
// noise standard deviations if more.
func responseLeave(tr metrics.Trace, st metrics.Step, noise float64) metrics.Value {
	var y0 float64
	for _, v := range tr.Response[st.PreStart:st.Start] {
		y0 += v
	}
	if st.Start == st.PreStart {
		return metrics.Unknown("the step has no pre-step window")
	}
	y0 /= float64(st.Start - st.PreStart)
	size := st.To - st.From
	bar := math.Max(ResponseLeaveShare*math.Abs(size), NoiseMultiple*noise)
	for i := st.Start; i < st.End; i++ {
		if (tr.Response[i]-y0)*math.Copysign(1, size) >= bar {
			return metrics.Known(tr.Time[i] - tr.Time[st.Start])
		}
	}
	return metrics.Unknown(fmt.Sprintf("the response never moves by %g towards the command", bar))
}

// finalLevel is the offset |mean − command| over the step's final window,
// the drift, the mean of its second half less that of its first, and the
// ripple, the standard deviation about the mean.
func finalLevel(tr metrics.Trace, st metrics.Step, share float64) (offset, drift, ripple metrics.Value) {
	w := window(st, share)
	if w < 6 {
		why := metrics.Unknown("too few samples in the final window")
		return why, why, why
	}
	y := tr.Response[st.End-w : st.End]
	h := w / 2
	a, b, m := mean(y[:h]), mean(y[h:]), mean(y)
	var ss float64
	for _, v := range y {
		ss += (v - m) * (v - m)
	}
	return metrics.Known(math.Abs(m - st.To)), metrics.Known(b - a), metrics.Known(math.Sqrt(ss / float64(w-1)))
}

func mean(y []float64) float64 {
	var s float64
	for _, v := range y {
		s += v
	}
	return s / float64(len(y))
}
