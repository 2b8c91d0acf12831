package stats

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// MeanDifference is the comparison of two samples' means, oriented as
// after − before: a positive Difference means the "after" sample's mean is
// larger.
type MeanDifference struct {
	// Method is "welch" (unequal variances) or "pooled" (equal variances).
	Method string
	// Difference is x̄_after − x̄_before.
	Difference float64
	// StdErr is the standard error of Difference.
	StdErr float64
	// T is Difference / StdErr.
	T float64
	// DF is the degrees of freedom of T: Welch–Satterthwaite for "welch",
	// n_before + n_after − 2 for "pooled".
	DF float64
	// Level is the confidence level of [Low, High], e.g. 0.95.
	Level float64
	// Low and High bound the two-sided confidence interval of Difference.
	Low, High float64
	// P is the two-sided p-value of the hypothesis of equal means.
	P float64
	// Reason is empty when the comparison was computed; otherwise it says why not.
	Reason string
}

// Known reports whether the comparison was computed.
func (d MeanDifference) Known() bool { return d.Reason == "" }

// Welch compares the means of two samples without assuming equal variances:
// t = (x̄_after − x̄_before)/√(s_b²/n_b + s_a²/n_a) with the Welch–Satterthwaite
// degrees of freedom ν = (s_b²/n_b + s_a²/n_a)² / [(s_b²/n_b)²/(n_b − 1) +
// (s_a²/n_a)²/(n_a − 1)], the interval Difference ± t_{1−α/2,ν}·StdErr and
// the two-sided p-value from Student's t with ν degrees of freedom
// (B. L. Welch, Biometrika 34, 1947; F. E. Satterthwaite, Biometrics
// Bulletin 2, 1946; NIST/SEMATECH e-Handbook §1.3.5.3). Level is the
// confidence level, e.g. 0.95.
func Welch(before, after Summary, level float64) MeanDifference {
	d := MeanDifference{Method: "welch", Level: level}
	if d.Reason = twoSampleReason(before, after, level); d.Reason != "" {
		return d
	}
	vb := before.SD * before.SD / float64(before.N)
	va := after.SD * after.SD / float64(after.N)
	se := math.Sqrt(vb + va)
	df := (vb + va) * (vb + va) /
		(vb*vb/float64(before.N-1) + va*va/float64(after.N-1))
	return finishT(d, after.Mean-before.Mean, se, df)
}

// Pooled compares the means of two samples assuming equal variances:
// s_p² = [(n_b − 1)s_b² + (n_a − 1)s_a²]/(n_b + n_a − 2), StdErr =
// s_p·√(1/n_b + 1/n_a), ν = n_b + n_a − 2 (Student's two-sample t;
// NIST/SEMATECH e-Handbook §1.3.5.3).
func Pooled(before, after Summary, level float64) MeanDifference {
	d := MeanDifference{Method: "pooled", Level: level}
	if d.Reason = twoSampleReason(before, after, level); d.Reason != "" {
		return d
	}
	nb, na := float64(before.N), float64(after.N)
	df := nb + na - 2
	sp2 := ((nb-1)*before.SD*before.SD + (na-1)*after.SD*after.SD) / df
	se := math.Sqrt(sp2 * (1/nb + 1/na))
	return finishT(d, after.Mean-before.Mean, se, df)
}

// finishT fills the statistic, interval and p-value from the difference,
// its standard error and degrees of freedom.
func finishT(d MeanDifference, diff, se, df float64) MeanDifference {
	if se == 0 || math.IsNaN(se) {
		d.Reason = "neither sample varies: the t statistic is undefined"
		return d
	}
	t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}
	half := t.Quantile(1-(1-d.Level)/2) * se
	d.Difference, d.StdErr, d.DF = diff, se, df
	d.T = diff / se
	d.Low, d.High = diff-half, diff+half
	d.P = math.Min(1, 2*t.Survival(math.Abs(d.T)))
	return d
}

// twoSampleReason says why two summaries cannot be compared at level.
func twoSampleReason(before, after Summary, level float64) string {
	switch {
	case !(level > 0 && level < 1):
		return "the confidence level must lie strictly between 0 and 1"
	case before.N < 2 || !before.Known():
		return "the before sample: " + reasonOr(before.Reason, "fewer than two values")
	case after.N < 2 || !after.Known():
		return "the after sample: " + reasonOr(after.Reason, "fewer than two values")
	}
	return ""
}

func reasonOr(r, fallback string) string {
	if r != "" {
		return r
	}
	return fallback
}
