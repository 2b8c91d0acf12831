package logs

import (
	"fmt"
	"math"
	"strconv"
)

// Plausible sample periods of a step test: a log whose mean period lies
// outside is read in the wrong time unit (ms read as s, sample numbers read
// as seconds), not a test.
const (
	MinSamplePeriod = 1e-6 // 1 MHz
	MaxSamplePeriod = 0.5  // 2 Hz
)

// ScaleFactor is how far the response may lie from the command's scale
// before a log is refused as not converted (ErrScale).
const ScaleFactor = 10

// check converts the columns with the Format's Scale and, when the Format
// asks for it, refuses a log whose sample period or response scale cannot
// be right.
func (rd *Reader) check(lg *Log) error {
	tr := &lg.Trace
	rd.f.Scale[ScaleCommand].apply(tr.Command)
	rd.f.Scale[ScaleResponse].apply(tr.Response)
	if tr.Effort != nil {
		rd.f.Scale[ScaleEffort].apply(tr.Effort)
	}
	if !rd.f.Plausible {
		return nil
	}
	if err := rd.checkPeriod(tr.Time); err != nil {
		return err
	}
	return rd.checkScale(tr.Command, tr.Response)
}

// checkPeriod refuses a mean sample period outside the plausible range.
func (rd *Reader) checkPeriod(t []float64) error {
	n := len(t)
	p := (t[n-1] - t[0]) / float64(n-1)
	if p >= MinSamplePeriod && p <= MaxSamplePeriod {
		return nil
	}
	unit := rd.f.TimeUnit
	if unit == "" {
		unit = "s"
	}
	how := "if the time column counts samples, give log.sample_rate_hz; if it is in ms or us, set time_unit"
	if rd.stamp.on {
		how = "check the timestamps"
	} else if p < MinSamplePeriod {
		how = "if the time column is in seconds, set time_unit: s"
	}
	return &ParseError{File: rd.name, Column: rd.column(roleTime), Field: rd.f.Time, Err: because(ErrSamplePeriod,
		fmt.Sprintf("the mean sample period is %s s (time read in %s), outside the %g s to %g s of a step test: %s",
			strconv.FormatFloat(p, 'g', 4, 64), unit, MinSamplePeriod, MaxSamplePeriod, how))}
}

// checkScale refuses a response that lies a factor of ScaleFactor or more
// from the command's scale: its level far above the command's, or
// following the command's shape (correlation above 0.8) at a gain beyond
// ScaleFactor either way. A response that does not move, or moves the
// wrong way at the command's scale, is measured and judged, not refused.
func (rd *Reader) checkScale(c, r []float64) error {
	n := float64(len(c))
	var mc, mr, cmax, rabs float64
	for i := range c {
		mc += c[i]
		mr += r[i]
		cmax = max(cmax, math.Abs(c[i]))
		rabs += math.Abs(r[i])
	}
	mc, mr, rabs = mc/n, mr/n, rabs/n
	var scc, srr, scr float64
	for i := range c {
		dc, dr := c[i]-mc, r[i]-mr
		scc += dc * dc
		srr += dr * dr
		scr += dc * dr
	}
	if cmax == 0 || scc == 0 {
		return nil
	}
	gain := scr / scc
	corr := 0.0
	if srr > 0 {
		corr = scr / math.Sqrt(scc*srr)
	}
	var what string
	switch g := math.Abs(gain); {
	case rabs > ScaleFactor*cmax:
		what = fmt.Sprintf("its mean level %s is %s times the command's largest value %s",
			fmtG(rabs), fmtG(rabs/cmax), fmtG(cmax))
	case g >= ScaleFactor && math.Abs(corr) > 0.8:
		what = fmt.Sprintf("it follows the command %s times as large", fmtG(gain))
	case g > 0 && g <= 1/float64(ScaleFactor) && math.Abs(corr) > 0.8:
		what = fmt.Sprintf("it follows the command at %s of its size", fmtG(gain))
	default:
		return nil
	}
	return &ParseError{File: rd.name, Column: rd.column(roleResponse), Field: rd.f.Response, Err: because(ErrScale,
		"the response lies far from the command's scale: "+what+
			"; check the response scale (encoder counts or another unit not converted: give log.scale.response a factor, an offset or invert in the spec)")}
}

func fmtG(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }
