package spec

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/metrics"
)

// Explain returns a readable summary of what the spec makes stepgate do:
// the columns read from each log, how steps are found, the measurement
// levels, every limit in words and the model, if any.
func (s *Spec) Explain() string {
	var b strings.Builder
	line := func(format string, a ...any) { fmt.Fprintf(&b, format+"\n", a...) }
	ru := unitSuffix(s.ResponseUnit)
	head := fmt.Sprintf("Spec %s revision %s", s.SpecID, s.Revision)
	if s.Title != "" {
		head += ": " + s.Title
	}
	line("%s", head)
	line("")
	s.explainLog(line)
	line("")
	line("Steps:")
	line("  a step is a change of the command by at least %s%s, in one sample (an", formatFloat(s.Steps.MinChange), ru)
	line("  ideal step) or over several (a profiled move: ramp, trapezoid, S-curve);")
	line("  it starts at the first command change and its move ends when the command")
	line("  has held its value for %s s; each is measured from its start to the", formatFloat(s.Steps.SteadyS))
	line("  next step or the end of the record")
	line("")
	o := s.Options()
	line("Measurement levels:")
	line("  rise time between %s %% and %s %% of the transition", pct(o.RiseLow), pct(o.RiseHigh))
	line("  settling band ±%s %% of the step size around the final value", pct(o.Band))
	line("  dead time ends when the response has moved %s %% of the transition", pct(o.DeadTimeLevel))
	line("  final value taken from the last %s %% of each step's record", pct(o.FinalWindow))
	line("")
	line("Limits (a unit passes only when every limited metric of every step is")
	line("measured and accepted under the decision rule below):")
	names := s.LimitNames()
	if len(names) == 0 {
		line("  none")
	}
	for _, n := range names {
		line("  %s", s.describeLimit(n))
		for _, e := range s.limitExtras(n) {
			line("      %s", e)
		}
	}
	for i, a := range s.ForAxes() {
		if len(s.Axes) == 0 || len(s.Axes[i].Limits) == 0 {
			continue
		}
		line("  axis %q, instead of the above:", s.Axes[i].Name)
		for _, n := range a.LimitNames() {
			line("    %s", a.describeLimit(n))
			for _, e := range a.limitExtras(n) {
				line("        %s", e)
			}
		}
	}
	line("")
	for _, l := range s.explainDecision() {
		line("%s", l)
	}
	line("")
	if s.Model == nil {
		line("Model: none (no prediction, no comparison with a model)")
	} else {
		line("Model:")
		for _, l := range explainModel(s.Model, ru) {
			line("  %s", l)
		}
	}
	s.explainReport(line)
	return b.String()
}

// explainLog words what is read from each log: the columns, their units,
// the delimiter and the decimal mark.
func (s *Spec) explainLog(line func(format string, a ...any)) {
	line("Read from each log:")
	tu := s.TimeUnit
	if tu == "" {
		tu = DefaultTimeUnit
	}
	line("  time      column %q, in %s", s.Signals.Time, tu)
	for i, a := range s.ForAxes() {
		ind := "  "
		if len(s.Axes) > 0 {
			lim := "the top-level limits"
			if len(s.Axes[i].Limits) > 0 {
				lim = "its own limits"
			}
			line("  axis %q, judged by %s:", s.Axes[i].Name, lim)
			ind = "    "
		}
		line("%scommand   column %q%s", ind, a.Signals.Command, inUnit(s.ResponseUnit))
		line("%sresponse  column %q%s", ind, a.Signals.Response, inUnit(s.ResponseUnit))
		if a.Signals.Effort != "" {
			line("%seffort    column %q%s", ind, a.Signals.Effort, inUnit(s.EffortUnit))
		} else {
			line("%seffort    not read (signals.effort not set)", ind)
		}
	}
	if len(s.Axes) > 0 {
		line("  a unit passes only when every axis passes")
	}
	delim := map[string]string{
		"": "detected from the header row", "auto": "detected from the header row",
		"comma": "comma", "semicolon": "semicolon", "tab": "tab",
	}[s.Log.Delimiter]
	if delim == "" {
		delim = s.Log.Delimiter
	}
	mark := "point (1.5)"
	if s.Log.DecimalComma {
		mark = "comma (1,5)"
	}
	line("  fields separated by: %s; decimal mark: %s", delim, mark)
	for _, l := range s.explainLayout() {
		line("  %s", l)
	}
}

// explainReport words the report section, when the spec fills it.
func (s *Spec) explainReport(line func(format string, a ...any)) {
	if r := s.Report; r.Company != "" || r.Site != "" || r.Customer != "" || r.Logo != "" {
		line("")
		line("Report:")
		for _, kv := range [][2]string{{"company", r.Company}, {"site", r.Site}, {"address", r.Address}, {"customer", r.Customer}, {"logo", r.Logo}} {
			if kv[1] != "" {
				line("  %-9s %s", kv[0], kv[1])
			}
		}
	}
}

// describeLimit words one limit, e.g. "overshoot_pct ≤ 8 %".
func (s *Spec) describeLimit(name metrics.Name) string {
	l := s.Limits[name]
	u := unitSuffix(name.Unit(s.ResponseUnit))
	switch {
	case l.Min != nil && l.Max != nil:
		return fmt.Sprintf("%s ≤ %s ≤ %s%s", formatFloat(*l.Min), name, formatFloat(*l.Max), u)
	case l.Max != nil:
		return fmt.Sprintf("%s ≤ %s%s", name, formatFloat(*l.Max), u)
	case l.Min != nil:
		return fmt.Sprintf("%s ≥ %s%s", name, formatFloat(*l.Min), u)
	}
	return string(name) + ": no bound"
}

// explainModel words the model section.
func explainModel(m *model.Config, ru string) []string {
	var out []string
	switch {
	case m.ReferenceTest != nil:
		r := m.ReferenceTest
		out = append(out, fmt.Sprintf("plant backed out of a closed-loop reference test at proportional gain %s:", formatFloat(r.Gain)),
			fmt.Sprintf("  G·ωn²/(s² + 2ζωn s + ωn²) with G = %s, ζ = %s, ωn = %s rad/s",
				formatFloat(r.StaticGain), formatFloat(r.Damping), formatFloat(r.NaturalFrequency)))
	case m.Plant != nil:
		out = append(out, fmt.Sprintf("plant (%s) / (%s)", poly(m.Plant.Numerator), poly(m.Plant.Denominator)))
	}
	if m.PlantDeadTime > 0 {
		out = append(out, fmt.Sprintf("plant dead time %s s", formatFloat(m.PlantDeadTime)))
	}
	c := m.Controller
	ctl := fmt.Sprintf("controller kp = %s, ki = %s, kd = %s", formatFloat(c.Kp), formatFloat(c.Ki), formatFloat(c.Kd))
	if c.Kd > 0 {
		if c.DerivativeFilterHz > 0 {
			ctl += fmt.Sprintf(", derivative filtered at %s Hz", formatFloat(c.DerivativeFilterHz))
		} else {
			ctl += ", derivative unfiltered"
		}
	}
	out = append(out, ctl)
	if m.Loop != nil {
		out = append(out, fmt.Sprintf("loop sampled every %s s, controller output delayed %s s", formatFloat(m.Loop.SamplePeriod), formatFloat(m.Loop.Delay)))
	} else {
		out = append(out, "loop continuous (no sampling or delay given)")
	}
	if a := m.Actuator; a != nil {
		lim := "no effort limit"
		if a.EffortLimit > 0 {
			lim = "effort limited to ±" + formatFloat(a.EffortLimit)
		}
		db := "no deadband"
		if a.Deadband > 0 {
			db = "deadband " + formatFloat(a.Deadband)
		}
		out = append(out, "actuator: "+lim+", "+db)
	}
	if m.Loop != nil || m.Actuator != nil || m.PlantDeadTime > 0 {
		out = append(out, "each step is predicted ideal (continuous, linear) and realised (as above)")
	} else {
		out = append(out, "each step is predicted ideal (continuous, linear)")
	}
	return out
}

// poly writes coefficients, highest power first, as a polynomial in s,
// e.g. [1, 20, 0] → "s^2 + 20·s".
func poly(c []float64) string {
	var b strings.Builder
	for i, v := range c {
		p := len(c) - 1 - i
		if v == 0 {
			continue
		}
		a := math.Abs(v)
		switch {
		case b.Len() == 0 && v < 0:
			b.WriteString("−")
		case b.Len() > 0 && v < 0:
			b.WriteString(" − ")
		case b.Len() > 0:
			b.WriteString(" + ")
		}
		if a != 1 || p == 0 {
			b.WriteString(formatFloat(a))
			if p > 0 {
				b.WriteString("·")
			}
		}
		switch {
		case p == 1:
			b.WriteString("s")
		case p > 1:
			b.WriteString("s^" + strconv.Itoa(p))
		}
	}
	if b.Len() == 0 {
		return "0"
	}
	return b.String()
}

func unitSuffix(u string) string {
	if u == "" {
		return ""
	}
	return " " + u
}

func inUnit(u string) string {
	if u == "" {
		return ""
	}
	return ", in " + u
}

// pct writes a fraction as a percentage without float noise.
func pct(f float64) string {
	return strconv.FormatFloat(f*100, 'g', 10, 64)
}

// formatFloat writes a number as the shortest text that reads back to
// it, so a limit appears as written in the spec.
func formatFloat(f float64) string {
	return strconv.FormatFloat(f, 'g', -1, 64)
}

// explainLayout describes the log keys of a layout and the file patterns,
// one line each; nothing for a spec that sets none.
func (s *Spec) explainLayout() []string {
	var out []string
	l := s.Log
	if l.HeaderLine > 0 {
		out = append(out, fmt.Sprintf("header row on line %d; the lines before it are metadata or comments", l.HeaderLine))
	}
	if l.SkipRows > 0 {
		out = append(out, fmt.Sprintf("%d line(s) under the header are not data", l.SkipRows))
	}
	if l.SampleRateHz > 0 {
		out = append(out, fmt.Sprintf("the time column counts samples at %s Hz (time = sample / %s Hz)", formatFloat(l.SampleRateHz), formatFloat(l.SampleRateHz)))
	}
	for _, sig := range []struct {
		name string
		sc   *SignalScale
	}{{"command", l.Scale.Command}, {"response", l.Scale.Response}, {"effort", l.Scale.Effort}} {
		if sig.sc == nil {
			continue
		}
		f := sig.sc.Factor
		if f == 0 {
			f = 1
		}
		raw := "raw"
		if sig.sc.Invert {
			raw = "(−raw)"
		}
		out = append(out, fmt.Sprintf("%s converted: value = %s × %s + %s", sig.name, formatFloat(f), raw, formatFloat(sig.sc.Offset)))
	}
	if len(l.Include) > 0 {
		out = append(out, "files judged: those matching "+strings.Join(l.Include, ", "))
	}
	if len(l.Exclude) > 0 {
		out = append(out, "files left out (listed in the reports): those matching "+strings.Join(l.Exclude, ", "))
	}
	return out
}
