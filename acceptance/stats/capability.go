package stats

import (
	"math"
	"strconv"
)

// SpecLimits are a characteristic's specification limits; either may be absent.
type SpecLimits struct {
	// LSL and USL are the lower and upper specification limits.
	LSL, USL float64
	// HasLSL and HasUSL report which limits are set.
	HasLSL, HasUSL bool
}

// TwoSided returns specification limits with both a lower and an upper limit.
func TwoSided(lsl, usl float64) SpecLimits {
	return SpecLimits{LSL: lsl, USL: usl, HasLSL: true, HasUSL: true}
}

// UpperOnly returns a specification with only an upper limit.
func UpperOnly(usl float64) SpecLimits { return SpecLimits{USL: usl, HasUSL: true} }

// LowerOnly returns a specification with only a lower limit.
func LowerOnly(lsl float64) SpecLimits { return SpecLimits{LSL: lsl, HasLSL: true} }

// SigmaSource says which estimate of the standard deviation indices use.
type SigmaSource string

// The estimates of σ behind performance and capability indices.
const (
	// SigmaOverall is the sample standard deviation of all values
	// (performance indices Pp, Ppk).
	SigmaOverall SigmaSource = "overall"
	// SigmaPooledSubgroups is the pooled within-subgroup standard deviation
	// divided by c₄ (capability indices from rational subgroups).
	SigmaPooledSubgroups SigmaSource = "pooled_within_subgroups"
	// SigmaMovingRange is MR̄/d₂ over consecutive individual values in time
	// order (capability indices from individuals).
	SigmaMovingRange SigmaSource = "moving_range"
)

// Index is one capability or performance index, or the reason it is unknown.
type Index struct {
	// Value is the index; meaningful only when Reason is empty.
	Value float64
	// Reason is empty when Value was computed; otherwise it says why not.
	Reason string
}

// Known reports whether the index was computed.
func (i Index) Known() bool { return i.Reason == "" }

// Indices are the process performance indices (from the overall σ) or the
// process capability indices (from a within-subgroup σ) of one
// characteristic, as ISO 22514-2 and the AIAG SPC reference manual
// distinguish them.
type Indices struct {
	// Source is the σ estimate used; it decides the indices' names: SigmaOverall
	// gives Pp, Ppl, Ppu, Ppk, the others Cp, Cpl, Cpu, Cpk (see Names).
	Source SigmaSource
	// N is the number of values.
	N int
	// Subgroups is the number of rational subgroups (SigmaPooledSubgroups),
	// the number of moving ranges (SigmaMovingRange), or 0 (SigmaOverall).
	Subgroups int
	// SubgroupMin and SubgroupMax are the smallest and largest subgroup
	// sizes: both 1 for individuals, both 0 for the overall σ.
	SubgroupMin, SubgroupMax int
	// Mean is the mean of all values.
	Mean float64
	// Sigma is the σ estimate the indices use.
	Sigma float64
	// Spread is (USL − LSL)/6σ: Cp or Pp; unknown unless both limits are set.
	Spread Index
	// Lower is (μ − LSL)/3σ: Cpl or Ppl; unknown without a lower limit.
	Lower Index
	// Upper is (USL − μ)/3σ: Cpu or Ppu; unknown without an upper limit.
	Upper Index
	// Min is the smaller of Lower and Upper where set: Cpk or Ppk.
	Min Index
	// Reason is empty when the indices were computed; otherwise it says why
	// none could be.
	Reason string
}

// Known reports whether the indices were computed.
func (x Indices) Known() bool { return x.Reason == "" }

// Names returns the names of Spread, Lower, Upper and Min for the indices' σ.
func (x Indices) Names() (spread, lower, upper, min string) {
	if x.Source == SigmaOverall {
		return "Pp", "Ppl", "Ppu", "Ppk"
	}
	return "Cp", "Cpl", "Cpu", "Cpk"
}

// Performance returns the performance indices Pp, Ppl, Ppu and Ppk of x from
// its overall sample standard deviation s (divisor n − 1) (ISO 22514-2; AIAG
// SPC reference manual): they describe the values as they came, whether the
// process was stable or not.
func Performance(x []float64, lim SpecLimits) Indices {
	s := Describe(x)
	out := Indices{Source: SigmaOverall, N: len(x)}
	if !s.Known() {
		return failed(out, s.Reason)
	}
	return fill(out, s.Mean, s.SD, lim)
}

// CapabilityIndividuals returns the capability indices Cp, Cpl, Cpu and Cpk
// of individual values in time order, from σ̂ = MR̄/d₂, the mean moving range
// of consecutive values over d₂ = 1.128 (ISO 22514-2; AIAG SPC reference
// manual; D. C. Montgomery, Introduction to Statistical Quality Control,
// §8.3). The order of x matters.
func CapabilityIndividuals(x []float64, lim SpecLimits) Indices {
	out := Indices{Source: SigmaMovingRange, N: len(x), SubgroupMin: 1, SubgroupMax: 1}
	if r := finiteReason(x); r != "" {
		return failed(out, r)
	}
	if len(x) < 2 {
		return failed(out, "fewer than two values: no moving range")
	}
	var sum, mr float64
	for i, v := range x {
		sum += v
		if i > 0 {
			mr += math.Abs(v - x[i-1])
		}
	}
	out.Subgroups = len(x) - 1
	return fill(out, sum/float64(len(x)), mr/float64(len(x)-1)/D2, lim)
}

// CapabilitySubgroups returns the capability indices Cp, Cpl, Cpu and Cpk
// from rational subgroups of at least two values each, with σ̂ the pooled
// within-subgroup standard deviation s_p = √(Σ(nᵢ − 1)sᵢ² / ν),
// ν = Σ(nᵢ − 1), divided by c₄(ν + 1) to remove its bias (ISO 22514-2; AIAG
// SPC reference manual; for normal data ν·s_p²/σ² is χ² with ν degrees of
// freedom, so E[s_p] = c₄(ν + 1)·σ). The mean is the mean of all values.
func CapabilitySubgroups(groups [][]float64, lim SpecLimits) Indices {
	out := Indices{Source: SigmaPooledSubgroups, Subgroups: len(groups)}
	if len(groups) == 0 {
		return failed(out, "no subgroups")
	}
	var sum, ss float64
	for i, g := range groups {
		if r := finiteReason(g); r != "" {
			return failed(out, r)
		}
		if len(g) < 2 {
			return failed(out, subgroupReason(i))
		}
		s := Describe(g)
		sum += s.Mean * float64(len(g))
		ss += s.SD * s.SD * float64(len(g)-1)
		out.N += len(g)
		out.SubgroupMin, out.SubgroupMax = sizeRange(out.SubgroupMin, out.SubgroupMax, len(g), i)
	}
	nu := float64(out.N - len(groups))
	return fill(out, sum/float64(out.N), math.Sqrt(ss/nu)/c4(int(nu)+1), lim)
}

func subgroupReason(i int) string {
	return "subgroup " + strconv.Itoa(i+1) + " has fewer than two values"
}

func sizeRange(lo, hi, n, i int) (int, int) {
	if i == 0 {
		return n, n
	}
	return min(lo, n), max(hi, n)
}

// IndicesFrom returns the indices for a known mean μ and standard deviation
// σ (from stored or published statistics) against lim, labelled with the
// source of σ: Spread = (USL − LSL)/6σ, Lower = (μ − LSL)/3σ, Upper =
// (USL − μ)/3σ and Min the smaller of the sides set (ISO 22514-2; AIAG SPC
// reference manual). A zero or non-finite σ, or limits that are absent,
// non-finite or with LSL ≥ USL, make the result not computable.
func IndicesFrom(mean, sigma float64, src SigmaSource, lim SpecLimits) Indices {
	return fill(Indices{Source: src}, mean, sigma, lim)
}

// fill completes base, whose source and counts are set, with the indices.
func fill(base Indices, mean, sigma float64, lim SpecLimits) Indices {
	if r := limitsReason(lim); r != "" {
		return failed(base, r)
	}
	if !(sigma > 0) || math.IsInf(sigma, 0) || math.IsNaN(mean) || math.IsInf(mean, 0) {
		return failed(base, "the values do not vary (σ = 0): the indices are not defined")
	}
	out := base
	out.Mean, out.Sigma = mean, sigma
	out.Spread = Index{Reason: "needs both a lower and an upper specification limit"}
	out.Lower = Index{Reason: "no lower specification limit"}
	out.Upper = Index{Reason: "no upper specification limit"}
	if lim.HasLSL {
		out.Lower = Index{Value: (mean - lim.LSL) / (3 * sigma)}
		out.Min = out.Lower
	}
	if lim.HasUSL {
		out.Upper = Index{Value: (lim.USL - mean) / (3 * sigma)}
		out.Min = out.Upper
	}
	if lim.HasLSL && lim.HasUSL {
		out.Spread = Index{Value: (lim.USL - lim.LSL) / (6 * sigma)}
		out.Min = Index{Value: math.Min(out.Lower.Value, out.Upper.Value)}
	}
	return out
}

// failed marks the indices and each index as not computable for reason.
func failed(x Indices, reason string) Indices {
	x.Reason = reason
	x.Spread, x.Lower, x.Upper, x.Min = Index{Reason: reason}, Index{Reason: reason},
		Index{Reason: reason}, Index{Reason: reason}
	return x
}

func limitsReason(lim SpecLimits) string {
	bad := func(v float64) bool { return math.IsNaN(v) || math.IsInf(v, 0) }
	switch {
	case !lim.HasLSL && !lim.HasUSL:
		return "no specification limit"
	case (lim.HasLSL && bad(lim.LSL)) || (lim.HasUSL && bad(lim.USL)):
		return "a specification limit is not a finite number"
	case lim.HasLSL && lim.HasUSL && lim.LSL >= lim.USL:
		return "the lower specification limit is not below the upper one"
	}
	return ""
}

// c4 is the bias factor of the sample standard deviation of n ≥ 2 normal
// values, E[s] = c₄σ: c₄(n) = √(2/(n − 1))·Γ(n/2)/Γ((n − 1)/2) (Montgomery,
// Introduction to Statistical Quality Control, Appendix VI).
func c4(n int) float64 {
	a, _ := math.Lgamma(float64(n) / 2)
	b, _ := math.Lgamma(float64(n-1) / 2)
	return math.Sqrt(2/float64(n-1)) * math.Exp(a-b)
}
