package spec

import (
	"errors"
	"fmt"
	"path"
	"path/filepath"
	"slices"
	"strings"

	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/metrics"
)

// defaults fills the keys the file leaves out.
func (p *parser) defaults() {
	s := p.spec
	if !p.present("time_unit") {
		s.TimeUnit = DefaultTimeUnit
	}
	if !p.present("metrics.rise_levels_pct") {
		s.Metrics.RiseLevelsPct = []float64{DefaultRiseLowPct, DefaultRiseHighPct}
	}
	if !p.present("metrics.settling_band_pct") {
		s.Metrics.SettlingBandPct = DefaultSettlingBandPct
	}
	if !p.present("metrics.dead_time_level_pct") {
		s.Metrics.DeadTimeLevelPct = DefaultDeadTimeLevelPct
	}
	if !p.present("metrics.final_window_pct") {
		s.Metrics.FinalWindowPct = DefaultFinalWindowPct
	}
	if !p.present("log.delimiter") {
		s.Log.Delimiter = DefaultDelimiter
	}
	if !p.present("decision_rule") {
		s.DecisionRule = DefaultDecisionRule
	}
	if !p.present("steps.steady_s") {
		s.Steps.SteadyS = DefaultSteadyS
	}
}

// validate applies the value rules to the decoded spec.
func (p *parser) validate() {
	s := p.spec
	p.requireText("spec_id", s.SpecID, "the spec's identifier, printed on every report page")
	p.requireText("revision", s.Revision, "the spec's revision, printed on every report page")
	p.validateSignals()
	if !p.skip("time_unit") {
		switch s.TimeUnit {
		case "s", "ms", "us":
		default:
			p.problem("time_unit", valNode, "must be one of s, ms, us; got %q", s.TimeUnit)
		}
	}
	p.validateLog()
	p.validateLogLayout()
	if !p.skip("steps.min_change") {
		if !p.present("steps.min_change") {
			p.problem("steps.min_change", valNode, "required: the smallest command change that counts as a step, > 0, in response units")
		} else if !(s.Steps.MinChange > 0) {
			p.problem("steps.min_change", valNode, "must be > 0, got %s", formatFloat(s.Steps.MinChange))
		}
	}
	p.openRange("steps.steady_s", s.Steps.SteadyS, 0, MaxSteadyS, true)
	p.validateLevels()
	p.validateDecision()
	p.validateLimits()
	if len(s.Axes) > 0 || p.present("axes") {
		p.validateAxes()
	}
	p.validateLine()
	if logo := s.Report.Logo; logo != "" && !p.skip("report.logo") {
		switch strings.ToLower(filepath.Ext(logo)) {
		case ".png", ".jpg", ".jpeg":
		default:
			p.problem("report.logo", valNode, "must be a .png, .jpg or .jpeg file, got %q", logo)
		}
	}
	if s.Model != nil && !p.skip("model") {
		p.validateModel(s.Model)
	}
}

// validateSignals checks the signals section: the three required column
// names, an effort name that is not blank when given, and no name twice.
func (p *parser) validateSignals() {
	s := p.spec
	if len(s.Axes) > 0 {
		// The axes name their own columns (validateAxes).
		p.requireText("signals.time", s.Signals.Time, "the log column holding the time, shared by the axes")
		return
	}
	sig := []struct{ key, val, what string }{
		{"signals.time", s.Signals.Time, "the log column holding the time"},
		{"signals.command", s.Signals.Command, "the log column holding the commanded position"},
		{"signals.response", s.Signals.Response, "the log column holding the measured position"},
	}
	for _, c := range sig {
		p.requireText(c.key, c.val, c.what)
	}
	if s.Signals.Effort != "" || p.present("signals.effort") {
		if strings.TrimSpace(s.Signals.Effort) == "" && !p.skip("signals.effort") {
			p.problem("signals.effort", valNode, "must not be empty; leave the key out when the logs have no effort column")
		}
		sig = append(sig, struct{ key, val, what string }{"signals.effort", s.Signals.Effort, ""})
	}
	for i := range sig {
		for j := 0; j < i; j++ {
			a, b := sig[j], sig[i]
			if a.val != "" && a.val == b.val && !p.skip(b.key) && !p.skip(a.key) {
				p.problem(b.key, valNode, "must differ from %s (both are %q)", a.key, a.val)
			}
		}
	}
}

// validateLog checks the log section: a known delimiter, and decimal
// commas only with a delimiter other than the comma.
func (p *parser) validateLog() {
	l := p.spec.Log
	if p.skip("log.delimiter") {
		return
	}
	switch l.Delimiter {
	case "auto", "comma", "semicolon", "tab":
		if l.DecimalComma && l.Delimiter == "comma" && !p.skip("log.decimal_comma") {
			p.problem("log.decimal_comma", valNode, "cannot be true with delimiter comma: the comma cannot both separate fields and mark decimals; use semicolon or tab")
		}
	default:
		p.problem("log.delimiter", valNode, "must be one of auto, comma, semicolon, tab; got %q", l.Delimiter)
	}
}

// validateLevels checks the measurement levels of the metrics section.
func (p *parser) validateLevels() {
	m := p.spec.Metrics
	if !p.skip("metrics.rise_levels_pct") {
		r := m.RiseLevelsPct
		switch {
		case len(r) != 2:
			p.problem("metrics.rise_levels_pct", valNode, "must be two numbers [low, high], got %d", len(r))
		case !(0 < r[0] && r[0] < r[1] && r[1] < 100):
			p.problem("metrics.rise_levels_pct", valNode, "must satisfy 0 < low < high < 100, got [%s, %s]", formatFloat(r[0]), formatFloat(r[1]))
		}
	}
	p.openRange("metrics.settling_band_pct", m.SettlingBandPct, 0, 100, false)
	p.openRange("metrics.dead_time_level_pct", m.DeadTimeLevelPct, 0, 50, false)
	p.openRange("metrics.final_window_pct", m.FinalWindowPct, 0, 100, true)
}

// requireText checks a required, non-blank text key.
func (p *parser) requireText(path, v, what string) {
	if p.skip(path) {
		return
	}
	if !p.present(path) {
		p.problem(path, valNode, "required: %s", what)
	} else if strings.TrimSpace(v) == "" {
		p.problem(path, valNode, "must not be empty: %s", what)
	}
}

// openRange checks lo < v < hi, or lo < v ≤ hi when hiIncl.
func (p *parser) openRange(path string, v, lo, hi float64, hiIncl bool) {
	if p.skip(path) {
		return
	}
	ok := v > lo && (v < hi || (hiIncl && v == hi))
	if ok {
		return
	}
	op := "<"
	if hiIncl {
		op = "≤"
	}
	p.problem(path, valNode, "must be > %s and %s %s, got %s", formatFloat(lo), op, formatFloat(hi), formatFloat(v))
}

func metricList() string {
	var b strings.Builder
	for i, n := range metrics.Names {
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteString(string(n))
	}
	return b.String()
}

// validateLimits checks the limits section.
func (p *parser) validateLimits() {
	s := p.spec
	if p.skipTree("limits") && len(s.Limits) == 0 {
		return
	}
	if len(s.Limits) == 0 {
		if len(s.Axes) > 0 {
			return // every axis needs its own (validateAxes)
		}
		p.problem("limits", keyNode, "at least one limit is required, e.g. overshoot_pct: {max: 8}; metric names: %s", metricList())
		return
	}
	p.checkLimits("limits", s.Limits)
}

// checkLimits checks one set of limits, found at path.
func (p *parser) checkLimits(at string, limits map[metrics.Name]Limit) {
	names := make([]metrics.Name, 0, len(limits))
	for k := range limits {
		names = append(names, k)
	}
	slices.Sort(names)
	for _, name := range names {
		path := at + "." + string(name)
		if p.skipTree(path) {
			continue
		}
		m, known := metrics.Lookup(name)
		if !known {
			p.problem(path, keyNode, "unknown metric; valid names: %s", metricList())
			continue
		}
		l := limits[name]
		if l.Min == nil && l.Max == nil {
			p.problem(path, keyNode, "needs min, max or both, e.g. {max: 8}")
			continue
		}
		bad := false
		if m.NonNegative {
			for _, b := range []struct {
				key string
				v   *float64
			}{{"min", l.Min}, {"max", l.Max}} {
				if b.v != nil && *b.v < 0 && !p.skip(path+"."+b.key) {
					p.problem(path+"."+b.key, valNode, "must be ≥ 0, got %s", formatFloat(*b.v))
					bad = true
				}
			}
		}
		if !bad && l.Min != nil && l.Max != nil && *l.Min > *l.Max && !p.skip(path+".min") && !p.skip(path+".max") {
			p.problem(path+".min", valNode, "must be ≤ max, got min %s > max %s", formatFloat(*l.Min), formatFloat(*l.Max))
			bad = true
		}
		p.validateLimitDecision(path, l, bad)
	}
}

// validateModel applies the structural rules to the model section; whether
// the loop is stable is decided by the model package.
func (p *parser) validateModel(m *model.Config) {
	// A rejected reference_test or plant section was left out, so which of
	// the two the file gives is not known; its problem is already reported.
	if !p.skip("model.reference_test") && !p.skip("model.plant") {
		switch {
		case m.ReferenceTest != nil && m.Plant != nil:
			p.problem("model.plant", keyNode, "give either reference_test or plant, not both")
		case m.ReferenceTest == nil && m.Plant == nil:
			p.problem("model", keyNode, "needs reference_test (a closed-loop step test at a known gain) or plant (the transfer function)")
		case m.ReferenceTest != nil:
			r := m.ReferenceTest
			p.positive("model.reference_test.gain", r.Gain, "the proportional gain during the reference test")
			p.positive("model.reference_test.static_gain", r.StaticGain, "the closed-loop steady-state gain G")
			p.positive("model.reference_test.damping", r.Damping, "the damping ratio ζ")
			p.positive("model.reference_test.natural_frequency_rad_s", r.NaturalFrequency, "the natural frequency ωn in rad/s")
		default:
			p.validatePlant(m.Plant)
		}
	}
	p.nonNegative("model.plant_dead_time_s", m.PlantDeadTime)

	c := m.Controller
	p.nonNegative("model.controller.kp", c.Kp)
	p.nonNegative("model.controller.ki", c.Ki)
	p.nonNegative("model.controller.kd", c.Kd)
	p.nonNegative("model.controller.derivative_filter_hz", c.DerivativeFilterHz)
	if !(c.Kp > 0 || c.Ki > 0) && !p.skip("model.controller.kp") && !p.skip("model.controller.ki") {
		p.problem("model.controller", keyNode, "kp or ki must be > 0, got kp %s and ki %s", formatFloat(c.Kp), formatFloat(c.Ki))
	}
	if m.Loop != nil {
		p.positive("model.loop.sample_period_s", m.Loop.SamplePeriod, "the controller's sample period in s")
		p.nonNegative("model.loop.delay_s", m.Loop.Delay)
	}
	if m.Actuator != nil {
		p.nonNegative("model.actuator.effort_limit", m.Actuator.EffortLimit)
		p.nonNegative("model.actuator.deadband", m.Actuator.Deadband)
	}
	// The model package has rules of its own (a derivative needs its
	// filter, a deadband must lie below the effort limit); a model it
	// refuses would leave every run without predictions, so it is a spec
	// problem at the key it names.
	if !p.skipTree("model") {
		if _, err := model.Build(*m); err != nil {
			var fe *model.FieldError
			if errors.As(err, &fe) {
				p.problem(fe.Key, valNode, "%s", fe.Msg)
			} else {
				p.problem("model", keyNode, "%v", err)
			}
		}
	}
}

// validatePlant checks that the plant is a proper rational function.
func (p *parser) validatePlant(tf *model.TransferFunc) {
	num, den := "model.plant.numerator", "model.plant.denominator"
	if p.skip("model.plant") {
		return
	}
	okDen, okNum := false, false
	if !p.skip(den) {
		switch {
		case len(tf.Denominator) == 0:
			p.problem(den, valNode, "required: at least one coefficient, highest power of s first, e.g. [1, 20, 0]")
		case tf.Denominator[0] == 0:
			p.problem(den+"[0]", valNode, "the leading coefficient must not be 0")
		default:
			okDen = true
		}
	}
	if !p.skip(num) {
		switch {
		case len(tf.Numerator) == 0:
			p.problem(num, valNode, "required: at least one coefficient, highest power of s first, e.g. [200]")
		case degree(tf.Numerator) < 0:
			p.problem(num, valNode, "must not be all zero: the plant would never move")
		default:
			okNum = true
		}
	}
	if okDen && okNum {
		if dn, dd := degree(tf.Numerator), len(tf.Denominator)-1; dn > dd {
			p.problem(num, valNode, "degree %d exceeds the denominator's degree %d: the plant must be proper", dn, dd)
		}
	}
}

// degree is a polynomial's degree ignoring leading zeros; −1 for the
// zero polynomial.
func degree(c []float64) int {
	for i, v := range c {
		if v != 0 {
			return len(c) - 1 - i
		}
	}
	return -1
}

func (p *parser) positive(path string, v float64, what string) {
	if p.skip(path) {
		return
	}
	if !p.present(path) {
		p.problem(path, valNode, "required: %s, > 0", what)
	} else if !(v > 0) {
		p.problem(path, valNode, "must be > 0, got %s", formatFloat(v))
	}
}

func (p *parser) nonNegative(path string, v float64) {
	if !p.skip(path) && v < 0 {
		p.problem(path, valNode, "must be ≥ 0, got %s", formatFloat(v))
	}
}

// validateLogLayout checks the log keys that describe a layout and the
// file patterns.
func (p *parser) validateLogLayout() {
	l := p.spec.Log
	if !p.skip("log.header_line") && l.HeaderLine < 0 {
		p.problem("log.header_line", valNode, "must be 1 or more (the header's line number), got %d", l.HeaderLine)
	}
	if !p.skip("log.skip_rows") && l.SkipRows < 0 {
		p.problem("log.skip_rows", valNode, "must be 0 or more, got %d", l.SkipRows)
	}
	if p.present("log.sample_rate_hz") && !p.skip("log.sample_rate_hz") {
		switch {
		case !(l.SampleRateHz > 0):
			p.problem("log.sample_rate_hz", valNode, "must be > 0 (samples per second), got %s", formatFloat(l.SampleRateHz))
		case p.present("time_unit") && p.spec.TimeUnit != "s":
			p.problem("log.sample_rate_hz", valNode, "a time column that counts samples has no time_unit: leave time_unit out (or s), got %q", p.spec.TimeUnit)
		}
	}
	for _, sig := range []struct {
		key string
		s   *SignalScale
	}{{"command", l.Scale.Command}, {"response", l.Scale.Response}, {"effort", l.Scale.Effort}} {
		key := "log.scale." + sig.key + ".factor"
		if sig.s != nil && p.present(key) && sig.s.Factor == 0 && !p.skip(key) {
			p.problem(key, valNode, "must not be 0 (leave it out for 1)")
		}
	}
	for _, list := range []string{"include", "exclude"} {
		pats := l.Include
		if list == "exclude" {
			pats = l.Exclude
		}
		for i, pat := range pats {
			key := fmt.Sprintf("log.%s[%d]", list, i)
			if p.skip(key) {
				continue
			}
			if _, err := path.Match(pat, ""); err != nil || strings.TrimSpace(pat) == "" {
				p.problem(key, valNode, "is not a file name pattern (path.Match syntax: *, ?, [a-z]), got %q", pat)
			}
		}
	}
}
