package batch

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"sync"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/causes"
	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// predictor attaches the model's prediction to every step of a batch. A
// prediction depends only on the command change, the step's duration and the
// sample period, so it is computed once per distinct step and shared.
type predictor struct {
	sys      *model.System
	spec     *spec.Spec
	opts     metrics.Options
	realised bool

	mu    sync.Mutex
	cache map[predKey]*predEntry
}

type predKey struct {
	from, to, duration, dt float64
}

type predEntry struct {
	once     sync.Once
	ideal    acceptance.Prediction
	realised acceptance.Prediction
	idealTr  *metrics.Trace
	realTr   *metrics.Trace
	realStep *metrics.Step // the step of realTr; nil when it has none
	err      error
	failed   acceptance.Prediction // every metric unknown with err, when err is set
}

// newPredictor builds the spec's model; it returns nil and no error when the
// spec has no model, and nil with the error when the model cannot be built
// (the batch then reports the error and judges units without predictions).
func newPredictor(spec *spec.Spec) (*predictor, error) {
	if spec.Model == nil {
		return nil, nil
	}
	sys, err := model.Build(*spec.Model)
	if err != nil {
		return nil, fmt.Errorf("model: %w", err)
	}
	return &predictor{sys: sys, spec: spec, opts: spec.Options(), realised: sys.Realised(), cache: map[predKey]*predEntry{}}, nil
}

// entry returns the shared prediction for a step, computing it on first use.
func (p *predictor) entry(k predKey) *predEntry {
	p.mu.Lock()
	e, ok := p.cache[k]
	if !ok {
		e = &predEntry{}
		p.cache[k] = e
	}
	p.mu.Unlock()
	e.once.Do(func() {
		defer func() {
			if e.realTr == nil {
				return
			}
			if st := metrics.FindSteps(*e.realTr, p.spec.Steps.MinChange); len(st) > 0 {
				e.realStep = &st[0]
			}
		}()
		fail := func(err error) {
			e.err = err
			e.failed = acceptance.Prediction{Kind: p.kind().String()}
			for _, n := range metrics.Names {
				e.failed.Metrics.Set(n, metrics.Unknown(err.Error()))
			}
		}
		id, err := p.sys.Simulate(model.Ideal, k.from, k.to, k.duration, k.dt)
		if err != nil {
			fail(err)
			return
		}
		e.idealTr, e.ideal = &id, p.measure(id, model.Ideal)
		if !p.realised {
			// Without a loop or actuator section the realised loop is the
			// ideal one: the same record and metrics.
			e.realTr, e.realised = e.idealTr, e.ideal
			e.realised.Kind = model.Realised.String()
			return
		}
		re, err := p.sys.Simulate(model.Realised, k.from, k.to, k.duration, k.dt)
		if err != nil {
			// The realised loop alone failed: the ideal prediction still
			// stands and is reported beside the failure.
			fail(err)
			return
		}
		e.realTr, e.realised = &re, p.measure(re, model.Realised)
	})
	return e
}

// measure runs the metrics package over a simulated trace: the very code
// that measured the logs.
func (p *predictor) measure(tr metrics.Trace, kind model.Kind) acceptance.Prediction {
	return MeasurePrediction(tr, kind.String(), p.spec.Steps.MinChange, p.opts)
}

// MeasurePrediction measures the first step of a simulated trace with the
// metrics package, the code that measures the logs; kind names the
// prediction ("ideal" or "realised"). Without a step every metric is
// unknown with the reason.
func MeasurePrediction(tr metrics.Trace, kind string, minChange float64, o metrics.Options) acceptance.Prediction {
	out := acceptance.Prediction{Kind: kind}
	steps := metrics.FindSteps(tr, minChange)
	if len(steps) == 0 {
		for _, n := range metrics.Names {
			out.Metrics.Set(n, metrics.Unknown("the simulated command has no step"))
		}
		return out
	}
	out.Metrics = acceptance.MetricSetOf(metrics.MeasureStep(tr, steps[0], o))
	return out
}

// key rounds a step's shape so that steps of one test plan share a
// prediction: durations to 10 ms, the sample period to 1 µs.
func (p *predictor) key(m metrics.StepMetrics, tr metrics.Trace) predKey {
	dt := medianPeriod(tr, m.Step)
	return predKey{
		from:     m.Step.From,
		to:       m.Step.To,
		duration: math.Max(0.01, math.Round(m.Duration*100)/100),
		dt:       math.Round(dt*1e6) / 1e6,
	}
}

// attach adds the prediction and the gaps to a judged step.
func (p *predictor) attach(sr *acceptance.StepResult, m metrics.StepMetrics, tr metrics.Trace) {
	if m.Step.Profiled() {
		// The model is simulated for an ideal step; set beside a profiled
		// move its numbers would be gaps of the command, not of the loop.
		sr.Predicted = p.notPredicted(m)
		return
	}
	k := p.key(m, tr)
	if !(k.dt > 0) {
		return
	}
	e := p.entry(k)
	if e.err != nil {
		// Shared by every step of this shape: read-only from here on.
		sr.Predicted = &e.failed
		return
	}
	pr := &e.ideal
	if p.realised {
		pr = &e.realised
	}
	sr.Predicted = pr
	sr.Gap = acceptance.GapBetween(&sr.Metrics, &pr.Metrics)
}

// notPredicted is the prediction of a profiled move: every metric unknown,
// with the reason.
func (p *predictor) notPredicted(m metrics.StepMetrics) *acceptance.Prediction {
	why := metrics.Unknown(fmt.Sprintf("not predicted: the model predicts the response to an ideal step, and step %d is a move profiled over %s s",
		m.Step.Index, strconv.FormatFloat(m.MoveTime.V, 'g', 4, 64)))
	if !m.MoveTime.OK {
		why = metrics.Unknown(fmt.Sprintf("not predicted: the model predicts the response to an ideal step, and step %d is a profiled move", m.Step.Index))
	}
	out := &acceptance.Prediction{Kind: p.kind().String()}
	for _, n := range metrics.Names {
		out.Metrics.Set(n, why)
	}
	return out
}

func (p *predictor) kind() model.Kind {
	if p.realised {
		return model.Realised
	}
	return model.Ideal
}

// fit identifies the unit's effective closed loop from its first step.
func (p *predictor) fit(tr metrics.Trace, st metrics.Step) *acceptance.Fit {
	f := &acceptance.Fit{Step: st.Index}
	var err error
	var id model.Identified
	if st.Profiled() {
		err = fmt.Errorf("step %d is a profiled move; the closed loop is identified from an ideal step only", st.Index)
	} else {
		id, err = model.Identify(tr, st, p.sys.Kp())
	}
	if err != nil {
		why := err.Error()
		f.Why = why
		f.StaticGain, f.Damping, f.NaturalFrequency, f.DeadTime, f.RMSResidual =
			metrics.Unknown(why), metrics.Unknown(why), metrics.Unknown(why), metrics.Unknown(why), metrics.Unknown(why)
		return f
	}
	f.StaticGain = metrics.Known(id.StaticGain)
	f.Damping = metrics.Known(id.Damping)
	f.NaturalFrequency = metrics.Known(id.NaturalFrequency)
	f.DeadTime = metrics.Known(id.DeadTime)
	f.RMSResidual = metrics.Known(id.RMSResidual)
	return f
}

// summary lists the distinct predicted steps, in a fixed order.
func (p *predictor) summary() *acceptance.ModelSummary {
	ms := &acceptance.ModelSummary{Config: p.sys.Config(), Plant: p.sys.Plant().String(), Realised: p.realised}
	p.mu.Lock()
	keys := make([]predKey, 0, len(p.cache))
	for k := range p.cache {
		keys = append(keys, k)
	}
	p.mu.Unlock()
	sort.Slice(keys, func(i, j int) bool {
		a, b := keys[i], keys[j]
		// Out-steps (from the lower level) first, then by size and duration.
		if math.Abs(a.to-a.from) != math.Abs(b.to-b.from) {
			return math.Abs(a.to-a.from) > math.Abs(b.to-b.from)
		}
		if a.from != b.from {
			return a.from < b.from
		}
		if a.to != b.to {
			return a.to < b.to
		}
		if a.duration != b.duration {
			return a.duration > b.duration
		}
		return a.dt < b.dt
	})
	seen := map[string]bool{}
	defer func() { ms.Designs = p.designs(ms.Nominal) }()
	for _, k := range keys {
		e := p.cache[k]
		if e.err != nil {
			if !seen[e.err.Error()] {
				ms.Warnings = append(ms.Warnings, "prediction failed: "+e.err.Error())
				seen[e.err.Error()] = true
			}
			if e.idealTr != nil { // the realised loop alone failed
				ms.Nominal = append(ms.Nominal, acceptance.NominalPrediction{
					From: k.from, To: k.to, Ideal: e.ideal, Realised: e.failed, IdealTrace: e.idealTr,
				})
			}
			continue
		}
		ms.Nominal = append(ms.Nominal, acceptance.NominalPrediction{
			From: k.from, To: k.to, Ideal: e.ideal, Realised: e.realised,
			IdealTrace: e.idealTr, RealisedTrace: e.realTr,
		})
	}
	return ms
}

// medianPeriod is the median sample period over a step (the log's clock).
func medianPeriod(tr metrics.Trace, st metrics.Step) float64 {
	lo, hi := st.Start, st.End
	if hi-lo < 2 {
		return math.NaN()
	}
	var buf [201]float64 // on the stack: this runs for every step
	n := min(hi-lo-1, len(buf))
	d := buf[:n]
	for i := 0; i < n; i++ {
		d[i] = tr.Time[lo+i+1] - tr.Time[lo+i]
	}
	sort.Float64s(d)
	return d[n/2]
}

// designs returns the gains the model gives, on the first nominal step, for
// the spec's overshoot limit (when it has one) and for critical damping.
func (p *predictor) designs(nominal []acceptance.NominalPrediction) []acceptance.GainDesign {
	if len(nominal) == 0 {
		return nil
	}
	from, to := nominal[0].From, nominal[0].To
	type want struct {
		target model.Target
		name   string
		value  float64
	}
	var wants []want
	if l, ok := p.spec.Limits[metrics.Overshoot]; ok && l.Max != nil && *l.Max > 0 {
		wants = append(wants, want{model.OvershootTarget(*l.Max), string(metrics.Overshoot), *l.Max})
	}
	wants = append(wants, want{model.DampingTarget(1), "damping", 1})
	var out []acceptance.GainDesign
	for _, w := range wants {
		g := acceptance.GainDesign{Target: w.name, Value: w.value}
		d, err := p.sys.DesignGain(w.target, from, to)
		var whys []string
		if d.Ideal != nil {
			k := d.Ideal.Kp
			g.KpIdeal = &k
		} else if d.IdealWhy != "" {
			whys = append(whys, model.LoopWhy("ideal", d.IdealWhy))
		}
		if d.Realised != nil {
			k := d.Realised.Kp
			g.KpRealised = &k
		} else if d.RealisedWhy != "" && p.realised {
			whys = append(whys, model.LoopWhy("realised", d.RealisedWhy))
		}
		if err != nil && len(whys) == 0 {
			whys = append(whys, err.Error())
		}
		if len(whys) > 0 {
			g.Why = strings.Join(whys, "; ")
		}
		out = append(out, g)
	}
	return out
}

// causes names the likely causes a step's own evidence indicates against
// the realised prediction of the same step (acceptance/causes); none for a
// profiled move or a step without a prediction.
func (p *predictor) causes(tr metrics.Trace, m metrics.StepMetrics) causes.Cause {
	if m.Step.Profiled() {
		return causes.None
	}
	k := p.key(m, tr)
	if !(k.dt > 0) {
		return causes.None
	}
	e := p.entry(k)
	if e.err != nil || e.realStep == nil {
		return causes.None
	}
	return causes.Measure(causes.Input{
		Record: tr, Step: m.Step, Predicted: *e.realTr, PredStep: *e.realStep,
		Band: p.opts.Band, FinalWindow: p.opts.FinalWindow,
	}).Causes
}

// spreadCauses adds the gain or inertia spread to the units whose fitted
// loop lies apart from the batch's when the batch spreads
// (causes.Judge, on each unit's fit of its first step).
func spreadCauses(units []acceptance.UnitResult) {
	ev := make([][]causes.StepEvidence, len(units))
	for i := range units {
		f := units[i].Fit
		if f == nil || !f.NaturalFrequency.OK || !f.StaticGain.OK || units[i].Causes == nil {
			continue
		}
		ev[i] = []causes.StepEvidence{{
			WnSquared:  metrics.Known(f.NaturalFrequency.V * f.NaturalFrequency.V),
			StaticGain: f.StaticGain,
		}}
	}
	named, _ := causes.Judge(ev)
	for i, c := range named {
		if c&causes.GainSpread != 0 {
			units[i].Causes = append(units[i].Causes, causes.GainSpread.Key())
		}
	}
}
