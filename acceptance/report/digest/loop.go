package digest

import (
	"fmt"
	"math"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/metrics"
)

// LoopSummary sets the effective closed loops identified from the units'
// steps (acceptance.Fit) beside the model's.
type LoopSummary struct {
	// Units counts the units with a fit attempt; Fitted those whose fit
	// gave values.
	Units, Fitted int
	// The four quantities of the fitted loop G·ωn²/(s² + 2ζωn s + ωn²)
	// behind a dead time.
	Damping, NaturalFrequency, StaticGain, DeadTime LoopStat
	// Kp is the proportional gain of the model's controller.
	Kp float64
	// ModelOrder is the order of the model's ideal closed loop; 0 when the
	// model could not be built.
	ModelOrder int
	// ModelNote says how the model's values were obtained, e.g. "ideal
	// closed loop, second order" or why they are missing.
	ModelNote string
	// FitKind is the prediction ("realised" or "ideal") whose record was
	// identified the way the units were; FitWhy why that failed, if it did.
	FitKind, FitWhy string
}

// Quantities returns the four quantities in print order.
func (l *LoopSummary) Quantities() []LoopStat {
	return []LoopStat{l.Damping, l.NaturalFrequency, l.StaticGain, l.DeadTime}
}

// LoopStat is one quantity of the identified loop over the batch.
type LoopStat struct {
	Name  string // "damping", "natural_frequency_rad_s", "static_gain", "dead_time_s"
	Label string // "damping ratio ζ", ...
	Unit  string // "", "rad/s", "s"
	// N counts the units whose fit gave this quantity.
	N int
	// Mean, SD (n − 1), Min, Max over those units; CV = SD/Mean, the
	// coefficient of variation.
	Mean, SD, Min, Max, CV metrics.Value
	// Model is the model's value: ζ, ωn and G of its ideal closed loop
	// under the controller (the dominant pole pair beyond second order),
	// and for the dead time the plant dead time plus, for a realised loop,
	// the loop delay and half a sample period (a zero-order hold acts
	// roughly as a delay of half a sample period; G. F. Franklin,
	// J. D. Powell, M. L. Workman, Digital Control of Dynamic Systems, 3rd
	// ed., from memory).
	Model metrics.Value
	// ModelFit is the same identification applied to the model's own
	// predicted step: the like-for-like value to compare the units with.
	ModelFit metrics.Value
}

// summariseLoop returns nil without a model.
func summariseLoop(b *acceptance.Batch) *LoopSummary {
	if b.Model == nil {
		return nil
	}
	cfg := b.Model.Config
	l := &LoopSummary{
		Kp:               cfg.Controller.Kp,
		Damping:          LoopStat{Name: "damping", Label: "damping ratio ζ"},
		NaturalFrequency: LoopStat{Name: "natural_frequency_rad_s", Label: "natural frequency ωn", Unit: "rad/s"},
		StaticGain:       LoopStat{Name: "static_gain", Label: "static gain G"},
		DeadTime:         LoopStat{Name: "dead_time_s", Label: "dead time θ", Unit: "s"},
	}
	a := l.accumulate(b)
	stats := []*LoopStat{&l.Damping, &l.NaturalFrequency, &l.StaticGain, &l.DeadTime}
	for q, st := range stats {
		a.set(st, q, l.Units)
	}
	l.modelValues(b)
	l.modelFit(b)
	return l
}

// fitQuantities are the four quantities of a fit, in the order of the
// accumulators: damping, natural frequency, static gain, dead time.
func fitQuantities(f *acceptance.Fit) [4]metrics.Value {
	return [4]metrics.Value{f.Damping, f.NaturalFrequency, f.StaticGain, f.DeadTime}
}

// fitAccum holds the count, mean, range and sum of squared deviations of
// each fitted quantity over the units.
type fitAccum struct {
	n                [4]int
	mean, ss, lo, hi [4]float64
}

// accumulate passes over the units' fits twice, for the mean and range and
// then the deviations, counting the units with a fit and with a fitted
// value in l.
func (l *LoopSummary) accumulate(b *acceptance.Batch) *fitAccum {
	a := &fitAccum{}
	var sum [4]float64
	for q := range a.lo {
		a.lo[q], a.hi[q] = math.Inf(1), math.Inf(-1)
	}
	for i := range b.Units {
		f := b.Units[i].Fit
		if f == nil {
			continue
		}
		l.Units++
		any := false
		for q, v := range fitQuantities(f) {
			if v.OK && finite(v.V) {
				any = true
				a.n[q]++
				sum[q] += v.V
				a.lo[q], a.hi[q] = math.Min(a.lo[q], v.V), math.Max(a.hi[q], v.V)
			}
		}
		if any {
			l.Fitted++
		}
	}
	for q := range a.mean {
		if a.n[q] > 0 {
			a.mean[q] = sum[q] / float64(a.n[q])
		}
	}
	for i := range b.Units {
		if f := b.Units[i].Fit; f != nil {
			for q, v := range fitQuantities(f) {
				if v.OK && finite(v.V) {
					d := v.V - a.mean[q]
					a.ss[q] += d * d
				}
			}
		}
	}
	return a
}

// set fills st with the statistics of quantity q, unknown with a reason
// where there are too few fitted units.
func (a *fitAccum) set(st *LoopStat, q, units int) {
	st.N = a.n[q]
	if a.n[q] == 0 {
		why := "no unit's step could be fitted"
		if units == 0 {
			why = "no unit has a fit"
		}
		st.Mean, st.SD, st.Min, st.Max, st.CV = metrics.Unknown(why), metrics.Unknown(why), metrics.Unknown(why), metrics.Unknown(why), metrics.Unknown(why)
		return
	}
	st.Mean, st.Min, st.Max = metrics.Known(a.mean[q]), metrics.Known(a.lo[q]), metrics.Known(a.hi[q])
	if a.n[q] < 2 {
		why := "one fitted unit; a standard deviation needs at least 2"
		st.SD, st.CV = metrics.Unknown(why), metrics.Unknown(why)
		return
	}
	sd := math.Sqrt(a.ss[q] / float64(a.n[q]-1))
	st.SD = metrics.Known(sd)
	if a.mean[q] == 0 {
		st.CV = metrics.Unknown("the mean is 0")
	} else {
		st.CV = metrics.Known(sd / math.Abs(a.mean[q]))
	}
}

// modelValues sets the analytic values of the model's ideal closed loop.
func (l *LoopSummary) modelValues(b *acceptance.Batch) {
	cfg := b.Model.Config
	delay := cfg.PlantDeadTime
	if b.Model.Realised && cfg.Loop != nil {
		delay += cfg.Loop.Delay + cfg.Loop.SamplePeriod/2
	}
	l.DeadTime.Model = metrics.Known(delay)
	sys, err := model.Build(cfg)
	if err != nil {
		why := "the model cannot be built: " + err.Error()
		l.ModelNote = why
		l.Damping.Model, l.NaturalFrequency.Model, l.StaticGain.Model = metrics.Unknown(why), metrics.Unknown(why), metrics.Unknown(why)
		return
	}
	cl := sys.ClosedLoop()
	num, den := trimLead(cl.Numerator), trimLead(cl.Denominator)
	l.ModelOrder = len(den) - 1
	if len(den) > 0 && den[len(den)-1] != 0 && len(num) > 0 {
		l.StaticGain.Model = metrics.Known(num[len(num)-1] / den[len(den)-1])
	} else {
		l.StaticGain.Model = metrics.Unknown("the closed loop has a pole at s = 0")
	}
	switch {
	case l.ModelOrder == 2 && den[0] != 0 && den[2]/den[0] > 0:
		wn := math.Sqrt(den[2] / den[0])
		l.NaturalFrequency.Model = metrics.Known(wn)
		l.Damping.Model = metrics.Known(den[1] / den[0] / (2 * wn))
		l.ModelNote = fmt.Sprintf("ideal closed loop under kp = %s, second order", Num(l.Kp))
		return
	case l.ModelOrder < 2:
		why := fmt.Sprintf("the model's closed loop is of order %d: it has no damping ratio or natural frequency", l.ModelOrder)
		l.ModelNote = why
		l.Damping.Model, l.NaturalFrequency.Model = metrics.Unknown(why), metrics.Unknown(why)
		return
	}
	poles, err := sys.Poles()
	if err != nil {
		why := "the model's poles cannot be found: " + err.Error()
		l.ModelNote = why
		l.Damping.Model, l.NaturalFrequency.Model = metrics.Unknown(why), metrics.Unknown(why)
		return
	}
	// Poles come sorted by decreasing real part: the first complex one is
	// the dominant pair.
	for _, p := range poles {
		if w := math.Hypot(real(p), imag(p)); w > 0 && math.Abs(imag(p)) > 1e-9*w {
			l.NaturalFrequency.Model = metrics.Known(w)
			l.Damping.Model = metrics.Known(-real(p) / w)
			l.ModelNote = fmt.Sprintf("dominant pole pair of the ideal closed loop under kp = %s (order %d)", Num(l.Kp), l.ModelOrder)
			return
		}
	}
	why := fmt.Sprintf("the model's closed loop is of order %d with real poles only: no single damping ratio", l.ModelOrder)
	l.ModelNote = why
	l.Damping.Model, l.NaturalFrequency.Model = metrics.Unknown(why), metrics.Unknown(why)
}

// modelFit identifies the model's first nominal predicted step the way the
// batch identified each unit.
func (l *LoopSummary) modelFit(b *acceptance.Batch) {
	set := func(why string) {
		l.FitWhy = why
		for _, st := range []*LoopStat{&l.Damping, &l.NaturalFrequency, &l.StaticGain, &l.DeadTime} {
			st.ModelFit = metrics.Unknown(why)
		}
	}
	if len(b.Model.Nominal) == 0 {
		set("the model predicted no step")
		return
	}
	n := b.Model.Nominal[0]
	_, tr, kind := b.Model.Compared(&n)
	l.FitKind = kind
	if tr == nil || tr.Len() == 0 {
		set("the " + kind + " prediction's record was not kept")
		return
	}
	minChange := math.Abs(n.To-n.From) / 2
	if b.SpecDoc != nil && b.SpecDoc.Steps.MinChange > 0 {
		minChange = b.SpecDoc.Steps.MinChange
	}
	steps := metrics.FindSteps(*tr, minChange)
	if len(steps) == 0 {
		set("the " + kind + " prediction's record has no step")
		return
	}
	kp := l.Kp
	if !(kp > 0) {
		kp = 1 // the gain only labels the fit's reference test
	}
	id, err := model.Identify(*tr, steps[0], kp)
	if err != nil {
		set("the " + kind + " prediction could not be fitted: " + err.Error())
		return
	}
	l.Damping.ModelFit = metrics.Known(id.Damping)
	l.NaturalFrequency.ModelFit = metrics.Known(id.NaturalFrequency)
	l.StaticGain.ModelFit = metrics.Known(id.StaticGain)
	l.DeadTime.ModelFit = metrics.Known(id.DeadTime)
}

func trimLead(p []float64) []float64 {
	for len(p) > 0 && p[0] == 0 {
		p = p[1:]
	}
	return p
}
