package stats_test

import (
	"fmt"

	"github.com/stepgate/stepgate/acceptance/stats"
)

// Settling times (s) of units tested under the old gains and under the new
// ones (invented values): the change after − before with its 95 % interval.
func ExampleWelch() {
	before := stats.Describe([]float64{0.212, 0.198, 0.225, 0.207, 0.219, 0.203})
	after := stats.Describe([]float64{0.181, 0.176, 0.190, 0.172, 0.185, 0.179, 0.183})
	d := stats.Welch(before, after, 0.95)
	if !d.Known() {
		fmt.Println("not computable:", d.Reason)
		return
	}
	fmt.Printf("change %.4f s, 95 %% interval %.4f to %.4f s, ν = %.1f, p = %.2g\n",
		d.Difference, d.Low, d.High, d.DF, d.P)
	// Output:
	// change -0.0298 s, 95 % interval -0.0407 to -0.0190 s, ν = 7.8, p = 0.00024
}

// The pass rate of 46 units of 48 under new gains against 41 of 48 under the
// old ones (invented counts), each with a 95 % Wilson interval, and the
// change with Newcombe's interval.
func ExampleNewcombeDifference() {
	d := stats.NewcombeDifference(41, 48, 46, 48, 0.95)
	if !d.Known() {
		fmt.Println("not computable:", d.Reason)
		return
	}
	fmt.Printf("before %.1f %% (%.1f to %.1f)\n", 100*d.Before.P, 100*d.Before.Low, 100*d.Before.High)
	fmt.Printf("after  %.1f %% (%.1f to %.1f)\n", 100*d.After.P, 100*d.After.Low, 100*d.After.High)
	fmt.Printf("change %+.1f points (%.1f to %.1f)\n", 100*d.Difference, 100*d.Low, 100*d.High)
	// Output:
	// before 85.4 % (72.8 to 92.8)
	// after  95.8 % (86.0 to 98.8)
	// change +10.4 points (-1.8 to 23.4)
}

// Overshoot (%) of units under the old and the new gains (invented values,
// skewed by one unit with a loose coupling): the rank test does not let the
// outlier dominate.
func ExampleMannWhitney() {
	before := []float64{4.1, 3.8, 4.4, 3.9, 4.6, 4.0, 12.5}
	after := []float64{5.2, 4.9, 5.6, 5.0, 4.7, 5.3}
	r := stats.MannWhitney(before, after)
	if !r.Known() {
		fmt.Println("not computable:", r.Reason)
		return
	}
	fmt.Printf("U = %.0f of %d pairs, exact %v, two-sided p = %.4f\n",
		r.U, r.NBefore*r.NAfter, r.Exact, r.P)
	// Output:
	// U = 36 of 42 pairs, exact true, two-sided p = 0.0350
}

// Settling times (ms) of consecutive units (invented): limits from the first
// twelve units, applied to all; the later units drift upwards.
func ExampleIndividuals() {
	x := []float64{182, 185, 181, 186, 183, 184, 180, 185, 182, 184, 183, 181,
		186, 187, 186, 188, 187, 189, 188, 187, 190, 188}
	c := stats.Individuals(x, 12)
	if !c.Known() {
		fmt.Println("not computable:", c.Reason)
		return
	}
	fmt.Printf("centre %.2f, limits %.2f to %.2f; mR centre %.2f, upper limit %.2f\n",
		c.Centre, c.LCL, c.UCL, c.MRBar, c.MRUCL)
	for _, s := range c.Signals {
		fmt.Printf("point %d: %s\n", s.Index, s.Rule)
	}
	// Output:
	// centre 183.00, limits 175.02 to 190.98; mR centre 3.00, upper limit 9.80
	// point 15: four_of_five_beyond_1sigma
	// point 16: four_of_five_beyond_1sigma
	// point 17: four_of_five_beyond_1sigma
	// point 18: four_of_five_beyond_1sigma
	// point 19: four_of_five_beyond_1sigma
	// point 19: eight_beyond_1sigma
	// point 20: nine_one_side
	// point 20: four_of_five_beyond_1sigma
	// point 20: eight_beyond_1sigma
	// point 21: nine_one_side
	// point 21: four_of_five_beyond_1sigma
	// point 21: eight_beyond_1sigma
}

// Steady-state error (mm) of units in lots of four (invented values) against
// a tolerance of ±0.12 mm: performance from the overall σ, capability from
// the pooled within-lot σ, each stating its σ and subgroup size.
func ExampleCapabilitySubgroups() {
	lots := [][]float64{
		{0.021, 0.034, 0.012, 0.027},
		{0.041, 0.029, 0.052, 0.036},
		{0.018, 0.025, 0.031, 0.009},
	}
	var all []float64
	for _, l := range lots {
		all = append(all, l...)
	}
	lim := stats.TwoSided(-0.12, 0.12)
	for _, x := range []stats.Indices{stats.Performance(all, lim), stats.CapabilitySubgroups(lots, lim)} {
		if !x.Known() {
			fmt.Println("not computable:", x.Reason)
			continue
		}
		spread, _, _, worst := x.Names()
		fmt.Printf("%s %.2f, %s %.2f; σ %s = %.4f", spread, x.Spread.Value, worst, x.Min.Value, x.Source, x.Sigma)
		if x.Source != stats.SigmaOverall {
			fmt.Printf(" (%d subgroups of %d)", x.Subgroups, x.SubgroupMax)
		}
		fmt.Println()
	}
	// One-sided: only an upper limit on overshoot (%), individuals in time order.
	over := stats.CapabilityIndividuals([]float64{3.1, 3.4, 2.9, 3.6, 3.2, 3.0}, stats.UpperOnly(5))
	fmt.Printf("Cpu %.2f, Cpk %.2f; Cp: %s\n", over.Upper.Value, over.Min.Value, over.Spread.Reason)
	// Output:
	// Pp 3.29, Ppk 2.52; σ overall = 0.0122
	// Cp 4.10, Cpk 3.15; σ pooled_within_subgroups = 0.0098 (3 subgroups of 4)
	// Cpu 1.61, Cpk 1.61; Cp: needs both a lower and an upper specification limit
}
