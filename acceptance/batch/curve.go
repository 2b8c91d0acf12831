package batch

import (
	"hash/fnv"
	"math"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// Overlay chart sizing, shared with the chart package through the batch.
const (
	// CurvePoints is the number of grid points of a StepCurve.
	CurvePoints = 160
	// OverlayWindowOverSettling is the overlay's time window as a multiple of
	// the settling-time limit.
	OverlayWindowOverSettling = 1.5
	// curvesWanted is about how many passed-step curves a batch keeps for
	// the overlay: a few times the chart's own limit, so that the chart can
	// still thin them evenly.
	curvesWanted = 2000
	// curvesPerFile is the steps a log is assumed to hold when sizing the
	// sample of passed steps.
	curvesPerFile = 3
)

// curveSampler decides which steps keep a normalised curve for the overlay:
// every step that did not pass, and passed steps sampled by a hash of file
// and step index so that about curvesWanted are kept whatever the batch
// size. The choice depends only on the inputs, never on the order in which
// the workers finish.
type curveSampler struct {
	window    float64 // seconds after the step instant
	threshold uint64  // keep a passed step when its hash is below this
}

func newCurveSampler(spec *spec.Spec, files int) *curveSampler {
	cs := &curveSampler{window: OverlayWindow(spec), threshold: math.MaxUint64}
	if n := files * curvesPerFile; n > curvesWanted {
		cs.threshold = uint64(float64(math.MaxUint64) * (float64(curvesWanted) / float64(n)))
	}
	return cs
}

func (cs *curveSampler) keep(path string, index int, v acceptance.Verdict) bool {
	if v != acceptance.Pass || cs.threshold == math.MaxUint64 {
		return true
	}
	h := fnv.New64a()
	h.Write([]byte(path))
	h.Write([]byte{byte(index), byte(index >> 8)})
	return h.Sum64() < cs.threshold
}

// OverlayWindow is the time window of the overlay chart: 1.5 times the
// settling-time limit, else 2 s.
func OverlayWindow(spec *spec.Spec) float64 {
	if l, ok := spec.Limits[metrics.SettlingTime]; ok && l.Max != nil && *l.Max > 0 {
		return OverlayWindowOverSettling * *l.Max
	}
	return 2
}

// normalisedCurve samples the step's normalised response on the uniform
// grid, interpolating linearly between the recorded samples.
func normalisedCurve(tr metrics.Trace, st metrics.Step, window float64) *acceptance.StepCurve {
	size := st.To - st.From
	if size == 0 || st.End-st.Start < 2 {
		return nil
	}
	c := &acceptance.StepCurve{Window: window, Y: make([]float32, CurvePoints)}
	t0 := tr.Time[st.Start]
	j := st.Start
	for k := range c.Y {
		tk := t0 + window*float64(k)/float64(CurvePoints-1)
		for j+1 < st.End && tr.Time[j+1] < tk {
			j++
		}
		if j+1 >= st.End {
			if tk <= tr.Time[st.End-1] {
				c.Y[k] = float32((tr.Response[st.End-1] - st.From) / size)
			} else {
				c.Y[k] = float32(math.NaN())
			}
			continue
		}
		a, b := tr.Time[j], tr.Time[j+1]
		f := 0.0
		if b > a {
			f = (tk - a) / (b - a)
		}
		f = math.Max(0, math.Min(1, f))
		y := tr.Response[j] + f*(tr.Response[j+1]-tr.Response[j])
		c.Y[k] = float32((y - st.From) / size)
	}
	return c
}
