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
