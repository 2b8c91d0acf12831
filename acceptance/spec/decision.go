package spec

import (
	"fmt"

	"github.com/stepgate/stepgate/metrics"
)

// The decision rules a spec may state (decision_rule). They follow
// ISO/IEC 17025:2017 §7.8.6, ISO 14253-1:2017 and ILAC-G8:09/2019.
const (
	// RuleSimple accepts a value within its limits whatever its
	// uncertainty (simple acceptance; the specific risk of false
	// acceptance of a value close to a limit reaches 50 %). Conformity
	// statements are still given with the uncertainty.
	RuleSimple = "simple"
	// RuleGuarded accepts a value only within the acceptance zone: the
	// limits narrowed by a guard band w (guard_band, guard_band_u·U, or U
	// when the limit sets neither). With w = U the specific risk of false
	// acceptance stays below about 2.5 % (JCGM 106:2012 §8, for a normal
	// distribution and k = 2).
	RuleGuarded = "guarded"
)

// Guarded reports whether the spec's decision rule is guarded acceptance.
func (s *Spec) Guarded() bool { return s.DecisionRule == RuleGuarded }

// GuardBand returns the guard band w of limit l for a value whose expanded
// uncertainty is U: guard_band when set, guard_band_u·U when that is set,
// otherwise U (the usual w = U of guarded acceptance, ILAC-G8:09/2019
// §4.2.3; JCGM 106:2012 §8.3.3). It is 0 under simple acceptance. ok is
// false when the band depends on U and U is not known.
func (s *Spec) GuardBand(l Limit, U metrics.Value) (w float64, ok bool) {
	switch {
	case !s.Guarded():
		return 0, true
	case l.GuardBand != nil:
		return *l.GuardBand, true
	case !U.OK:
		return 0, false
	case l.GuardBandU != nil:
		return *l.GuardBandU * U.V, true
	}
	return U.V, true
}

// Resolution returns the resolution the spec states for metric n (its
// limit's resolution), or 0 when it states none and the resolution comes
// from the log.
func (s *Spec) Resolution(n metrics.Name) float64 {
	if l, ok := s.Limits[n]; ok && l.Resolution != nil {
		return *l.Resolution
	}
	return 0
}

// validateDecision checks decision_rule and response_resolution.
func (p *parser) validateDecision() {
	s := p.spec
	if !p.skip("decision_rule") {
		switch s.DecisionRule {
		case RuleSimple, RuleGuarded:
		default:
			p.problem("decision_rule", valNode, "must be simple (a value within its limits passes) or guarded (a value must lie inside its limits narrowed by a guard band), got %q", s.DecisionRule)
		}
	}
	if p.present("response_resolution") && !p.skip("response_resolution") && !(s.ResponseResolution > 0) {
		p.problem("response_resolution", valNode, "must be > 0: the encoder count in response units, e.g. 0.01; leave it out to use the count found in each log, got %s", formatFloat(s.ResponseResolution))
	}
}

// validateLimitDecision checks the optional keys of one limit: the
// resolution, the guard band and the required indices. bad is true when
// the bounds themselves were rejected.
func (p *parser) validateLimitDecision(path string, l Limit, bad bool) {
	positive := func(key string, v *float64, what string) {
		if v != nil && !p.skip(path+"."+key) && !(*v > 0) {
			p.problem(path+"."+key, valNode, "must be > 0: %s, got %s", what, formatFloat(*v))
		}
	}
	positive("resolution", l.Resolution, "the step the values are stated in")
	positive("min_ppk", l.MinPpk, "the smallest performance index Ppk the batch must reach")
	positive("min_cpk", l.MinCpk, "the smallest capability index Cpk the batch must reach")
	for _, g := range []struct {
		key string
		v   *float64
	}{{"guard_band", l.GuardBand}, {"guard_band_u", l.GuardBandU}} {
		if g.v == nil || p.skip(path+"."+g.key) {
			continue
		}
		switch {
		case *g.v < 0:
			p.problem(path+"."+g.key, valNode, "must be ≥ 0, got %s", formatFloat(*g.v))
		case p.spec.DecisionRule != RuleGuarded && !p.skip("decision_rule"):
			p.problem(path+"."+g.key, keyNode, "a guard band applies only under decision_rule: guarded; set it, or remove the guard band")
		}
	}
	if l.GuardBand != nil && l.GuardBandU != nil && !p.skip(path+".guard_band") && !p.skip(path+".guard_band_u") {
		p.problem(path+".guard_band_u", keyNode, "give guard_band (in the metric's unit) or guard_band_u (a multiple of U), not both")
	}
	if !bad && l.GuardBand != nil && *l.GuardBand >= 0 && l.Min != nil && l.Max != nil && *l.Max-*l.Min <= 2**l.GuardBand && !p.skip(path+".guard_band") {
		p.problem(path+".guard_band", valNode, "%s at each bound leaves no acceptance zone between min %s and max %s",
			formatFloat(*l.GuardBand), formatFloat(*l.Min), formatFloat(*l.Max))
	}
}

// explainDecision words the decision rule, its risk and the resolution, for
// Explain.
func (s *Spec) explainDecision() []string {
	out := []string{"Decision rule (ISO/IEC 17025:2017 §7.8.6, ISO 14253-1:2017, ILAC-G8:09/2019):"}
	if s.Guarded() {
		out = append(out,
			"  guarded acceptance: a value passes only inside its limits narrowed by",
			"  a guard band w (guard_band, guard_band_u × U, or U when the limit gives",
			"  neither); a value within U of a limit is a conditional pass and is not",
			"  accepted. With w = U the chance that an accepted value in truth lies",
			"  outside its limit stays below about 2.5 % (JCGM 106:2012).")
	} else {
		out = append(out,
			"  simple acceptance: a value within its limits passes whatever its",
			"  measurement uncertainty. A value within U of a limit is reported as a",
			"  conditional pass or fail; one on the limit may in truth lie outside it",
			"  with a chance of up to 50 % (JCGM 106:2012).")
	}
	out = append(out, "  every check states its expanded uncertainty U (k = 2), evaluated from",
		"  the record itself (noise, resolution, sample period)")
	if s.ResponseResolution > 0 {
		out = append(out, fmt.Sprintf("  response resolution %s%s (the encoder count); values are compared", formatFloat(s.ResponseResolution), unitSuffix(s.ResponseUnit)),
			"  with limits at their resolution")
	} else {
		out = append(out, "  response resolution: the count found in each log; values are compared",
			"  with limits at their resolution (that count, or the sample period for times)")
	}
	return out
}

// limitExtras words a limit's optional keys, one line each.
func (s *Spec) limitExtras(n metrics.Name) []string {
	l := s.Limits[n]
	u := unitSuffix(n.Unit(s.ResponseUnit))
	var out []string
	if l.Resolution != nil {
		out = append(out, fmt.Sprintf("stated and compared in steps of %s%s", formatFloat(*l.Resolution), u))
	}
	switch {
	case l.GuardBand != nil:
		out = append(out, fmt.Sprintf("guard band %s%s inside each bound", formatFloat(*l.GuardBand), u))
	case l.GuardBandU != nil:
		out = append(out, fmt.Sprintf("guard band %s × U inside each bound", formatFloat(*l.GuardBandU)))
	case s.Guarded():
		out = append(out, "guard band U inside each bound")
	}
	if l.MinPpk != nil {
		out = append(out, fmt.Sprintf("the batch must reach Ppk ≥ %s (overall σ)", formatFloat(*l.MinPpk)))
	}
	if l.MinCpk != nil {
		out = append(out, fmt.Sprintf("the batch must reach Cpk ≥ %s (within-subgroup σ)", formatFloat(*l.MinCpk)))
	}
	return out
}
