package batch

import (
	"fmt"
	"math"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// Evidence thresholds (stepgate's choices; common practice, no source).
const (
	// saturationShare is how close to the limit |effort| must be to count
	// as saturated.
	saturationShare = 0.98
	// flatRun is the fewest consecutive samples at the largest |effort| that
	// count as a flat top when the spec gives no effort limit.
	flatRun = 5
)

// stepEvidence observes, in the record of one step, what the metrics do not
// say: whether the drive effort sat at its limit during the rise, and how
// much the response still drifted in the final window. It never judges: the
// report turns the evidence into worded indications. limit is the record's
// effort limit (see effortLimit), found once per record.
func stepEvidence(tr metrics.Trace, m metrics.StepMetrics, o metrics.Options, limit metrics.Value) *acceptance.StepEvidence {
	ev := &acceptance.StepEvidence{}
	st := m.Step
	ev.FinalDrift = finalDrift(tr, st, o.FinalWindow)
	if tr.Effort == nil {
		why := "the log has no effort column"
		ev.EffortLimit, ev.EffortSaturatedPct = metrics.Unknown(why), metrics.Unknown(why)
		return ev
	}
	ev.EffortLimit = limit
	if !limit.OK {
		ev.EffortSaturatedPct = metrics.Unknown(limit.Why)
		return ev
	}
	if !m.InitialValue.OK || !m.FinalValue.OK {
		ev.EffortSaturatedPct = metrics.Unknown("the rise could not be located: " + firstWhy(m.InitialValue, m.FinalValue))
		return ev
	}
	// The rise runs from the step instant to the upper rise-level crossing.
	a, b := m.InitialValue.V, m.FinalValue.V
	t, y := tr.Time[st.Start:st.End], tr.Response[st.Start:st.End]
	up := metrics.CrossingTime(t, y, a+o.RiseHigh*(b-a), b > a)
	if !up.OK {
		ev.EffortSaturatedPct = metrics.Unknown("the response never reaches the upper rise level")
		return ev
	}
	end := t[0] + up.V
	var n, sat int
	for i := st.Start; i < st.End && tr.Time[i] <= end; i++ {
		n++
		if math.Abs(tr.Effort[i]) >= saturationShare*limit.V {
			sat++
		}
	}
	if n == 0 {
		ev.EffortSaturatedPct = metrics.Unknown("no samples in the rise")
		return ev
	}
	ev.EffortSaturatedPct = metrics.Known(100 * float64(sat) / float64(n))
	return ev
}

// effortLimit is the spec's actuator effort limit, else the largest |effort|
// of the record when the record holds it flat for flatRun samples or more.
func effortLimit(tr metrics.Trace, spec *spec.Spec) metrics.Value {
	if spec.Model != nil && spec.Model.Actuator != nil && spec.Model.Actuator.EffortLimit > 0 {
		return metrics.Known(spec.Model.Actuator.EffortLimit)
	}
	peak := 0.0
	for _, e := range tr.Effort {
		peak = math.Max(peak, math.Abs(e))
	}
	if peak == 0 {
		return metrics.Unknown("the effort is zero throughout the record")
	}
	run, best := 0, 0
	for _, e := range tr.Effort {
		if math.Abs(e) >= peak*(1-1e-9) {
			run++
			best = max(best, run)
		} else {
			run = 0
		}
	}
	if best < flatRun {
		return metrics.Unknown(fmt.Sprintf("no effort limit in the spec and the record never holds its largest effort %.4g flat for %d samples", peak, flatRun))
	}
	return metrics.Known(peak)
}

// finalDrift is the difference between the mean of the second and the first
// half of the step's final window.
func finalDrift(tr metrics.Trace, st metrics.Step, window float64) metrics.Value {
	n := st.End - st.Start
	w := int(math.Round(window * float64(n)))
	if w < 6 {
		return metrics.Unknown("too few samples in the final window")
	}
	lo := st.End - w
	half := w / 2
	var a, b float64
	for i := lo; i < lo+half; i++ {
		a += tr.Response[i]
	}
	for i := lo + half; i < st.End; i++ {
		b += tr.Response[i]
	}
	return metrics.Known(b/float64(st.End-lo-half) - a/float64(half))
}

func firstWhy(vs ...metrics.Value) string {
	for _, v := range vs {
		if !v.OK {
			return v.Why
		}
	}
	return ""
}
