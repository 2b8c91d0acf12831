package pdfreport

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"math"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// The test batch is built from the closed-form second-order step response
// y(t) = G·[1 − e^(−σt)(cos ωd t + (σ/ωd) sin ωd t)], σ = ζωn,
// ωd = ωn√(1−ζ²) (K. Ogata, Modern Control Engineering, 5th ed., §5-3), and
// its metrics from the closed-form relations of the same section: peak time
// π/ωd, overshoot exp(−πζ/√(1−ζ²)), rise time (π − β)/ωd with
// β = arctan(ωd/σ) (the 0–100 % rise time), settling time 4/σ (2 %
// envelope approximation). The writers do not measure; these numbers only have to be
// the kind a batch carries.

func ptr(v float64) *float64 { return &v }

func sha(s string) string {
	h := sha256.Sum256([]byte(s))
	return hex.EncodeToString(h[:])
}

// secondOrder returns a record of steps of the closed loop (ζ, ωn) at the
// given instants, sampled every dt, with command levels levels[k] from
// steps[k] on.
func secondOrder(zeta, wn, dt, end float64, steps, levels []float64) *metrics.Trace {
	tr := &metrics.Trace{}
	sigma := zeta * wn
	wd := wn * math.Sqrt(1-zeta*zeta)
	for t := 0.0; t <= end+1e-12; t += dt {
		cmd, y := 0.0, 0.0
		prev := 0.0
		for k, ts := range steps {
			if t+1e-12 >= ts {
				cmd = levels[k]
				tau := t - ts
				y += (levels[k] - prev) * (1 - math.Exp(-sigma*tau)*(math.Cos(wd*tau)+sigma/wd*math.Sin(wd*tau)))
			}
			prev = levels[k]
		}
		tr.Time = append(tr.Time, t)
		tr.Command = append(tr.Command, cmd)
		tr.Response = append(tr.Response, y)
	}
	return tr
}

// closedFormMetrics returns the metrics of one step of the closed loop.
func closedFormMetrics(zeta, wn, from, to float64) map[metrics.Name]metrics.Value {
	sigma := zeta * wn
	wd := wn * math.Sqrt(1-zeta*zeta)
	mp := math.Exp(-math.Pi * zeta / math.Sqrt(1-zeta*zeta))
	size := to - from
	beta := math.Atan2(wd, sigma)
	return map[metrics.Name]metrics.Value{
		metrics.StepSize:            metrics.Known(size),
		metrics.InitialValue:        metrics.Known(from),
		metrics.FinalValue:          metrics.Known(to),
		metrics.DeadTime:            metrics.Known(0),
		metrics.RiseTime:            metrics.Known((math.Pi - beta) / wd),
		metrics.PeakValue:           metrics.Known(to + mp*size),
		metrics.PeakTime:            metrics.Known(math.Pi / wd),
		metrics.Overshoot:           metrics.Known(100 * mp),
		metrics.SettlingTime:        metrics.Known(4 / sigma),
		metrics.SteadyStateError:    metrics.Known(0),
		metrics.SteadyStateErrorPct: metrics.Known(0),
	}
}

// judge applies the limits to a step's metrics, the way the acceptance
// package reports it, so the fixture carries consistent checks.
func judge(limits map[metrics.Name]spec.Limit, m map[metrics.Name]metrics.Value) ([]acceptance.Check, acceptance.Verdict, []acceptance.Reason) {
	verdict := acceptance.Pass
	var reasons []acceptance.Reason
	var checks []acceptance.Check
	for _, name := range metrics.Names {
		l, ok := limits[name]
		if !ok {
			continue
		}
		v := m[name]
		c := acceptance.Check{Metric: name, Min: l.Min, Max: l.Max, Verdict: acceptance.Pass}
		switch {
		case !v.OK:
			c.Verdict = acceptance.Invalid
			c.Reason = "not measured: " + v.Why
			if verdict == acceptance.Pass {
				verdict = acceptance.Invalid
			}
		case l.Max != nil && v.V > *l.Max:
			c.Value = ptr(v.V)
			c.Verdict = acceptance.Fail
			c.Reason = fmt.Sprintf("%s %.4g above max %g", name, v.V, *l.Max)
			verdict = acceptance.Fail
		case l.Min != nil && v.V < *l.Min:
			c.Value = ptr(v.V)
			c.Verdict = acceptance.Fail
			c.Reason = fmt.Sprintf("%s %.4g below min %g", name, v.V, *l.Min)
			verdict = acceptance.Fail
		default:
			c.Value = ptr(v.V)
		}
		if c.Reason != "" {
			reasons = append(reasons, acceptance.Reason{Metric: name, Step: 1, Text: c.Reason})
		}
		checks = append(checks, c)
	}
	return checks, verdict, reasons
}

type unitSpec struct {
	serial, file string
	zeta, wn     float64
	keepTrace    bool
	unmeasured   metrics.Name // metric to leave unknown
}

// testBatch builds a batch of five units: two pass, one fails on
// overshoot, one is an unreadable file, one has an unmeasured settling time;
// the model predicts the nominal step 0 → 10 mm.
func testBatch() *acceptance.Batch {
	limits := map[metrics.Name]spec.Limit{
		metrics.Overshoot:    {Max: ptr(15)},
		metrics.RiseTime:     {Min: ptr(0.05), Max: ptr(0.6)},
		metrics.SettlingTime: {Max: ptr(1.6)},
		metrics.FinalValue:   {Min: ptr(9.9), Max: ptr(10.1)},
	}
	sd := &spec.Spec{
		SpecID: "ACT-25", Revision: "C", Title: "Linear actuator VD-25, end-of-line step test",
		ResponseUnit: "mm", Limits: limits, Source: "/specs/act-25.yaml", SHA256: sha("spec ACT-25 C"),
		Report: spec.ReportInfo{
			Company: "Example Motion Works", Site: "Line 3 test bay", Address: "1 Test Street", Customer: "Vent Systems Ltd",
			PreparedBy: spec.Signatory{Name: "A. Engineer", Role: "Test engineer"},
			ApprovedBy: spec.Signatory{Name: "Q. Lead", Role: "QA lead"},
		},
		Model: &model.Config{ReferenceTest: &model.ReferenceTest{Gain: 1, StaticGain: 1, Damping: 0.6, NaturalFrequency: 5}},
	}
	b := &acceptance.Batch{
		Tool:       acceptance.ToolInfo{Name: "stepgate", Version: "0.1.0"},
		Spec:       acceptance.SpecInfo{SpecID: sd.SpecID, Revision: sd.Revision, SHA256: sd.SHA256, Title: sd.Title},
		Limits:     limits,
		ReportDate: "2024-05-17",
		TestDates:  acceptance.DateRange{First: "2024-05-15", Last: "2024-05-16"},
		SpecDoc:    sd,
	}
	predM := closedFormMetrics(0.6, 5, 0, 10)
	b.Model = &acceptance.ModelSummary{
		Config: *sd.Model, Plant: "25/(s² + 6 s)", Realised: false,
		Nominal: []acceptance.NominalPrediction{{
			From: 0, To: 10,
			Ideal:      acceptance.Prediction{Kind: "ideal", Metrics: acceptance.MetricsOf(predM)},
			Realised:   acceptance.Prediction{Kind: "realised", Metrics: acceptance.MetricsOf(predM)},
			IdealTrace: secondOrder(0.6, 5, 0.002, 3, []float64{0}, []float64{10}),
		}},
		Designs: []acceptance.GainDesign{{Target: "overshoot_pct", Value: 15, KpIdeal: ptr(1.9)}},
	}
	units := []unitSpec{
		{serial: "SN-1001", file: "logs/SN-1001.csv", zeta: 0.6, wn: 5, keepTrace: true},
		{serial: "SN-1002-ζ±µ→", file: "logs/SN-1002.csv", zeta: 0.25, wn: 6, keepTrace: true},
		{serial: "SN-1003", file: "logs/SN-1003.csv", zeta: 0.7, wn: 6, keepTrace: true},
		{serial: "SN-1005\x07", file: "logs/SN-1005.csv", zeta: 0.55, wn: 5, keepTrace: true, unmeasured: metrics.SettlingTime},
	}
	for _, us := range units {
		b.Units = append(b.Units, testUnit(us, limits, predM))
	}
	// An unreadable log: an invalid unit with no steps.
	bad := acceptance.UnitResult{
		Unit: "SN-1004", File: "logs/SN-1004.csv", SHA256: sha("SN-1004"), Verdict: acceptance.Invalid,
		Reasons: []acceptance.Reason{{Kind: acceptance.Unreadable, Text: `log cannot be read: logs/SN-1004.csv:12:3: cannot read "1,2.3" as a number in column "position"; set log.decimal_comma: true if the rig writes decimal commas`}},
	}
	b.Units = append(b.Units[:3], append([]acceptance.UnitResult{bad}, b.Units[3:]...)...)
	b.Summary = acceptance.Count(b.Units)
	return b
}

// testUnit is the unit us: an up-step and a down-step of its closed-form
// loop, measured in closed form, judged against the limits (the final
// value's on the up-step only), the up-step predicted by predM.
func testUnit(us unitSpec, limits map[metrics.Name]spec.Limit, predM map[metrics.Name]metrics.Value) acceptance.UnitResult {
	tr := secondOrder(us.zeta, us.wn, 0.002, 6, []float64{0.5, 3.5}, []float64{10, 0})
	u := acceptance.UnitResult{
		Unit: us.serial, File: us.file, SHA256: sha(us.file), Samples: tr.Len(),
		Metadata: map[string]string{"rig": "EOL-3", "operator": "B. Tech"},
		Verdict:  acceptance.Pass,
	}
	for k, st := range []struct{ at, from, to float64 }{{0.5, 0, 10}, {3.5, 10, 0}} {
		m := closedFormMetrics(us.zeta, us.wn, st.from, st.to)
		if us.unmeasured != "" && k == 1 {
			m[us.unmeasured] = metrics.Unknown("the record ends before the response stays in the band")
		}
		lim := map[metrics.Name]spec.Limit{}
		for name, l := range limits {
			lim[name] = l
		}
		if st.to < st.from { // the down-step: final value limits apply to the up-step only
			delete(lim, metrics.FinalValue)
		}
		checks, v, reasons := judge(lim, m)
		s := acceptance.StepResult{
			Index: k + 1, StartS: st.at, From: st.from, To: st.to, Verdict: v, Reasons: reasons,
			Metrics: acceptance.MetricsOf(m), Checks: checks,
		}
		if st.to == 10 {
			s.Predicted = &acceptance.Prediction{Kind: "ideal", Metrics: acceptance.MetricsOf(predM)}
			gaps := map[metrics.Name]*float64{}
			for name, pv := range predM {
				if mv := m[name]; mv.OK && pv.OK {
					gaps[name] = ptr(mv.V - pv.V)
				}
			}
			s.Gap = acceptance.GapsOf(gaps)
		}
		u.Steps = append(u.Steps, s)
		u.Reasons = append(u.Reasons, reasons...)
		if v == acceptance.Fail || (v == acceptance.Invalid && u.Verdict == acceptance.Pass) {
			u.Verdict = v
		}
	}
	if us.keepTrace {
		u.Trace = tr
	}
	if us.zeta < 0.5 {
		u.Fit = &acceptance.Fit{
			Step: 1, StaticGain: metrics.Known(1), Damping: metrics.Known(us.zeta),
			NaturalFrequency: metrics.Known(us.wn), DeadTime: metrics.Known(0), RMSResidual: metrics.Known(0.01),
		}
	}
	return u
}

// writeBatch digests b and writes its PDF report to w.
func writeBatch(w io.Writer, b *acceptance.Batch, o Options) error {
	d, err := digest.New(b)
	if err != nil {
		return err
	}
	return Write(w, d, keptTraces{}, o)
}

// keptTraces gives the records kept with the units.
type keptTraces struct{}

func (keptTraces) UnitTrace(u *acceptance.UnitResult) (*metrics.Trace, error) { return u.Trace, nil }
