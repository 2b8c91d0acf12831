package digest

import (
	"cmp"
	"math"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/metrics"
)

// Comparison sets the model's prediction of one metric for one nominal step
// beside what the batch achieved on the matching recorded steps.
type Comparison struct {
	From, To  float64 // the nominal step
	Metric    metrics.Name
	Kind      string        // "realised" or "ideal"
	Predicted metrics.Value // unknown with the reason when not predicted
	// Measured counts the matching steps on which the metric was measured;
	// Steps counts the matching steps.
	Measured, Steps int
	// Mean, Min and Max of the measured values; unknown when none was.
	Mean, Min, Max metrics.Value
}

// Gap is the batch mean minus the prediction, unknown when either is.
func (c Comparison) Gap() metrics.Value {
	if !c.Predicted.OK {
		return metrics.Unknown("not predicted: " + c.Predicted.Why)
	}
	if !c.Mean.OK {
		return metrics.Unknown(c.Mean.Why)
	}
	return metrics.Known(c.Mean.V - c.Predicted.V)
}

// compare returns, for every nominal step of the batch's model and every
// limited metric, the prediction (realised when b.Model.Realised, else
// ideal) and the mean, lowest and highest measured value over the recorded
// steps with the same command change (levels within 1 % of the step size).
// It returns nil when the batch has no model.
func compare(b *acceptance.Batch) []Comparison {
	if b.Model == nil {
		return nil
	}
	var out []Comparison
	for i := range b.Model.Nominal {
		n := &b.Model.Nominal[i]
		pred, _, kind := b.Model.Compared(n)
		for _, m := range LimitedMetrics(b) {
			c := Comparison{From: n.From, To: n.To, Metric: m, Kind: kind}
			c.Predicted = pred.Metrics.Get(m)
			if !c.Predicted.OK {
				c.Predicted = metrics.Unknown(cmp.Or(pred.Metrics.Reason(m), "the model did not predict this metric"))
			}
			sum, lo, hi := 0.0, math.Inf(1), math.Inf(-1)
			for _, u := range b.Units {
				for _, s := range u.Steps {
					if !n.Matches(s.From, s.To) {
						continue
					}
					c.Steps++
					v, ok := s.Metrics.Lookup(m)
					if !ok || !v.OK {
						continue
					}
					c.Measured++
					sum += v.V
					lo, hi = math.Min(lo, v.V), math.Max(hi, v.V)
				}
			}
			if c.Measured > 0 {
				c.Mean = metrics.Known(sum / float64(c.Measured))
				c.Min, c.Max = metrics.Known(lo), metrics.Known(hi)
			} else {
				why := "no matching step was measured"
				if c.Steps == 0 {
					why = "no recorded step has this command change"
				}
				c.Mean, c.Min, c.Max = metrics.Unknown(why), metrics.Unknown(why), metrics.Unknown(why)
			}
			out = append(out, c)
		}
	}
	return out
}
