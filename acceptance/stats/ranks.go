package stats

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/stat/distuv"
)

// exactRankMax is the largest sample size for which MannWhitney uses the
// exact null distribution (when there are no ties).
const exactRankMax = 20

// RankComparison is the Mann–Whitney U (Wilcoxon rank-sum) comparison of two
// samples, oriented towards the "after" sample.
type RankComparison struct {
	// NBefore and NAfter are the sample sizes.
	NBefore, NAfter int
	// RankSum is the sum of the after sample's ranks in the pooled sample,
	// tied values taking the average of their ranks (Wilcoxon's W).
	RankSum float64
	// U is the number of (before, after) pairs in which the after value is
	// larger, a tie counting one half: U = RankSum − n_a(n_a + 1)/2.
	U float64
	// Superiority is U/(n_b·n_a), the share of pairs in which the after
	// value is larger (ties counting one half); 0.5 means no shift.
	Superiority float64
	// Ties reports whether the pooled sample holds tied values.
	Ties bool
	// Exact reports whether P comes from the exact null distribution of U
	// (no ties and both samples of at most 20 values); otherwise P comes
	// from the normal approximation.
	Exact bool
	// Z is the normal-approximation statistic with the tie and continuity
	// corrections, computed in every case.
	Z float64
	// P is the two-sided p-value of the hypothesis that both samples come
	// from the same distribution.
	P float64
	// Reason is empty when the comparison was computed; otherwise it says why not.
	Reason string
}

// Known reports whether the comparison was computed.
func (r RankComparison) Known() bool { return r.Reason == "" }

// MannWhitney compares two samples by ranks (H. B. Mann and D. R. Whitney,
// Ann. Math. Statist. 18, 1947; F. Wilcoxon, Biometrics Bulletin 1, 1945).
// Ties take average ranks. The normal approximation uses mean n_b·n_a/2 and
// variance (n_b·n_a/12)·[(N + 1) − Σ(t³ − t)/(N(N − 1))] over the tie groups
// of sizes t, with a continuity correction of one half towards the mean
// (M. Hollander and D. A. Wolfe, Nonparametric Statistical Methods, §4.1).
// Without ties and with both samples of at most 20 values, P comes from the
// exact distribution of U by Mann and Whitney's recursion and is twice the
// smaller tail, at most 1.
func MannWhitney(before, after []float64) RankComparison {
	r := RankComparison{NBefore: len(before), NAfter: len(after)}
	switch {
	case len(before) == 0 || len(after) == 0:
		r.Reason = "a sample is empty"
		return r
	case finiteReason(before) != "" || finiteReason(after) != "":
		r.Reason = "a value is not a finite number"
		return r
	}
	var tieSum float64
	r.RankSum, tieSum = afterRankSum(before, after)
	nb, na := float64(len(before)), float64(len(after))
	n := nb + na
	r.Ties = tieSum > 0
	r.U = r.RankSum - na*(na+1)/2
	r.Superiority = r.U / (nb * na)
	variance := nb * na / 12 * ((n + 1) - tieSum/(n*(n-1)))
	if !(variance > 0) {
		return RankComparison{NBefore: len(before), NAfter: len(after),
			Reason: "every value is equal: ranks cannot separate the samples"}
	}
	dev := r.U - nb*na/2
	dev = math.Copysign(math.Max(0, math.Abs(dev)-0.5), dev)
	r.Z = dev / math.Sqrt(variance)
	r.P = math.Min(1, 2*distuv.UnitNormal.CDF(-math.Abs(r.Z)))
	if !r.Ties && len(before) <= exactRankMax && len(after) <= exactRankMax {
		r.Exact = true
		lower, upper := exactUTails(len(after), len(before), int(r.U))
		r.P = math.Min(1, 2*math.Min(lower, upper))
	}
	return r
}

// afterRankSum returns the after sample's rank sum in the pooled sample
// (average ranks for ties) and Σ(t³ − t) over the tie groups.
func afterRankSum(before, after []float64) (rankSum, tieSum float64) {
	type obs struct {
		v     float64
		after bool
	}
	all := make([]obs, 0, len(before)+len(after))
	for _, v := range before {
		all = append(all, obs{v, false})
	}
	for _, v := range after {
		all = append(all, obs{v, true})
	}
	sort.Slice(all, func(i, j int) bool { return all[i].v < all[j].v })
	for i := 0; i < len(all); {
		j := i
		for j < len(all) && all[j].v == all[i].v {
			j++
		}
		rank := float64(i+j+1) / 2 // mean of ranks i+1 … j
		for k := i; k < j; k++ {
			if all[k].after {
				rankSum += rank
			}
		}
		if t := float64(j - i); t > 1 {
			tieSum += t*t*t - t
		}
		i = j
	}
	return rankSum, tieSum
}

// exactUTails returns P(U ≤ u) and P(U ≥ u) under the null hypothesis for
// U counting the pairs in which one of m values exceeds one of n values.
func exactUTails(m, n, u int) (lower, upper float64) {
	counts := exactUCounts(m, n)
	var total float64
	for k, c := range counts {
		total += c
		if k <= u {
			lower += c
		}
		if k >= u {
			upper += c
		}
	}
	return lower / total, upper / total
}

// exactUCounts returns, for k = 0 … m·n, the number of orderings of m and n
// distinct values in which U = k, by the recursion of Mann and Whitney
// (1947): c(i, j, k) = c(i − 1, j, k − j) + c(i, j − 1, k), the largest value
// belonging to the first or the second sample. The counts are exact in
// float64 up to C(40, 20) ≈ 1.4·10¹¹.
func exactUCounts(m, n int) []float64 {
	width := m*n + 1
	prev := make([]float64, (n+1)*width) // row i − 1, indexed [j*width + k]
	cur := make([]float64, (n+1)*width)
	for i := 0; i <= m; i++ {
		for j := 0; j <= n; j++ {
			row := cur[j*width : (j+1)*width]
			clear(row)
			if i == 0 || j == 0 {
				row[0] = 1
				continue
			}
			left := cur[(j-1)*width : j*width]
			up := prev[j*width : (j+1)*width]
			for k := range row {
				row[k] = left[k]
				if k >= j {
					row[k] += up[k-j]
				}
			}
		}
		prev, cur = cur, prev
	}
	return prev[n*width : (n+1)*width]
}
