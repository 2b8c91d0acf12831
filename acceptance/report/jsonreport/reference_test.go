package jsonreport

import (
	"encoding/json"
	"reflect"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/internal/jsonfmt"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/metrics"
)

// The reference for the encoder's bytes is encoding/json (the Go standard
// library) marshalling the types below with MarshalIndent. They are this
// test's own statement of the results.json contract, member by member; the
// product's types carry no JSON definition of their own.

type refBatch struct {
	SchemaVersion int                 `json:"schema_version"`
	ReportID      string              `json:"report_id"`
	Tool          refTool             `json:"tool"`
	Spec          refSpec             `json:"spec"`
	Run           *refRun             `json:"run"`
	MetricUnits   map[string]*string  `json:"metric_units"`
	Summary       refSummary          `json:"summary"`
	Units         []refUnit           `json:"units"`
	Model         *refModel           `json:"model,omitempty"`
	Limits        map[string]refLimit `json:"limits"`
	ReportDate    string              `json:"report_date"`
	Notice        string              `json:"notice"`
	TestDates     refDates            `json:"test_dates"`
	DecisionRule  string              `json:"decision_rule"`
	Excluded      []refExcluded       `json:"excluded,omitempty"`
}

type refTool struct {
	Name    string `json:"name"`
	Version string `json:"version"`
}

type refSpec struct {
	SpecID   string  `json:"spec_id"`
	Revision string  `json:"revision"`
	SHA256   string  `json:"sha256"`
	Title    string  `json:"title"`
	Path     *string `json:"path"`
	Resolved *string `json:"resolved_path"`
}

type refRun struct {
	Inputs         []string `json:"inputs"`
	ReportDate     *string  `json:"report_date"`
	ReportDateFrom string   `json:"report_date_from"`
	AllUnits       bool     `json:"all_units"`
	MaxUnitPages   int      `json:"max_unit_pages"`
}

type refSummary struct {
	Units             int      `json:"units"`
	Pass              int      `json:"pass"`
	Fail              int      `json:"fail"`
	Invalid           int      `json:"invalid"`
	Serials           int      `json:"serials"`
	Retested          int      `json:"retested"`
	FirstPassYieldPct *float64 `json:"first_pass_yield_pct"`
	FinalYieldPct     *float64 `json:"final_yield_pct"`
	ConditionalPass   int      `json:"conditional_pass"`
	ConditionalFail   int      `json:"conditional_fail"`
}

type refLimit struct {
	Min *float64 `json:"min"`
	Max *float64 `json:"max"`
}

type refDates struct {
	First string `json:"first"`
	Last  string `json:"last"`
}

type refUnit struct {
	Unit     string            `json:"unit"`
	File     string            `json:"file"`
	SHA256   string            `json:"sha256"`
	Metadata map[string]string `json:"metadata"`
	Verdict  string            `json:"verdict"`
	Reasons  []string          `json:"reasons"`
	Steps    []refStep         `json:"steps"`
	Samples  int               `json:"samples"`
	Attempt  int               `json:"attempt"`
	Attempts int               `json:"attempts"`
	Lot      string            `json:"lot"`
	Shift    string            `json:"shift"`
	Fit      *refFit           `json:"fit,omitempty"`
	Causes   *[]string         `json:"causes,omitempty"`
	Axes     []refAxis         `json:"axes,omitempty"`
}

type refAxis struct {
	Name    string   `json:"name"`
	Verdict string   `json:"verdict"`
	Reasons []string `json:"reasons"`
}

type refStep struct {
	Index       int                     `json:"index"`
	Axis        string                  `json:"axis,omitempty"`
	StartS      float64                 `json:"start_s"`
	From        float64                 `json:"from"`
	To          float64                 `json:"to"`
	Verdict     string                  `json:"verdict"`
	Reasons     []string                `json:"reasons"`
	Metrics     map[string]*float64     `json:"metrics"`
	Checks      []refCheck              `json:"checks"`
	Uncertainty map[string]*float64     `json:"uncertainty"`
	Predicted   *refPrediction          `json:"predicted,omitempty"`
	Gap         map[string]*float64     `json:"gap,omitempty"`
	Evidence    *refEvidence            `json:"evidence,omitempty"`
	Unmeasured  map[metrics.Name]string `json:"unmeasured"`
}

type refCheck struct {
	Metric  string   `json:"metric"`
	Value   *float64 `json:"value"`
	Min     *float64 `json:"min"`
	Max     *float64 `json:"max"`
	Verdict string   `json:"verdict"`
	Reason  string   `json:"reason,omitempty"`
	// U is the standard uncertainty u; Conformity null when unknown.
	U          *float64 `json:"u"`
	Conformity *string  `json:"conformity"`
	Resolution *float64 `json:"resolution"`
	GuardBand  *float64 `json:"guard_band,omitempty"`
}

type refPrediction struct {
	Kind       string                  `json:"kind"`
	Metrics    map[string]*float64     `json:"metrics"`
	Unmeasured map[metrics.Name]string `json:"unmeasured,omitempty"`
}

type refEvidence struct {
	EffortSaturatedPct *float64 `json:"effort_saturated_pct"`
	EffortLimit        *float64 `json:"effort_limit"`
	FinalDrift         *float64 `json:"final_drift"`
}

type refFit struct {
	Step             int      `json:"step"`
	StaticGain       *float64 `json:"static_gain"`
	Damping          *float64 `json:"damping"`
	NaturalFrequency *float64 `json:"natural_frequency_rad_s"`
	DeadTime         *float64 `json:"dead_time_s"`
	RMSResidual      *float64 `json:"rms_residual"`
	Why              string   `json:"why,omitempty"`
}

type refModel struct {
	Config   refConfig    `json:"config"`
	Plant    string       `json:"plant"`
	Realised bool         `json:"realised"`
	Nominal  []refNominal `json:"nominal"`
	Designs  []refDesign  `json:"designs,omitempty"`
	Warnings []string     `json:"warnings,omitempty"`
}

type refConfig struct {
	ReferenceTest *struct {
		Gain             float64 `json:"gain"`
		StaticGain       float64 `json:"static_gain"`
		Damping          float64 `json:"damping"`
		NaturalFrequency float64 `json:"natural_frequency_rad_s"`
	} `json:"reference_test,omitempty"`
	Plant *struct {
		Numerator   []float64 `json:"numerator"`
		Denominator []float64 `json:"denominator"`
	} `json:"plant,omitempty"`
	PlantDeadTime float64 `json:"plant_dead_time_s"`
	Controller    struct {
		Kp                 float64 `json:"kp"`
		Ki                 float64 `json:"ki"`
		Kd                 float64 `json:"kd"`
		DerivativeFilterHz float64 `json:"derivative_filter_hz"`
	} `json:"controller"`
	Loop *struct {
		SamplePeriod float64 `json:"sample_period_s"`
		Delay        float64 `json:"delay_s"`
	} `json:"loop,omitempty"`
	Actuator *struct {
		EffortLimit float64 `json:"effort_limit"`
		Deadband    float64 `json:"deadband"`
	} `json:"actuator,omitempty"`
}

type refNominal struct {
	From     float64       `json:"from"`
	To       float64       `json:"to"`
	Ideal    refPrediction `json:"ideal"`
	Realised refPrediction `json:"realised"`
}

type refDesign struct {
	Target     string   `json:"target"`
	Value      float64  `json:"value"`
	KpIdeal    *float64 `json:"kp_ideal"`
	KpRealised *float64 `json:"kp_realised"`
	Why        string   `json:"why,omitempty"`
}

// referenceJSON is encoding/json's bytes for b, by way of the reference
// types, plus the newline Write ends with.
func referenceJSON(t testing.TB, b *acceptance.Batch) []byte {
	t.Helper()
	r := refOf(b)
	roundFloats(reflect.ValueOf(r))
	want, err := json.MarshalIndent(r, "", "  ")
	if err != nil {
		t.Fatal(err)
	}
	return append(want, '\n')
}

func refOf(b *acceptance.Batch) *refBatch {
	r := &refBatch{
		SchemaVersion: 1, ReportID: digest.ReportID(b), MetricUnits: map[string]*string{},
		Tool: refTool{b.Tool.Name, b.Tool.Version},
		Spec: refSpec{SpecID: b.Spec.SpecID, Revision: b.Spec.Revision, SHA256: b.Spec.SHA256, Title: b.Spec.Title},
		Summary: refSummary{b.Summary.Units, b.Summary.Pass, b.Summary.Fail, b.Summary.Invalid,
			b.Summary.Serials, b.Summary.Retested, b.Summary.FirstPassYieldPct, b.Summary.FinalYieldPct,
			b.Summary.ConditionalPass, b.Summary.ConditionalFail},
		ReportDate: b.ReportDate, Notice: b.Notice, DecisionRule: b.DecisionRule,
		TestDates: refDates{b.TestDates.First, b.TestDates.Last},
	}
	for _, x := range b.Excluded {
		r.Excluded = append(r.Excluded, refExcluded{x.File, x.Pattern})
	}
	for _, n := range metrics.Names {
		if u := n.Unit(digest.ResponseUnit(b)); u != "" {
			r.MetricUnits[string(n)] = &u
		} else {
			r.MetricUnits[string(n)] = nil
		}
	}
	if ri := b.Run; ri != nil {
		r.Spec.Path, r.Spec.Resolved = &ri.SpecPath, &ri.SpecResolved
		r.Run = &refRun{Inputs: ri.Inputs, ReportDateFrom: ri.ReportDateFrom, AllUnits: ri.AllUnits, MaxUnitPages: ri.MaxUnitPages}
		if ri.ReportDate != "" {
			r.Run.ReportDate = &ri.ReportDate
		}
	}
	if b.Units != nil {
		r.Units = make([]refUnit, len(b.Units))
		for i := range b.Units {
			r.Units[i] = refOfUnit(&b.Units[i])
		}
	}
	if b.Limits != nil {
		r.Limits = map[string]refLimit{}
		for k, l := range b.Limits {
			r.Limits[string(k)] = refLimit{l.Min, l.Max}
		}
	}
	if b.Model != nil {
		r.Model = refOfModel(b.Model)
	}
	return r
}

func refOfUnit(u *acceptance.UnitResult) refUnit {
	r := refUnit{Unit: u.Unit, File: u.File, SHA256: u.SHA256, Metadata: u.Metadata, Verdict: string(u.Verdict), Reasons: refReasons(u.Reasons), Samples: u.Samples,
		Attempt: u.Attempt, Attempts: u.Attempts, Lot: u.Lot, Shift: u.Shift}
	if u.Steps != nil {
		r.Steps = make([]refStep, len(u.Steps))
		for i := range u.Steps {
			r.Steps[i] = refOfStep(&u.Steps[i])
		}
	}
	if f := u.Fit; f != nil {
		r.Fit = &refFit{f.Step, refValue(f.StaticGain), refValue(f.Damping), refValue(f.NaturalFrequency), refValue(f.DeadTime), refValue(f.RMSResidual), f.Why}
	}
	if u.Causes != nil {
		c := append([]string{}, u.Causes...)
		r.Causes = &c
	}
	for _, a := range u.Axes {
		r.Axes = append(r.Axes, refAxis{a.Name, string(a.Verdict), refReasons(a.Reasons)})
	}
	return r
}

func refOfStep(s *acceptance.StepResult) refStep {
	r := refStep{Index: s.Index, Axis: s.Axis, StartS: s.StartS, From: s.From, To: s.To, Verdict: string(s.Verdict), Reasons: refReasons(s.Reasons),
		Metrics: refMetrics(&s.Metrics), Uncertainty: refMetrics(&s.Uncertainty), Unmeasured: s.Metrics.Unmeasured()}
	if s.Checks != nil {
		r.Checks = []refCheck{}
		for _, c := range s.Checks {
			var conf *string
			if c.Conformity != "" {
				x := string(c.Conformity)
				conf = &x
			}
			r.Checks = append(r.Checks, refCheck{string(c.Metric), c.Value, c.Min, c.Max, string(c.Verdict), c.Reason, c.U, conf, c.Resolution, c.GuardBand})
		}
	}
	if s.Predicted != nil {
		p := refOfPrediction(s.Predicted)
		r.Predicted = &p
	}
	if s.Gap != nil {
		r.Gap = map[string]*float64{}
		for _, n := range metrics.Names {
			r.Gap[string(n)] = s.Gap.Get(n)
		}
	}
	if ev := s.Evidence; ev != nil {
		r.Evidence = &refEvidence{refValue(ev.EffortSaturatedPct), refValue(ev.EffortLimit), refValue(ev.FinalDrift)}
	}
	return r
}

func refOfPrediction(p *acceptance.Prediction) refPrediction {
	r := refPrediction{Kind: p.Kind, Metrics: refMetrics(&p.Metrics)}
	if un := p.Metrics.Unmeasured(); len(un) > 0 {
		r.Unmeasured = un
	}
	return r
}

func refOfModel(m *acceptance.ModelSummary) *refModel {
	r := &refModel{Plant: m.Plant, Realised: m.Realised, Warnings: m.Warnings}
	c := &m.Config
	if rt := c.ReferenceTest; rt != nil {
		r.Config.ReferenceTest = &struct {
			Gain             float64 `json:"gain"`
			StaticGain       float64 `json:"static_gain"`
			Damping          float64 `json:"damping"`
			NaturalFrequency float64 `json:"natural_frequency_rad_s"`
		}{rt.Gain, rt.StaticGain, rt.Damping, rt.NaturalFrequency}
	}
	if p := c.Plant; p != nil {
		r.Config.Plant = &struct {
			Numerator   []float64 `json:"numerator"`
			Denominator []float64 `json:"denominator"`
		}{p.Numerator, p.Denominator}
	}
	r.Config.PlantDeadTime = c.PlantDeadTime
	r.Config.Controller.Kp, r.Config.Controller.Ki, r.Config.Controller.Kd = c.Controller.Kp, c.Controller.Ki, c.Controller.Kd
	r.Config.Controller.DerivativeFilterHz = c.Controller.DerivativeFilterHz
	if l := c.Loop; l != nil {
		r.Config.Loop = &struct {
			SamplePeriod float64 `json:"sample_period_s"`
			Delay        float64 `json:"delay_s"`
		}{l.SamplePeriod, l.Delay}
	}
	if a := c.Actuator; a != nil {
		r.Config.Actuator = &struct {
			EffortLimit float64 `json:"effort_limit"`
			Deadband    float64 `json:"deadband"`
		}{a.EffortLimit, a.Deadband}
	}
	if m.Nominal != nil {
		r.Nominal = []refNominal{}
		for _, n := range m.Nominal {
			r.Nominal = append(r.Nominal, refNominal{n.From, n.To, refOfPrediction(&n.Ideal), refOfPrediction(&n.Realised)})
		}
	}
	for _, g := range m.Designs {
		r.Designs = append(r.Designs, refDesign{g.Target, g.Value, g.KpIdeal, g.KpRealised, g.Why})
	}
	return r
}

// refMetrics is a metric set as a map: null where unknown.
func refMetrics(s *acceptance.MetricSet) map[string]*float64 {
	m := map[string]*float64{}
	for i, n := range metrics.Names {
		m[string(n)] = refValue(s.At(i))
	}
	return m
}

func refValue(v metrics.Value) *float64 {
	if !v.OK {
		return nil
	}
	x := v.V
	return &x
}

// refReasons is the texts of reasons; nil when they are nil.
func refReasons(rs []acceptance.Reason) []string {
	if rs == nil {
		return nil
	}
	out := make([]string, len(rs))
	for i, r := range rs {
		out[i] = r.Text
	}
	return out
}

// roundFloats rounds every float64 reachable from v in place to the
// significant digits results.json keeps (jsonfmt.Round): the reference's
// statement of the precision the encoder writes.
func roundFloats(v reflect.Value) {
	switch v.Kind() {
	case reflect.Float64:
		if v.CanSet() {
			v.SetFloat(jsonfmt.Round(v.Float(), jsonfmt.Digits))
		}
	case reflect.Pointer:
		if !v.IsNil() {
			if v.Elem().Kind() == reflect.Float64 {
				// A pointer may share its target with the batch: round a copy.
				x := jsonfmt.Round(v.Elem().Float(), jsonfmt.Digits)
				if v.CanSet() {
					v.Set(reflect.ValueOf(&x))
				}
				return
			}
			roundFloats(v.Elem())
		}
	case reflect.Slice:
		if v.Len() > 0 && v.Type().Elem().Kind() == reflect.Float64 {
			// A slice may share its array with the batch: round a copy.
			c := reflect.MakeSlice(v.Type(), v.Len(), v.Len())
			reflect.Copy(c, v)
			for i := range c.Len() {
				roundFloats(c.Index(i))
			}
			v.Set(c)
			return
		}
		for i := range v.Len() {
			roundFloats(v.Index(i))
		}
	case reflect.Map:
		for it := v.MapRange(); it.Next(); {
			e := reflect.New(it.Value().Type()).Elem()
			e.Set(it.Value())
			roundFloats(e)
			v.SetMapIndex(it.Key(), e)
		}
	case reflect.Struct:
		for i := range v.NumField() {
			roundFloats(v.Field(i))
		}
	}
}

type refExcluded struct {
	File    string `json:"file"`
	Pattern string `json:"pattern"`
}
