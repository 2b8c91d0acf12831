package causes

import (
	"math"
	"sort"
)

// Thresholds of the spread between units: stepgate's choices (common
// practice, no source).
const (
	// SpreadCV is the smallest coefficient of variation of ωn² (or of the
	// fitted static gain) over the units that counts as a spread: a lot
	// whose force constant and inertia vary by ±2 % each has a CV of ωn²
	// near 1.6 %, a ±15 % gain spread one near 8.7 % (uniform spreads:
	// the SD of a uniform ±a is a/√3).
	SpreadCV = 0.04
	// SpreadNoiseMultiple: the spread must also exceed this many times
	// the measurement noise, the pooled within-unit CV of units with
	// several fitted steps.
	SpreadNoiseMultiple = 3
	// MinUnitsForSpread is the fewest fitted units a spread is judged on.
	MinUnitsForSpread = 3
)

// Spread is the batch's evidence of a gain or inertia spread.
type Spread struct {
	// Units counts the units with a fitted step.
	Units int
	// WnSquaredCV and GainCV are the coefficients of variation over the
	// units of their mean fitted ωn² and static gain; NoiseCV the pooled
	// within-unit CV of ωn² (0 when no unit has two fitted steps).
	WnSquaredCV, GainCV, NoiseCV float64
	// Indicated is true when either CV is beyond the thresholds.
	Indicated bool
}

// Judge names each unit's causes from its steps' evidence and the batch's
// spread: a unit's cause is one of its steps' causes, and GainSpread when
// the batch spreads and the unit's ωn² or static gain lies more than
// SpreadCV from the batch median.
func Judge(units [][]StepEvidence) ([]Cause, Spread) {
	out := make([]Cause, len(units))
	wn, g := make([]float64, len(units)), make([]float64, len(units))
	var fitted []int
	var ss, dof float64
	for i, steps := range units {
		var w, k []float64
		for _, s := range steps {
			out[i] |= s.Causes
			if s.WnSquared.OK && s.StaticGain.OK {
				w, k = append(w, s.WnSquared.V), append(k, s.StaticGain.V)
			}
		}
		if len(w) == 0 {
			wn[i], g[i] = math.NaN(), math.NaN()
			continue
		}
		fitted = append(fitted, i)
		wn[i], g[i] = mean(w), mean(k)
		for _, v := range w {
			ss += (v/wn[i] - 1) * (v/wn[i] - 1)
		}
		dof += float64(len(w) - 1)
	}
	sp := Spread{Units: len(fitted)}
	if sp.Units < MinUnitsForSpread {
		return out, sp
	}
	if dof > 0 {
		sp.NoiseCV = math.Sqrt(ss / dof)
	}
	pick := func(x []float64) []float64 {
		v := make([]float64, 0, len(fitted))
		for _, i := range fitted {
			v = append(v, x[i])
		}
		return v
	}
	ws, gs := pick(wn), pick(g)
	sp.WnSquaredCV, sp.GainCV = cv(ws), cv(gs)
	bar := math.Max(SpreadCV, SpreadNoiseMultiple*sp.NoiseCV)
	sp.Indicated = sp.WnSquaredCV > bar || sp.GainCV > bar
	if !sp.Indicated {
		return out, sp
	}
	mw, mg := median(ws), median(gs)
	for _, i := range fitted {
		if math.Abs(wn[i]/mw-1) > SpreadCV || math.Abs(g[i]/mg-1) > SpreadCV {
			out[i] |= GainSpread
		}
	}
	return out, sp
}

// cv is the sample coefficient of variation (n − 1).
func cv(x []float64) float64 {
	m := mean(x)
	var s float64
	for _, v := range x {
		s += (v - m) * (v - m)
	}
	return math.Sqrt(s/float64(len(x)-1)) / math.Abs(m)
}

func median(x []float64) float64 {
	y := append([]float64(nil), x...)
	sort.Float64s(y)
	n := len(y)
	if n%2 == 1 {
		return y[n/2]
	}
	return (y[n/2-1] + y[n/2]) / 2
}
