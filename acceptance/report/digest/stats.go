package digest

import (
	"fmt"
	"math"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// IndicativeN is the number of measured steps below which a capability
// index is flagged "indicative only" (common practice, no source).
const IndicativeN = 30

// Histogram limits: ⌈2√n⌉ bins of equal width, between MinBins and
// MaxBins (stepgate's choice; common practice, no source), with one edge on
// a limit that falls inside the data, so that no bin holds values on both
// sides of it.
const (
	MinBins = 8
	MaxBins = 30
)

// MetricStats describes one metric over the batch's measured steps.
type MetricStats struct {
	Metric metrics.Name // spec key, e.g. "overshoot_pct"
	Label  string       // readable name, e.g. "overshoot"
	Unit   string       // "s", "%", the response unit or ""
	// Min and Max are the spec's limits; nil where a side is unbounded or
	// the metric is not limited.
	Min, Max *float64
	// Steps counts the steps that carried the metric; N those on which it
	// was measured.
	Steps, N int
	// Mean, SD (sample standard deviation, n − 1), Lowest and Highest of
	// the measured values.
	Mean, SD, Lowest, Highest metrics.Value
	// Predicted is the mean of the steps' own predictions over the PredN
	// measured steps that have one; Gap the mean of measured − predicted
	// over the same steps, so that Gap = Mean − Predicted when PredN = N.
	Predicted, Gap metrics.Value
	PredN          int
	// Capability is computed for limited metrics only.
	Capability Capability
	// Bins is the histogram of the measured values, covering [Lowest,
	// Highest]; empty when nothing was measured. RightClosed says that the
	// bins hold their upper edge, as they do when an edge lies on a
	// maximum (a value on the maximum passes).
	Bins        []Bin
	RightClosed bool
}

// Limit describes the limits for print: "≤ 10", "≥ 0.5", "0.5 … 10", or ""
// when the metric has none.
func (s MetricStats) Limit(format func(float64) string) string {
	switch {
	case s.Min != nil && s.Max != nil:
		return format(*s.Min) + " … " + format(*s.Max)
	case s.Max != nil:
		return "≤ " + format(*s.Max)
	case s.Min != nil:
		return "≥ " + format(*s.Min)
	}
	return ""
}

// Bin is one histogram class: values v with Lo ≤ v < Hi, or Lo < v ≤ Hi
// when the bins are right-closed (MetricStats.RightClosed); the end bins
// also hold the values on their outer edge.
type Bin struct {
	Lo, Hi float64
	Count  int
	// Outside is true when every value the bin can hold lies outside the
	// limits.
	Outside bool
}

// Capability is a process capability index of one limited metric.
type Capability struct {
	// Index names Value: "Cpk" for a two-sided limit, "Cpu" for a maximum
	// only, "Cpl" for a minimum only; "" when the metric has no limit.
	Index string
	// Value is the index; unknown with the reason when σ = 0, n < 2 or
	// the metric has no limit.
	Value metrics.Value
	// Cp is the potential capability of a two-sided limit; unknown with
	// the reason for a one-sided one.
	Cp metrics.Value
	// Indicative is true when the index rests on fewer than IndicativeN
	// values.
	Indicative bool
}

// capable computes the capability indices of values with mean mu and
// sample standard deviation sigma over n values against the limits lsl
// and usl (nil: no limit on that side), after ISO 22514-2 and the AIAG SPC
// reference manual (references §6): Cp = (USL − LSL)/(6σ);
// Cpk = min(USL − μ, μ − LSL)/(3σ); Cpu = (USL − μ)/(3σ) for a maximum
// only; Cpl = (μ − LSL)/(3σ) for a minimum only.
func capable(mu, sigma float64, n int, lsl, usl *float64) Capability {
	c := Capability{Indicative: n < IndicativeN}
	switch {
	case lsl != nil && usl != nil:
		c.Index = "Cpk"
	case usl != nil:
		c.Index = "Cpu"
	case lsl != nil:
		c.Index = "Cpl"
	default:
		why := "the metric has no limit"
		c.Value, c.Cp = metrics.Unknown(why), metrics.Unknown(why)
		return c
	}
	oneSided := "a one-sided limit has no Cp"
	var why string
	switch {
	case n < 2:
		why = fmt.Sprintf("%d measured step; a standard deviation needs at least 2", n)
	case !finite(mu) || !finite(sigma):
		why = "the mean or standard deviation is not finite"
	case sigma == 0:
		why = "σ = 0: every measured step gave the same value"
	}
	if why != "" {
		c.Value = metrics.Unknown(why)
		if c.Index == "Cpk" {
			c.Cp = metrics.Unknown(why)
		} else {
			c.Cp = metrics.Unknown(oneSided)
		}
		return c
	}
	switch c.Index {
	case "Cpk":
		c.Cp = metrics.Known((*usl - *lsl) / (6 * sigma))
		c.Value = metrics.Known(math.Min(*usl-mu, mu-*lsl) / (3 * sigma))
	case "Cpu":
		c.Cp = metrics.Unknown(oneSided)
		c.Value = metrics.Known((*usl - mu) / (3 * sigma))
	case "Cpl":
		c.Cp = metrics.Unknown(oneSided)
		c.Value = metrics.Known((mu - *lsl) / (3 * sigma))
	}
	return c
}

// accum gathers one metric over the steps in two passes: count, sum and
// range first, then the squared deviations and the bins.
type accum struct {
	steps, n       int
	sum, lo, hi    float64
	predN          int
	predSum        float64
	gapSum         float64
	ss             float64
	mean           float64
	bins           []Bin
	binW, binStart float64
	rightClosed    bool
	edge           int     // index of the bin whose Lo is the aligned limit, 0 when none
	edgeAt         float64 // that limit
}

// statistics computes MetricStats for every metric of metrics.Names and
// every limited name, in two passes over the batch.
func statistics(b *acceptance.Batch, limited []metrics.Name, unit string) map[metrics.Name]*MetricStats {
	names := make([]metrics.Name, 0, len(metrics.Names)+len(limited))
	seen := map[metrics.Name]bool{}
	for _, n := range metrics.Names {
		names = append(names, n)
		seen[n] = true
	}
	for _, n := range limited {
		if !seen[n] {
			names = append(names, n)
		}
	}
	acc := make(map[metrics.Name]*accum, len(names))
	for _, n := range names {
		acc[n] = &accum{lo: math.Inf(1), hi: math.Inf(-1)}
	}
	// Pass 1: counts, sums, ranges, predictions.
	for i := range b.Units {
		for k := range b.Units[i].Steps {
			s := &b.Units[i].Steps[k]
			for _, n := range names {
				v, ok := s.Metrics.Lookup(n)
				if !ok {
					continue
				}
				a := acc[n]
				a.steps++
				if !v.OK || !finite(v.V) {
					continue
				}
				a.n++
				a.sum += v.V
				a.lo, a.hi = math.Min(a.lo, v.V), math.Max(a.hi, v.V)
				if s.Predicted != nil {
					if p, ok := s.Predicted.Metrics.Lookup(n); ok && p.OK && finite(p.V) {
						a.predN++
						a.predSum += p.V
						a.gapSum += v.V - p.V
					}
				}
			}
		}
	}
	for _, n := range names {
		a := acc[n]
		if a.n == 0 {
			continue
		}
		a.mean = a.sum / float64(a.n)
		a.binning(b.Limits[n])
	}
	// Pass 2: squared deviations from the mean, and the bins.
	for i := range b.Units {
		for k := range b.Units[i].Steps {
			s := &b.Units[i].Steps[k]
			for _, n := range names {
				v, ok := s.Metrics.Lookup(n)
				if !ok || !v.OK || !finite(v.V) {
					continue
				}
				a := acc[n]
				d := v.V - a.mean
				a.ss += d * d
				a.bins[a.bin(v.V)].Count++
			}
		}
	}
	out := make(map[metrics.Name]*MetricStats, len(names))
	for _, n := range names {
		a := acc[n]
		if _, lim := b.Limits[n]; a.steps == 0 && !lim {
			continue
		}
		out[n] = a.result(n, b.Limits, unit)
	}
	return out
}

// binning lays out the histogram bins over the measured range.
func (a *accum) binning(lim spec.Limit) {
	k := int(math.Ceil(2 * math.Sqrt(float64(a.n))))
	k = min(max(k, MinBins), MaxBins)
	lo, hi := a.lo, a.hi
	if hi == lo {
		// One value: a single bin of a width that shows it.
		w := math.Abs(lo) * 0.02
		if w == 0 {
			w = 1
		}
		a.binStart, a.binW = lo-w/2, w
		a.bins = []Bin{{Lo: lo - w/2, Hi: lo + w/2}}
		a.markOutside(lim)
		return
	}
	w := (hi - lo) / float64(k)
	start := lo
	// An edge on the maximum when it lies inside the data, else on the
	// minimum.
	switch {
	case lim.Max != nil && *lim.Max > lo && *lim.Max < hi:
		a.rightClosed, a.edgeAt = true, *lim.Max
	case lim.Min != nil && *lim.Min > lo && *lim.Min < hi:
		a.edgeAt = *lim.Min
	default:
		a.edgeAt = math.NaN()
	}
	if !math.IsNaN(a.edgeAt) {
		a.edge = int(math.Ceil((a.edgeAt - lo) / w))
		start = a.edgeAt - float64(a.edge)*w
		k = int(math.Ceil((hi - start) / w))
	}
	a.binStart, a.binW = start, w
	a.bins = make([]Bin, k)
	for j := range a.bins {
		a.bins[j] = Bin{Lo: start + float64(j)*w, Hi: start + float64(j+1)*w}
	}
	a.bins[0].Lo = math.Min(a.bins[0].Lo, lo)
	a.bins[k-1].Hi = math.Max(a.bins[k-1].Hi, hi)
	if a.edge > 0 {
		a.bins[a.edge].Lo, a.bins[a.edge-1].Hi = a.edgeAt, a.edgeAt
	}
	a.markOutside(lim)
}

// markOutside flags the bins that can hold only values outside the limits.
func (a *accum) markOutside(lim spec.Limit) {
	for j := range a.bins {
		bn := &a.bins[j]
		above := lim.Max != nil && (bn.Lo > *lim.Max || (bn.Lo == *lim.Max && a.rightClosed))
		below := lim.Min != nil && (bn.Hi < *lim.Min || (bn.Hi == *lim.Min && !a.rightClosed))
		bn.Outside = above || below
	}
}

// bin returns the index of the bin that holds v.
func (a *accum) bin(v float64) int {
	var j int
	if a.rightClosed {
		j = int(math.Ceil((v-a.binStart)/a.binW)) - 1
	} else {
		j = int(math.Floor((v - a.binStart) / a.binW))
	}
	j = min(max(j, 0), len(a.bins)-1)
	if a.edge > 0 {
		// The aligned edge is exact: a value on the limit passes and lies
		// on the passing side.
		var inLower bool
		if a.rightClosed {
			inLower = v <= a.edgeAt
		} else {
			inLower = v < a.edgeAt
		}
		switch {
		case inLower && j >= a.edge:
			j = a.edge - 1
		case !inLower && j < a.edge:
			j = a.edge
		}
	}
	return j
}

func (a *accum) result(name metrics.Name, limits map[metrics.Name]spec.Limit, unit string) *MetricStats {
	lim, limited := limits[name]
	s := &MetricStats{
		Metric: name, Label: MetricLabel(name), Unit: MetricUnit(name, unit),
		Min: lim.Min, Max: lim.Max, Steps: a.steps, N: a.n, PredN: a.predN, Bins: a.bins, RightClosed: a.rightClosed,
	}
	if a.n == 0 {
		why := "no step was measured"
		if a.steps == 0 {
			why = "no step carried this metric"
		}
		s.Mean, s.SD, s.Lowest, s.Highest = metrics.Unknown(why), metrics.Unknown(why), metrics.Unknown(why), metrics.Unknown(why)
	} else {
		s.Mean, s.Lowest, s.Highest = metrics.Known(a.mean), metrics.Known(a.lo), metrics.Known(a.hi)
		if a.n < 2 {
			s.SD = metrics.Unknown("one measured step; a standard deviation needs at least 2")
		} else {
			s.SD = metrics.Known(math.Sqrt(a.ss / float64(a.n-1)))
		}
	}
	if a.predN > 0 {
		s.Predicted = metrics.Known(a.predSum / float64(a.predN))
		s.Gap = metrics.Known(a.gapSum / float64(a.predN))
	} else {
		why := "no measured step has a prediction"
		s.Predicted, s.Gap = metrics.Unknown(why), metrics.Unknown(why)
	}
	switch {
	case !limited || (lim.Min == nil && lim.Max == nil):
		s.Capability = capable(0, 0, a.n, nil, nil)
	case a.n == 0:
		s.Capability = capable(math.NaN(), math.NaN(), 0, lim.Min, lim.Max)
	default:
		s.Capability = capable(a.mean, s.SD.V, a.n, lim.Min, lim.Max)
	}
	return s
}
