package chart

import (
	"fmt"
	"math"
	"testing"
)

func minOf(v []float64) float64 { lo, _ := extremes(v); return lo }
func maxOf(v []float64) float64 { _, hi := extremes(v); return hi }

func extremes(v []float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, x := range v {
		lo, hi = math.Min(lo, x), math.Max(hi, x)
	}
	return lo, hi
}

// series returns n samples 1 ms apart of f(i).
func series(n int, f func(i int) float64) (t, y []float64) {
	for i := 0; i < n; i++ {
		t = append(t, float64(i)*0.001)
		y = append(y, f(i))
	}
	return t, y
}

// checkSubsequence fails unless (ot, oy) are samples of (t, y) in their
// order, each at most once, the first and the last among them.
func checkSubsequence(tb testing.TB, t, y, ot, oy []float64) {
	tb.Helper()
	if len(ot) != len(oy) {
		tb.Fatalf("%d times, %d values", len(ot), len(oy))
	}
	if len(t) == 0 {
		if len(ot) != 0 {
			tb.Fatalf("%d samples out of none", len(ot))
		}
		return
	}
	if ot[0] != t[0] || oy[0] != y[0] || ot[len(ot)-1] != t[len(t)-1] || oy[len(oy)-1] != y[len(y)-1] {
		tb.Errorf("first or last sample lost")
	}
	k := 0
	for j := range ot {
		for k < len(t) && (t[k] != ot[j] || y[k] != oy[j]) {
			k++
		}
		if k == len(t) {
			tb.Fatalf("sample %d (%v, %v) is not an input sample in order", j, ot[j], oy[j])
		}
		k++
	}
}

// envelopeCase is a case of TestEnvelope.
type envelopeCase struct {
	name    string
	t, y    []float64
	buckets int
	// want, when set, is the exact result as "times values".
	want string
	// same: the input is returned itself.
	same bool
}

// spiky is a slow sine with a one-sample spike at 537 and a one-sample
// dip at 800.
func spiky(i int) float64 {
	switch i {
	case 537:
		return 5 // a one-sample spike
	case 800:
		return -3 // a one-sample dip
	}
	return math.Sin(float64(i) / 50)
}

// envelopeCases are the cases of TestEnvelope.
func envelopeCases() []envelopeCase {
	tests := []envelopeCase{
		{name: "empty", buckets: 3, same: true},
		{name: "short enough", t: []float64{0, 1, 2}, y: []float64{0, 5, 1}, buckets: 1, same: true},
		{name: "exactly four per bucket", t: []float64{0, 1, 2, 3, 4, 5, 6, 7}, y: []float64{0, 1, 2, 3, 4, 5, 6, 7}, buckets: 2, same: true},
		{
			// Buckets [0, 4.5) and [4.5, 9]: of each the first, the
			// lowest, the highest and the last in time order, each once
			// (the first 2 of the second bucket is its first and its
			// lowest, the first 3 its highest).
			name:    "first, extremes and last of each bucket",
			t:       []float64{0, 1, 2, 3, 4, 5, 6, 7, 8, 9},
			y:       []float64{0, 9, -9, 1, -1, 2, 2, 3, 3, 3},
			buckets: 2,
			want:    "[0 1 2 4 5 7 9] [0 9 -9 -1 2 3 3]",
		},
		{
			// The highest comes before the lowest in a bucket: time order.
			name: "maximum before minimum",
			t:    []float64{0, 1, 2, 3, 4, 5, 6, 7, 8, 9},
			y:    []float64{1, 7, 3, -4, 2, 0, 0, 0, 0, 0},
			// One bucket: first, highest, lowest, last.
			buckets: 0,
			want:    "[0 1 3 9] [1 7 -4 0]",
		},
		{
			// A ramp: the first and the last of each bucket are its
			// extremes, so two samples a bucket.
			name: "ramp",
			t:    []float64{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11},
			y:    []float64{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11},
			// Buckets [0, 5.5), [5.5, 11].
			buckets: 2,
			want:    "[0 5 6 11] [0 5 6 11]",
		},
		{
			// Buckets are equal spans of time, not equal numbers of
			// samples: ten samples crowd the first of two buckets.
			name:    "uneven sampling",
			t:       []float64{0, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 5, 10},
			y:       []float64{0, 3, 1, 1, 1, 1, 1, 1, -2, 1, 4, 5},
			buckets: 2,
			want:    "[0 0.1 0.8 0.9 5 10] [0 3 -2 1 4 5]",
		},
		{
			name:    "one instant",
			t:       []float64{2, 2, 2, 2, 2, 2},
			y:       []float64{1, 4, 0, 2, 3, 1},
			buckets: 1,
			want:    "[2 2 2 2] [1 4 0 1]",
		},
		{name: "spike and dip", buckets: 10},
	}
	tests[len(tests)-1].t, tests[len(tests)-1].y = series(1000, spiky)
	return tests
}

// TestEnvelope checks that a series is reduced to the first, lowest,
// highest and last sample of each time bucket, in time order, and is
// returned itself when it is short enough.
func TestEnvelope(t *testing.T) {
	for _, tc := range envelopeCases() {
		t.Run(tc.name, func(t *testing.T) {
			in := fmt.Sprint(tc.t, tc.y)
			ot, oy := Envelope(tc.t, tc.y, tc.buckets)
			if fmt.Sprint(tc.t, tc.y) != in {
				t.Fatalf("the input was changed")
			}
			if tc.same {
				if len(ot) != len(tc.t) || (len(ot) > 0 && (&ot[0] != &tc.t[0] || &oy[0] != &tc.y[0])) {
					t.Errorf("got %v %v, want the input itself", ot, oy)
				}
				return
			}
			if tc.want != "" {
				if got := fmt.Sprint(ot, oy); got != tc.want {
					t.Errorf("got %s, want %s", got, tc.want)
				}
			}
			checkSubsequence(t, tc.t, tc.y, ot, oy)
			if n := max(tc.buckets, 1); len(ot) > 4*n {
				t.Errorf("%d samples for %d buckets", len(ot), n)
			}
			if minOf(oy) != minOf(tc.y) || maxOf(oy) != maxOf(tc.y) {
				t.Errorf("extremes %v … %v, want %v … %v", minOf(oy), maxOf(oy), minOf(tc.y), maxOf(tc.y))
			}
		})
	}
}

// TestEnvelopeKeepsPeak reduces the closed-form response of ζ = 0.25 and
// checks that the overshoot survives: the peak is
// 1 + exp(−πζ/√(1−ζ²)) = 1.4443 at tp = π/ωd (Ogata, 5th ed., §5-3).
func TestEnvelopeKeepsPeak(t *testing.T) {
	const zeta, wn = 0.25, 6.0
	tr := secondOrder(zeta, wn, 1e-4, 3, 0, 0, 1)
	mp := math.Exp(-math.Pi * zeta / math.Sqrt(1-zeta*zeta))
	tp := math.Pi / (wn * math.Sqrt(1-zeta*zeta))
	for _, buckets := range []int{1, 10, 174, 1000} {
		dt, dy := Envelope(tr.Time, tr.Response, buckets)
		checkSubsequence(t, tr.Time, tr.Response, dt, dy)
		peak, at := 0.0, 0.0
		for i, y := range dy {
			if y > peak {
				peak, at = y, dt[i]
			}
		}
		if math.Abs(peak-(1+mp)) > 1e-6 || math.Abs(at-tp) > 1e-4 {
			t.Errorf("%d buckets: peak %.6f at %.4f s, want %.6f at %.4f s", buckets, peak, at, 1+mp, tp)
		}
	}
}

func TestBuckets(t *testing.T) {
	for _, tc := range []struct {
		w    float64
		want int
	}{{87, 174}, {180, 360}, {0.1, 1}, {0, 1}, {-5, 1}} {
		if got := bucketCount(tc.w); got != tc.want {
			t.Errorf("bucketCount(%v) = %d, want %d", tc.w, got, tc.want)
		}
	}
}

// TestSimplify: every sample left out lies within the tolerance of the line
// through the kept ones; the ends, the lowest and the highest are kept.
func TestSimplify(t *testing.T) {
	damped := func(i int) float64 {
		x := float64(i) * 0.001
		return 1 - math.Exp(-3*x)*math.Cos(20*x)
	}
	noisy := func(i int) float64 { return 2*float64(i)*0.001 + 0.004*math.Sin(float64(i)*1.7) }
	tests := []struct {
		name string
		t, y []float64
		tol  float64
		most int    // at most this many samples kept
		want string // the exact result, when set
	}{
		{name: "straight line", tol: 1e-9, most: 2},
		{name: "damped oscillation", tol: 0.001, most: 200},
		// The kept line passes through samples, noise and all: noise of
		// 0.008 from peak to peak needs no sample but the ends at 0.01.
		{name: "noise inside the tolerance", tol: 0.01, most: 3},
		{name: "no tolerance", t: []float64{0, 1, 2}, y: []float64{0, 1, 2}, tol: 0, want: "[0 1 2] [0 1 2]"},
		{name: "two samples", t: []float64{0, 1}, y: []float64{3, 4}, tol: 1, want: "[0 1] [3 4]"},
		{
			// A jump at one instant keeps both of its sides.
			name: "jump at an instant",
			t:    []float64{0, 1, 2, 2, 3, 4}, y: []float64{0, 0, 0, 5, 5, 5}, tol: 0.1,
			want: "[0 2 2 4] [0 0 5 5]",
		},
		{
			// The lowest and the highest stay, though the line passes
			// within the tolerance of them.
			name: "extremes kept",
			t:    []float64{0, 1, 2, 3, 4}, y: []float64{0, 0.05, 0, -0.05, 0}, tol: 0.1,
			want: "[0 1 3 4] [0 0.05 -0.05 0]",
		},
	}
	tests[0].t, tests[0].y = series(500, func(i int) float64 { return 3 + 0.5*float64(i) })
	tests[1].t, tests[1].y = series(3000, damped)
	tests[2].t, tests[2].y = series(1000, noisy)
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			in := fmt.Sprint(tc.t, tc.y)
			ot, oy := simplify(tc.t, tc.y, tc.tol)
			if fmt.Sprint(tc.t, tc.y) != in {
				t.Fatalf("the input was changed")
			}
			if tc.want != "" {
				if got := fmt.Sprint(ot, oy); got != tc.want {
					t.Errorf("got %s, want %s", got, tc.want)
				}
			}
			checkSubsequence(t, tc.t, tc.y, ot, oy)
			if tc.most > 0 && len(ot) > tc.most {
				t.Errorf("%d of %d samples kept, want at most %d", len(ot), len(tc.t), tc.most)
			}
			if minOf(oy) != minOf(tc.y) || maxOf(oy) != maxOf(tc.y) {
				t.Errorf("extremes %v … %v, want %v … %v", minOf(oy), maxOf(oy), minOf(tc.y), maxOf(tc.y))
			}
			// Every sample lies within tol of the kept line: of the kept
			// segments over its instant, the nearest (a jump's vertical
			// one covers its whole span).
			for i := range tc.t {
				d := math.Inf(1)
				for k := 0; k+1 < len(ot); k++ {
					t0, t1, y0, y1 := ot[k], ot[k+1], oy[k], oy[k+1]
					switch {
					case tc.t[i] < t0 || tc.t[i] > t1:
						continue
					case t0 == t1:
						d = math.Min(d, math.Max(0, math.Max(math.Min(y0, y1)-tc.y[i], tc.y[i]-math.Max(y0, y1))))
					default:
						d = math.Min(d, math.Abs(y0+(y1-y0)*(tc.t[i]-t0)/(t1-t0)-tc.y[i]))
					}
				}
				if d > tc.tol*(1+1e-9)+1e-12 {
					t.Fatalf("sample %d (%v, %v) is %g from the kept line, more than %g", i, tc.t[i], tc.y[i], d, tc.tol)
				}
			}
		})
	}
}

func TestLevelChanges(t *testing.T) {
	tests := []struct {
		name string
		t, y []float64
		want string
	}{
		{name: "empty", want: "[] []"},
		{name: "one", t: []float64{1}, y: []float64{2}, want: "[1] [2]"},
		{name: "a step", t: []float64{0, 1, 2, 3, 4, 5}, y: []float64{0, 0, 0, 10, 10, 10}, want: "[0 3 5] [0 10 10]"},
		{name: "steps up and back", t: []float64{0, 1, 2, 3, 4, 5, 6}, y: []float64{1, 1, 2, 3, 3, 1, 1}, want: "[0 2 3 5 6] [1 2 3 1 1]"},
		{name: "no repeat", t: []float64{0, 1, 2}, y: []float64{1, 2, 1}, want: "[0 1 2] [1 2 1]"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			in := fmt.Sprint(tc.t, tc.y)
			if got := fmt.Sprint(levelChanges(tc.t, tc.y)); got != tc.want {
				t.Errorf("got %s, want %s", got, tc.want)
			}
			if fmt.Sprint(tc.t, tc.y) != in {
				t.Errorf("the input was changed")
			}
		})
	}
}
