package digest

import (
	"fmt"
	"strconv"
	"strings"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/metrics"
	"github.com/stepgate/stepgate/templates"
)

// Definition states how one metric (or a group measured together) is
// measured, and the reference it follows.
type Definition struct {
	Metrics    []metrics.Name // spec keys covered
	Label      string         // e.g. "rise time"
	Definition string         // as stepgate measures it, with the spec's levels
	Reference  string         // the published definition it follows
}

// Levels are the measurement levels a batch was measured with, in percent.
type Levels struct {
	RiseLow, RiseHigh, Band, DeadTime, FinalWindow float64
}

// measuredLevels returns the levels of the batch's spec, the defaults of
// metrics.DefaultOptions where the spec sets none.
func measuredLevels(b *acceptance.Batch) Levels {
	o := metrics.DefaultOptions()
	l := Levels{RiseLow: 100 * o.RiseLow, RiseHigh: 100 * o.RiseHigh, Band: 100 * SettlingBand(b),
		DeadTime: 100 * o.DeadTimeLevel, FinalWindow: 100 * o.FinalWindow}
	if d := b.SpecDoc; d != nil {
		if len(d.Metrics.RiseLevelsPct) == 2 {
			l.RiseLow, l.RiseHigh = d.Metrics.RiseLevelsPct[0], d.Metrics.RiseLevelsPct[1]
		}
		if d.Metrics.DeadTimeLevelPct > 0 {
			l.DeadTime = d.Metrics.DeadTimeLevelPct
		}
		if d.Metrics.FinalWindowPct > 0 {
			l.FinalWindow = d.Metrics.FinalWindowPct
		}
	}
	return l
}

// Definitions returns the method: how each metric is measured, with the
// batch's levels, and its reference (references §1).
func Definitions(b *acceptance.Batch) []Definition {
	l := measuredLevels(b)
	return []Definition{
		{[]metrics.Name{metrics.InitialValue, metrics.FinalValue, metrics.StepSize}, "initial and final value, step size",
			fmt.Sprintf("State levels: robust mean of a stable window before the step and of the last %s %% of the step's record (outliers beyond median ± 3·1.4826·MAD rejected). Step size = commanded to − from.", Num(l.FinalWindow)),
			"IEEE Std 181-2011 (state levels)"},
		{[]metrics.Name{metrics.DeadTime}, "dead time",
			fmt.Sprintf("From the step instant until the response has moved %s %% of the transition.", Num(l.DeadTime)),
			"ANSI/ISA-51.1-1979 (R1993)"},
		{[]metrics.Name{metrics.RiseTime}, "rise time",
			fmt.Sprintf("Between the first crossings of the %s %% and %s %% levels of the transition, interpolated linearly between samples.", Num(l.RiseLow), Num(l.RiseHigh)),
			"IEEE Std 181-2011 (transition duration); ANSI/ISA-51.1"},
		{[]metrics.Name{metrics.PeakValue, metrics.PeakTime, metrics.Overshoot}, "peak, overshoot",
			"Extreme sample in the step's direction and its time from the step instant; overshoot is its excursion beyond the final value, % of |final − initial|, 0 when none.",
			"IEEE Std 181-2011; ANSI/ISA-51.1"},
		{[]metrics.Name{metrics.SettlingTime}, "settling time",
			fmt.Sprintf("From the step instant to the last exit from the ±%s %% band (of |step size|) around the final value, interpolated. IEEE Std 181-2011 measures settling from the 50 %% instant instead.", Num(l.Band)),
			"ANSI/ISA-51.1; K. Ogata, Modern Control Engineering, 5th ed., §5-3"},
		{[]metrics.Name{metrics.SteadyStateError, metrics.SteadyStateErrorPct}, "steady-state error",
			"|command − final value|, in response units and in % of |step size|.",
			"definition from the levels above"},
	}
}

// DecisionRule states how the verdicts were reached (ISO/IEC 17025:2017
// §7.8.6 asks that the decision rule be stated; references §6, §7); the
// text is templates/wording.txt's [decision-rule].
var DecisionRule = templates.MustPhrase("decision-rule")

// DecisionRuleOf states the decision rule batch b was judged under, simple
// or guarded, with its risk in words, and the count of units whose worst
// check was a conditional pass or fail.
func DecisionRuleOf(b *acceptance.Batch) string {
	rule := DecisionRule
	if b.DecisionRule == "guarded" {
		rule = templates.MustPhrase("decision-rule-guarded")
	}
	cond := strings.NewReplacer("{0}", strconv.Itoa(b.Summary.ConditionalPass), "{1}", strconv.Itoa(b.Summary.ConditionalFail)).
		Replace(templates.MustPhrase("decision-conditional"))
	return rule + " " + cond
}
