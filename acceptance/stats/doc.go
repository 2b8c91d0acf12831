// Package stats owns the statistics that sign-off, trend and comparison
// reports draw on: summaries of a sample, the comparison of two samples'
// means (Welch and pooled t) and distributions (Mann–Whitney U), score
// intervals for a proportion and for the difference of two proportions
// (Wilson, Newcombe), the individuals and moving-range control chart with the
// tests for special causes, and process performance and capability indices.
//
// Every function is pure and works on plain []float64 samples; the package
// imports nothing else of stepgate. A result that cannot be computed (too few
// values, no spread, a non-finite value, an invalid level) carries a non-empty
// Reason and its numbers are left at zero and must not be shown: callers
// report such a result as unknown with the reason, never as 0.
//
// Sources are cited on each function:
//
//   - B. L. Welch, "The generalization of Student's problem when several
//     different population variances are involved", Biometrika 34 (1947);
//     F. E. Satterthwaite, Biometrics Bulletin 2 (1946); NIST/SEMATECH
//     e-Handbook of Statistical Methods §1.3.5.3.
//   - H. B. Mann and D. R. Whitney, "On a test of whether one of two random
//     variables is stochastically larger than the other", Ann. Math. Statist.
//     18 (1947); M. Hollander and D. A. Wolfe, Nonparametric Statistical
//     Methods.
//   - E. B. Wilson, "Probable inference, the law of succession, and
//     statistical inference", JASA 22 (1927); R. G. Newcombe, "Interval
//     estimation for the difference between independent proportions:
//     comparison of eleven methods", Statistics in Medicine 17 (1998) 873–890.
//   - ISO 7870-2:2013 (Shewhart control charts); D. C. Montgomery,
//     Introduction to Statistical Quality Control.
//   - ISO 22514-2 (process performance and capability); the AIAG Statistical
//     Process Control reference manual.
package stats
