package chart_test

import (
	"fmt"

	"github.com/stepgate/stepgate/acceptance/report/chart"
	"github.com/stepgate/stepgate/metrics"
)

func ExampleNormalise() {
	// A down-step 10 → 5 mm at t = 1 s.
	tr := &metrics.Trace{
		Time:     []float64{0, 1, 2, 3, 4},
		Command:  []float64{10, 5, 5, 5, 5},
		Response: []float64{10, 10, 6, 5.5, 5},
	}
	start, _ := chart.StartIndex(tr, 1)
	t, y, _ := chart.Normalise(tr, start, tr.Len(), 10, 5, 10)
	fmt.Println(t, y)
	// Output: [0 1 2 3] [0 0.8 0.9 1]
}

func ExampleDownsample() {
	t := []float64{0, 1, 2, 3, 4, 5, 6, 7, 8, 9}
	y := []float64{0, 0.5, 0.9, 1.2, 1.1, 1.0, 0.98, 1.0, 1.01, 1.0}
	dt, dy := chart.Downsample(t, y, 6)
	fmt.Println(dt, dy)
	// Output: [0 1 3 6 8 9] [0 0.5 1.2 0.98 1.01 1]
}

func ExampleEnvelope() {
	// Twelve samples with a spike and a dip, for a plot two buckets wide
	// (0 … 5.5 s and 5.5 … 11 s): each bucket keeps its first, lowest,
	// highest and last sample, each once and in time order.
	t := []float64{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11}
	y := []float64{0, 0.1, 0.2, 9, 0.3, 0.2, 0.4, 0.5, -1, 0.6, 0.6, 0.6}
	dt, dy := chart.Envelope(t, y, 2)
	fmt.Println(dt, dy)
	// Output: [0 3 5 6 8 9 11] [0 9 0.2 0.4 -1 0.6 0.6]
}
