package chart

import (
	"fmt"
	"math"
	"sort"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/metrics"
)

// Kind classifies a curve; it sets the colour and the legend entry.
type Kind int

// The curve kinds, in drawing order: predictions are drawn last, on top.
const (
	StepPass    Kind = iota // a recorded step that passed
	StepInvalid             // a recorded step whose data could not show pass or fail
	StepFail                // a recorded step that failed
	Prediction              // the model's predicted step
)

// Curve is one step response normalised to its step: T in seconds from the
// step instant, Y = (response − from)/(to − from), so 0 is the level before
// the step and 1 the commanded level after it.
type Curve struct {
	Kind  Kind
	Label string // "unit, step k" or "prediction from → to"
	T, Y  []float64
}

// Overlay is a set of normalised curves that share one time window and one
// settling band: the content of one chart.
type Overlay struct {
	// Window is the time shown after the step instant, in seconds.
	Window float64
	// Band is the settling band half-width as a fraction of the step size.
	Band float64
	// YMin and YMax bound the normalised axis. Curves outside are clipped
	// at the frame; Clipped says whether any was.
	YMin, YMax float64
	Clipped    bool
	// Curves in drawing order: passed, invalid, failed, predictions.
	Curves []Curve
	// PredictionKind is "realised" or "ideal" when predictions are drawn.
	PredictionKind string

	// Steps counts the unit steps considered; Shown those drawn. Steps of
	// units whose record was not kept are neither drawn nor skipped.
	Steps, Shown int
	// NoRecord counts steps of units whose record was not kept.
	NoRecord int
	// Thinned counts steps left out to keep the chart readable (beyond
	// MaxCurves; a sample of each verdict is kept, see thin).
	Thinned int
	// Skipped lists the steps that had a record but could not be drawn, with
	// the reason, in report order.
	Skipped []string
}

// Limits of one chart. Beyond MaxCurves unit curves a chart is unreadable
// and the file grows without telling the reader more; failed and invalid
// steps are kept first.
const (
	MaxCurves      = 600 // most unit curves in one chart
	PointsFew      = 300 // points per curve when the chart has few curves
	PointsMany     = 120 // points per curve when it has more than FewCurves
	FewCurves      = 60
	windowOverSett = 1.5 // window as a multiple of the settling-time limit
)

// StartIndex returns the sample of tr nearest to the step instant startS
// (seconds on the record's clock). It fails when the nearest sample is more
// than half a sample interval away, which means the step does not belong to
// this record.
func StartIndex(tr *metrics.Trace, startS float64) (int, error) {
	n := tr.Len()
	if n == 0 {
		return 0, fmt.Errorf("record has no samples")
	}
	i := sort.SearchFloat64s(tr.Time, startS)
	best := i
	if i >= n || (i > 0 && startS-tr.Time[i-1] < tr.Time[i]-startS) {
		best = i - 1
	}
	if n == 1 {
		best = 0
	}
	spacing := 0.0
	switch {
	case best+1 < n:
		spacing = tr.Time[best+1] - tr.Time[best]
	case best > 0:
		spacing = tr.Time[best] - tr.Time[best-1]
	}
	if d := math.Abs(tr.Time[best] - startS); d > spacing/2+1e-9*math.Max(1, math.Abs(startS)) {
		return 0, fmt.Errorf("no sample at the step instant t = %g s (record spans %g s to %g s)",
			startS, tr.Time[0], tr.Time[n-1])
	}
	return best, nil
}

// commandStart returns the first sample of a simulated record at which the
// command is nearer to the level after the step, to, than to the level
// before it, from: the step instant. It is 0 when the record starts at the
// new level.
func commandStart(tr *metrics.Trace, from, to float64) (int, error) {
	for i, c := range tr.Command {
		if math.Abs(c-to) < math.Abs(c-from) {
			return i, nil
		}
	}
	return 0, fmt.Errorf("command never reaches the step level %g", to)
}

// Normalise returns the samples start..end-1 of tr as time from the step
// instant and response normalised to the step from → to, up to the first
// sample past window seconds (so that a line reaches the frame).
func Normalise(tr *metrics.Trace, start, end int, from, to, window float64) (t, y []float64, err error) {
	size := to - from
	if size == 0 || math.IsNaN(size) || math.IsInf(size, 0) {
		return nil, nil, fmt.Errorf("step from %g to %g has no size to normalise by", from, to)
	}
	if end > tr.Len() {
		end = tr.Len()
	}
	if start < 0 || start >= end {
		return nil, nil, fmt.Errorf("step samples %d..%d lie outside the record of %d samples", start, end-1, tr.Len())
	}
	t0 := tr.Time[start]
	for i := start; i < end; i++ {
		dt := tr.Time[i] - t0
		t = append(t, dt)
		v := (tr.Response[i] - from) / size
		if v == 0 {
			v = 0 // no negative zero
		}
		y = append(y, v)
		if dt > window {
			break
		}
	}
	return t, y, nil
}

// Downsample reduces a curve to at most n points (n ≥ 4). It keeps the
// first and the last sample, splits the others into (n − 2)/2 runs of
// consecutive samples and keeps the lowest and the highest of each run in
// time order, so that peaks and overshoot survive.
func Downsample(t, y []float64, n int) ([]float64, []float64) {
	if n < 4 {
		n = 4
	}
	if len(t) <= n {
		return append([]float64(nil), t...), append([]float64(nil), y...)
	}
	buckets := (n - 2) / 2
	ot := make([]float64, 0, n)
	oy := make([]float64, 0, n)
	push := func(i int) {
		if k := len(ot); k > 0 && ot[k-1] == t[i] && oy[k-1] == y[i] {
			return
		}
		ot = append(ot, t[i])
		oy = append(oy, y[i])
	}
	push(0)
	for b := 0; b < buckets; b++ {
		lo := 1 + b*(len(t)-2)/buckets
		hi := 1 + (b+1)*(len(t)-2)/buckets
		if lo >= hi {
			continue
		}
		imin, imax := lo, lo
		for i := lo; i < hi; i++ {
			if y[i] < y[imin] {
				imin = i
			}
			if y[i] > y[imax] {
				imax = i
			}
		}
		if imin > imax {
			imin, imax = imax, imin
		}
		push(imin)
		push(imax)
	}
	push(len(t) - 1)
	return ot, oy
}

// ForBatch lays out every step of every unit whose record was kept, and the
// model's predictions when the batch has a model.
func ForBatch(b *acceptance.Batch) *Overlay {
	idx := make([]int, len(b.Units))
	for i := range idx {
		idx[i] = i
	}
	return build(b, idx)
}

// forUnit lays out the steps of unit number i of the batch (an index into
// b.Units) with the model's predictions.
func forUnit(b *acceptance.Batch, i int) *Overlay {
	return build(b, []int{i})
}

// segment is one step's slice of a record, before normalisation.
type segment struct {
	kind       Kind
	label      string
	tr         *metrics.Trace
	start, end int
	from, to   float64
	duration   float64
	// pre is the batch's normalised curve of a step whose record was not
	// kept; tr is nil then.
	pre *acceptance.StepCurve
}

func build(b *acceptance.Batch, units []int) *Overlay {
	o := &Overlay{Band: digest.SettlingBand(b)}
	var segs []segment
	for _, ui := range units {
		segs = o.unitSegments(&b.Units[ui], segs)
	}
	segs = thin(segs, o, passShare(b, units))
	preds := predictionSegments(b, o)
	o.Window = overlayWindow(b, segs, preds)
	points := PointsFew
	if len(segs) > FewCurves {
		points = PointsMany
	}
	ymin, ymax := math.Inf(1), math.Inf(-1)
	for _, group := range [][]segment{segs, preds} {
		for _, s := range group {
			lo, hi := o.addCurve(s, points)
			ymin, ymax = math.Min(ymin, lo), math.Max(ymax, hi)
		}
	}
	sort.SliceStable(o.Curves, func(i, j int) bool { return o.Curves[i].Kind < o.Curves[j].Kind })
	o.YMin, o.YMax = -0.1, 1.25
	if !math.IsInf(ymin, 0) {
		o.YMin = math.Max(-1, math.Min(o.YMin, ymin-0.05))
		o.YMax = math.Min(2.5, math.Max(o.YMax, ymax+0.05))
		o.Clipped = ymin < o.YMin || ymax > o.YMax
	}
	return o
}

// passShare is the fraction of the steps of the given units that passed.
func passShare(b *acceptance.Batch, units []int) float64 {
	pass, all := 0, 0
	for _, ui := range units {
		for _, s := range b.Units[ui].Steps {
			all++
			if s.Verdict == acceptance.Pass {
				pass++
			}
		}
	}
	if all == 0 {
		return 0
	}
	return float64(pass) / float64(all)
}

// unitSegments appends the segments of u's steps to segs: cut from its
// record when it was kept, else the step's kept curve; a step with neither
// is counted as without a record, one that cannot be cut as skipped.
func (o *Overlay) unitSegments(u *acceptance.UnitResult, segs []segment) []segment {
	for si, s := range u.Steps {
		o.Steps++
		label := fmt.Sprintf("%s, step %d", u.Unit, s.Index)
		if (u.Trace == nil || u.Trace.Len() == 0) && s.Curve != nil && len(s.Curve.Y) > 1 {
			segs = append(segs, segment{kind: kindOf(s.Verdict), label: label, pre: s.Curve, duration: curveDuration(s.Curve)})
			continue
		}
		if u.Trace == nil || u.Trace.Len() == 0 {
			o.NoRecord++
			continue
		}
		start, err := StartIndex(u.Trace, s.StartS)
		if err != nil {
			o.Skipped = append(o.Skipped, label+": "+err.Error())
			continue
		}
		end := u.Trace.Len()
		if si+1 < len(u.Steps) {
			if e, err := StartIndex(u.Trace, u.Steps[si+1].StartS); err == nil && e > start {
				end = e
			}
		}
		if s.To == s.From {
			o.Skipped = append(o.Skipped, label+": the step has no size to normalise by")
			continue
		}
		segs = append(segs, segment{
			kind: kindOf(s.Verdict), label: label, tr: u.Trace,
			start: start, end: end, from: s.From, to: s.To,
			duration: u.Trace.Time[end-1] - u.Trace.Time[start],
		})
	}
	return segs
}

// overlayWindow is the time the overlay shows after the step instant: the
// longest segment, shortened to a multiple of the settling-time limit when
// there is one; 1 s when nothing has a length.
func overlayWindow(b *acceptance.Batch, segs, preds []segment) float64 {
	longest := 0.0
	for _, s := range segs {
		longest = math.Max(longest, s.duration)
	}
	for _, s := range preds {
		longest = math.Max(longest, s.duration)
	}
	window := longest
	if l, ok := b.Limits[metrics.SettlingTime]; ok && l.Max != nil && *l.Max > 0 {
		w := windowOverSett * *l.Max
		if longest == 0 || w < longest {
			window = w
		}
	}
	if window <= 0 {
		window = 1
	}
	return window
}

// addCurve normalises s over the window, thins it to points and adds it,
// returning the lowest and highest value it shows (±Inf when none).
func (o *Overlay) addCurve(s segment, points int) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	var t, y []float64
	var err error
	if s.pre != nil {
		t, y = curvePoints(s.pre, o.Window)
	} else {
		t, y, err = Normalise(s.tr, s.start, s.end, s.from, s.to, o.Window)
	}
	if err != nil {
		o.Skipped = append(o.Skipped, s.label+": "+err.Error())
		return lo, hi
	}
	t, y = Downsample(t, y, points)
	for i := range y {
		if t[i] <= o.Window {
			lo = math.Min(lo, y[i])
			hi = math.Max(hi, y[i])
		}
	}
	o.Curves = append(o.Curves, Curve{Kind: s.kind, Label: s.label, T: t, Y: y})
	if s.kind != Prediction {
		o.Shown++
	}
	return lo, hi
}

// curveDuration is the time the curve covers before its record ends.
func curveDuration(c *acceptance.StepCurve) float64 {
	n := len(c.Y)
	last := 0
	for k, v := range c.Y {
		if !math.IsNaN(float64(v)) {
			last = k
		}
	}
	return c.Window * float64(last) / float64(n-1)
}

// curvePoints returns the curve's points up to window seconds.
func curvePoints(c *acceptance.StepCurve, window float64) (t, y []float64) {
	n := len(c.Y)
	for k, v := range c.Y {
		tk := c.Window * float64(k) / float64(n-1)
		if tk > window || math.IsNaN(float64(v)) {
			break
		}
		t = append(t, tk)
		y = append(y, float64(v))
	}
	return t, y
}

func kindOf(v acceptance.Verdict) Kind {
	switch v {
	case acceptance.Pass:
		return StepPass
	case acceptance.Fail:
		return StepFail
	}
	return StepInvalid
}

// thin keeps at most MaxCurves segments, so that the chart shows the
// batch as it is: when every step that did not pass fits beside a quarter
// of the room for passed steps, all of them are kept and passed steps fill
// the rest; otherwise each side gets its share of the batch's steps (at
// least a quarter of the room each), both spread evenly over the batch.
// passShare is the fraction of the batch's steps that passed.
func thin(segs []segment, o *Overlay, passShare float64) []segment {
	if len(segs) <= MaxCurves {
		return segs
	}
	var bad, good []segment
	for _, s := range segs {
		if s.kind == StepPass {
			good = append(good, s)
		} else {
			bad = append(bad, s)
		}
	}
	floor := min(len(good), MaxCurves/4)
	nGood := MaxCurves - len(bad)
	if nGood < floor {
		nGood = max(floor, min(len(good), int(math.Round(MaxCurves*passShare))))
	}
	nGood = min(nGood, len(good))
	nBad := min(len(bad), MaxCurves-nGood)
	o.Thinned = len(good) + len(bad) - nGood - nBad
	return append(spread(good, nGood), spread(bad, nBad)...)
}

// spread returns n of segs spread evenly over them, in their order.
func spread(segs []segment, n int) []segment {
	if n >= len(segs) {
		return segs
	}
	kept := make([]segment, 0, n)
	for k := 0; k < n; k++ {
		kept = append(kept, segs[k*len(segs)/n])
	}
	return kept
}

// predictionSegments returns the model's nominal steps, realised when the
// model says the realised loop applies, else ideal. A nominal step without
// a simulated record of that kind is not drawn.
func predictionSegments(b *acceptance.Batch, o *Overlay) []segment {
	if b.Model == nil {
		return nil
	}
	var out []segment
	for i := range b.Model.Nominal {
		n := &b.Model.Nominal[i]
		_, tr, kind := b.Model.Compared(n)
		if tr == nil || tr.Len() == 0 {
			continue
		}
		label := fmt.Sprintf("prediction %g → %g", n.From, n.To)
		if n.To == n.From {
			o.Skipped = append(o.Skipped, label+": the step has no size to normalise by")
			continue
		}
		start, err := commandStart(tr, n.From, n.To)
		if err != nil {
			o.Skipped = append(o.Skipped, label+": "+err.Error())
			continue
		}
		o.PredictionKind = kind
		out = append(out, segment{
			kind: Prediction, label: label, tr: tr, start: start, end: tr.Len(),
			from: n.From, to: n.To, duration: tr.Time[tr.Len()-1] - tr.Time[start],
		})
	}
	return out
}
