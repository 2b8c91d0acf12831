package metrics

import (
	"fmt"
	"math"
	"strconv"
)

// The functions in this file measure one metric each over plain slices: t
// and y are the times and response values of one step's samples, t[0] is the
// step instant, and every returned time is measured from t[0]. They assume
// equal lengths, finite values and strictly increasing t (see
// Trace.Validate); they do not modify their arguments and do not allocate
// except to build a reason.

// crossing returns the time after t[0] and the sample index at which y
// first reaches level, searching from sample from on, in the rising (up) or
// falling (down) sense. The instant is interpolated linearly between the last
// sample short of the level and the first one at or beyond it (IEEE Std
// 181-2011 §5.3.3); a level already reached at sample from is reached at
// t[from] unless sample from−1 is short of it.
func crossing(t, y []float64, level float64, up bool, from int) (at float64, idx int, ok bool) {
	beyond := func(v float64) bool {
		if up {
			return v >= level
		}
		return v <= level
	}
	for i := from; i < len(y); i++ {
		if !beyond(y[i]) {
			continue
		}
		if i == 0 || beyond(y[i-1]) {
			return t[i] - t[0], i, true
		}
		f := (level - y[i-1]) / (y[i] - y[i-1])
		return t[i-1] + f*(t[i]-t[i-1]) - t[0], i, true
	}
	return 0, -1, false
}

// CrossingTime is the time after t[0] at which y first reaches level, going
// up when rising is true and down otherwise, interpolated linearly between
// the two samples around the crossing (IEEE Std 181-2011 §5.3.3, reference
// level instant). Unknown when y never reaches the level.
func CrossingTime(t, y []float64, level float64, rising bool) Value {
	if at, _, ok := crossing(t, y, level, rising, 0); ok {
		return Known(at)
	}
	return Unknown(fmt.Sprintf("response never reaches %s", num(level)))
}

// MeasureDeadTime is the time from the step instant until the response first
// departs from the initial level by the fraction level of the transition,
// i.e. first reaches initial + level·(final − initial), interpolated.
// ANSI/ISA-51.1-1979 defines dead time as the interval from the input change
// to the start of an observable response (from memory); the departure level
// that marks "observable" (stepgate's default 2 %) is stepgate's choice
// (common practice, no source). Unknown when final equals initial or the
// level is never reached.
func MeasureDeadTime(t, y []float64, initial, final, level float64) Value {
	if final == initial {
		return Unknown("final value equals initial value: there is no transition to time")
	}
	l := initial + level*(final-initial)
	if at, _, ok := crossing(t, y, l, final > initial, 0); ok {
		return Known(at)
	}
	return Unknown(fmt.Sprintf("response never departs %s %% of the way from %s (level %s)",
		pct(level), num(initial), num(l)))
}

// MeasureRiseTime is the time between the first crossing of
// initial + low·(final − initial) and the first crossing after it of
// initial + high·(final − initial), both interpolated (IEEE Std 181-2011
// §5.3.3, transition duration between reference levels; ANSI/ISA-51.1-1979
// rise time, from memory). Unknown when final equals initial or a level is
// never reached.
func MeasureRiseTime(t, y []float64, initial, final, low, high float64) Value {
	if final == initial {
		return Unknown("final value equals initial value: there is no transition to time")
	}
	up := final > initial
	ll := initial + low*(final-initial)
	lh := initial + high*(final-initial)
	t1, i1, ok := crossing(t, y, ll, up, 0)
	if !ok {
		return Unknown(fmt.Sprintf("response never reaches the %s %% level (%s)", pct(low), num(ll)))
	}
	t2, _, ok := crossing(t, y, lh, up, i1)
	if !ok {
		return Unknown(fmt.Sprintf("response never reaches the %s %% level (%s)", pct(high), num(lh)))
	}
	return Known(t2 - t1)
}

// MeasurePeak returns the extreme of the response in the step's direction
// (the largest sample when rising, the smallest otherwise) and its time after
// t[0]; the first such sample when several are equal. The peak is a sample,
// not interpolated, so its time resolves to the sample spacing. Both are
// unknown when there are no samples.
func MeasurePeak(t, y []float64, rising bool) (peak, at Value) {
	if len(y) == 0 {
		why := Unknown("step has no samples")
		return why, why
	}
	k := 0
	for i := 1; i < len(y); i++ {
		if (rising && y[i] > y[k]) || (!rising && y[i] < y[k]) {
			k = i
		}
	}
	return Known(y[k]), Known(t[k] - t[0])
}

// MeasureOvershoot is the excursion of peak beyond final, in the direction of
// the transition from initial to final, as a percentage of |final − initial|
// (IEEE Std 181-2011 §5.4, overshoot; ANSI/ISA-51.1-1979, from memory). It
// is 0 when the peak does not pass the final value. Unknown when final
// equals initial.
func MeasureOvershoot(peak, initial, final float64) Value {
	a := final - initial
	if a == 0 {
		return Unknown("final value equals initial value: there is no transition to overshoot")
	}
	ex := (peak - final) * math.Copysign(1, a)
	if ex <= 0 {
		return Known(0)
	}
	return Known(ex / math.Abs(a) * 100)
}

// MeasureSettlingTime is the time after the step instant from which the
// response stays within ±halfWidth of final: the last exit from the band,
// interpolated linearly between the last sample outside it and the next
// sample (inside), measured from the step instant as control texts do
// (K. Ogata, Modern Control Engineering, 5th ed., §5-3; ANSI/ISA-51.1-1979,
// from memory). It is 0 when no sample is outside the band, and unknown when
// the last sample is still outside.
func MeasureSettlingTime(t, y []float64, final, halfWidth float64) Value {
	return settlingTime(t, y, final, halfWidth, lastOutside(y, final, halfWidth))
}

// settlingTime is MeasureSettlingTime given i, the last sample outside the
// band (lastOutside).
func settlingTime(t, y []float64, final, halfWidth float64, i int) Value {
	switch {
	case len(y) == 0:
		return Unknown("step has no samples")
	case i < 0:
		return Known(0)
	case i == len(y)-1:
		return Unknown(fmt.Sprintf("still outside the ±%s band around %s at the end of the record, %s s after the step",
			num(halfWidth), num(final), num(t[i]-t[0])))
	}
	edge := final + math.Copysign(halfWidth, y[i]-final)
	f := (edge - y[i]) / (y[i+1] - y[i])
	f = math.Min(math.Max(f, 0), 1)
	return Known(t[i] + f*(t[i+1]-t[i]) - t[0])
}

// MeasureLastOutside is the time after the step instant of the last sample
// outside ±halfWidth of centre, not interpolated; 0 when no sample is
// outside. It is the evidence of a settling failure when the settling time
// itself cannot be measured. Unknown only when there are no samples.
func MeasureLastOutside(t, y []float64, centre, halfWidth float64) Value {
	if len(y) == 0 {
		return Unknown("step has no samples")
	}
	return lastOutsideTime(t, lastOutside(y, centre, halfWidth))
}

// lastOutsideTime is MeasureLastOutside given i, the last sample outside
// the band (lastOutside); t is not empty.
func lastOutsideTime(t []float64, i int) Value {
	if i < 0 {
		return Known(0)
	}
	return Known(t[i] - t[0])
}

// lastOutside returns the index of the last sample farther than halfWidth
// from centre, or −1.
func lastOutside(y []float64, centre, halfWidth float64) int {
	for i := len(y) - 1; i >= 0; i-- {
		if math.Abs(y[i]-centre) > halfWidth {
			return i
		}
	}
	return -1
}

// MeasureSteadyStateError returns |command − final| in response units and as
// a percentage of |stepSize| (the error of a settled output relative to its
// command; K. Ogata, Modern Control Engineering, 5th ed., §5-8). The
// percentage is unknown when stepSize is zero.
func MeasureSteadyStateError(command, final, stepSize float64) (abs, pct Value) {
	e := math.Abs(command - final)
	if stepSize == 0 {
		return Known(e), Unknown("step size is zero")
	}
	return Known(e), Known(e / math.Abs(stepSize) * 100)
}

// num formats a number for a reason: four significant digits, no exponent
// for ordinary magnitudes.
func num(x float64) string { return strconv.FormatFloat(x, 'g', 4, 64) }

// pct formats a fraction as a percentage number.
func pct(f float64) string { return strconv.FormatFloat(f*100, 'g', 4, 64) }
