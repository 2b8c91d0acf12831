package stats

// Rule names a test for special causes on a control chart.
type Rule string

// The tests for special causes of ISO 7870-2:2013 (the eight tests listed
// with Shewhart charts; the zones are the thirds of the distance from the
// centre line to a control limit), plus the moving-range chart's limit.
const (
	// RuleBeyondLimits: one point beyond a control limit (3σ).
	RuleBeyondLimits Rule = "beyond_limits"
	// RuleNineOneSide: nine points in a row on the same side of the centre line.
	RuleNineOneSide Rule = "nine_one_side"
	// RuleSixTrending: six points in a row steadily increasing or decreasing.
	RuleSixTrending Rule = "six_trending"
	// RuleFourteenAlternating: fourteen points in a row alternating up and down.
	RuleFourteenAlternating Rule = "fourteen_alternating"
	// RuleTwoOfThreeBeyond2Sigma: two of three points in a row beyond 2σ on the same side.
	RuleTwoOfThreeBeyond2Sigma Rule = "two_of_three_beyond_2sigma"
	// RuleFourOfFiveBeyond1Sigma: four of five points in a row beyond 1σ on the same side.
	RuleFourOfFiveBeyond1Sigma Rule = "four_of_five_beyond_1sigma"
	// RuleFifteenWithin1Sigma: fifteen points in a row within 1σ of the centre line.
	RuleFifteenWithin1Sigma Rule = "fifteen_within_1sigma"
	// RuleEightBeyond1Sigma: eight points in a row beyond 1σ, on either side.
	RuleEightBeyond1Sigma Rule = "eight_beyond_1sigma"
	// RuleRangeBeyondLimit: a moving range above the mR chart's upper limit.
	RuleRangeBeyondLimit Rule = "range_beyond_limit"
)

var xChartRules = [...]Rule{RuleBeyondLimits, RuleNineOneSide, RuleSixTrending,
	RuleFourteenAlternating, RuleTwoOfThreeBeyond2Sigma,
	RuleFourOfFiveBeyond1Sigma, RuleFifteenWithin1Sigma, RuleEightBeyond1Sigma}

// Rules returns the X chart's tests in the order of ISO 7870-2.
func Rules() []Rule { return append([]Rule(nil), xChartRules[:]...) }

// Signal is one test for special causes met on a chart.
type Signal struct {
	// Rule is the test met.
	Rule Rule
	// Index is the index of the point that completes the pattern.
	Index int
}

// SpecialCauses applies the tests of ISO 7870-2:2013 to x against the given
// limits and returns every signal in order of index and then of Rules. A
// pattern that goes on is signalled again at each further point that
// completes it (a run of ten on one side signals at its ninth and tenth
// points). "Beyond" a line means strictly beyond it and "within" strictly
// within, so a point on a line counts for neither; a point on the centre
// line ends a run on one side, and an equal neighbour ends a trend or an
// alternation. At the start of the series, two of the first two points, or
// four of the first four, already complete the two-of-three and
// four-of-five tests. The zones are sixths of the span from LCL to UCL about
// the centre line; limits without a positive span, or a non-finite value in
// x, give no signals.
func SpecialCauses(x []float64, l Limits) []Signal {
	z := l.zone()
	if !(z > 0) || finiteReason(x) != "" {
		return nil
	}
	var out []Signal
	var s runState
	for i, v := range x {
		s.step(x, i, v, l.Centre, z)
		for _, r := range xChartRules {
			if s.met(r, x, i, l) {
				out = append(out, Signal{r, i})
			}
		}
	}
	return out
}

// runState carries the run lengths ending at the current point.
type runState struct {
	side, sideRun    int // side of the centre line (+1, −1, 0) and its run
	dir, trendRun    int // direction of the last change and the number of changes in that direction
	alternations     int // changes in a row, each opposite to the one before
	within, outside1 int // points in a row within 1σ / beyond 1σ
}

func (s *runState) step(x []float64, i int, v, centre, z float64) {
	side := sign(v - centre)
	if side != 0 && side == s.side {
		s.sideRun++
	} else {
		s.sideRun = abs(side)
	}
	s.side = side
	dir := 0
	if i > 0 {
		dir = sign(v - x[i-1])
	}
	switch {
	case dir != 0 && dir == s.dir:
		s.trendRun++
	default:
		s.trendRun = abs(dir)
	}
	switch {
	case dir != 0 && dir == -s.dir:
		s.alternations++
	default:
		s.alternations = abs(dir)
	}
	s.dir = dir
	s.within = countRun(s.within, abs64(v-centre) < z)
	s.outside1 = countRun(s.outside1, abs64(v-centre) > z)
}

func (s *runState) met(r Rule, x []float64, i int, l Limits) bool {
	centre, z := l.Centre, l.zone()
	switch r {
	case RuleBeyondLimits:
		return x[i] > l.UCL || x[i] < l.LCL
	case RuleNineOneSide:
		return s.sideRun >= 9
	case RuleSixTrending:
		return s.trendRun >= 5
	case RuleFourteenAlternating:
		return s.alternations >= 13
	case RuleTwoOfThreeBeyond2Sigma:
		return beyondInWindow(x, i, 3, 2, centre, 2*z)
	case RuleFourOfFiveBeyond1Sigma:
		return beyondInWindow(x, i, 5, 4, centre, z)
	case RuleFifteenWithin1Sigma:
		return s.within >= 15
	case RuleEightBeyond1Sigma:
		return s.outside1 >= 8
	}
	return false
}

// beyondInWindow reports whether x[i] lies beyond centre ± d and at least
// need of the last width points (fewer at the start) lie beyond on its side.
func beyondInWindow(x []float64, i, width, need int, centre, d float64) bool {
	side := 0
	switch {
	case x[i] > centre+d:
		side = 1
	case x[i] < centre-d:
		side = -1
	default:
		return false
	}
	count := 0
	for k := max(0, i-width+1); k <= i; k++ {
		if (side > 0 && x[k] > centre+d) || (side < 0 && x[k] < centre-d) {
			count++
		}
	}
	return count >= need
}

func countRun(run int, ok bool) int {
	if ok {
		return run + 1
	}
	return 0
}

func sign(v float64) int {
	switch {
	case v > 0:
		return 1
	case v < 0:
		return -1
	}
	return 0
}

func abs(v int) int {
	if v < 0 {
		return -v
	}
	return v
}

func abs64(v float64) float64 {
	if v < 0 {
		return -v
	}
	return v
}
