package chart

import (
	"fmt"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/recorder"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// pathBounds returns the smallest rectangle holding the points of a path.
func pathBounds(p vg.Path) vg.Rectangle {
	r := vg.Rectangle{Min: vg.Point{X: 1e9, Y: 1e9}, Max: vg.Point{X: -1e9, Y: -1e9}}
	for _, c := range p {
		r.Min.X, r.Min.Y = min(r.Min.X, c.Pos.X), min(r.Min.Y, c.Pos.Y)
		r.Max.X, r.Max.Y = max(r.Max.X, c.Pos.X), max(r.Max.Y, c.Pos.Y)
	}
	return r
}

func inside(r vg.Rectangle, p vg.Point) bool {
	const eps = 0.01
	return p.X >= r.Min.X-eps && p.X <= r.Max.X+eps && p.Y >= r.Min.Y-eps && p.Y <= r.Max.Y+eps
}

// checkLegendBox draws p and checks that its legend lies on an opaque white
// box drawn after the data: the box holds every entry's text, and whatever
// is drawn after it (the frame, the thumbnails, the texts) lies within it,
// so no curve, band or limit line crosses the legend.
func checkLegendBox(t *testing.T, p *plot.Plot, entries ...string) {
	t.Helper()
	rec := &recorder.Canvas{}
	p.Draw(draw.NewCanvas(rec, 500, 300))
	box := -1
	white := false
	for i, a := range rec.Actions {
		if sc, ok := a.(*recorder.SetColor); ok {
			r, g, b, _ := sc.Color.RGBA()
			white = r == 0xffff && g == 0xffff && b == 0xffff
		}
		// The last white fill is the legend's box (the first is the
		// plot's background).
		if _, ok := a.(*recorder.Fill); ok && white {
			box = i
		}
	}
	if box < 0 {
		t.Fatal("no white box drawn")
	}
	r := pathBounds(rec.Actions[box].(*recorder.Fill).Path)
	seen := map[string]bool{}
	for _, a := range rec.Actions[box+1:] {
		switch a := a.(type) {
		case *recorder.Stroke:
			if b := pathBounds(a.Path); !inside(r, b.Min) || !inside(r, b.Max) {
				t.Errorf("a line drawn over the legend leaves its box: %v outside %v", b, r)
			}
		case *recorder.Fill:
			if b := pathBounds(a.Path); !inside(r, b.Min) || !inside(r, b.Max) {
				t.Errorf("an area drawn over the legend leaves its box: %v outside %v", b, r)
			}
		case *recorder.FillString:
			if !inside(r, a.Point) {
				t.Errorf("legend text %q at %v outside its box %v", a.String, a.Point, r)
			}
			seen[a.String] = true
		}
	}
	for _, e := range entries {
		if !seen[e] {
			t.Errorf("legend entry %q not drawn on the box; drawn: %v", e, seen)
		}
	}
}

// TestLegendBox checks the legends of the overlay, a unit panel and a
// histogram (common practice, no source: a legend must not hide the data
// it explains).
func TestLegendBox(t *testing.T) {
	o := ForBatch(overlayBatch())
	p, err := o.Plot()
	if err != nil {
		t.Fatal(err)
	}
	checkLegendBox(t, p, "settling band ±5 %", "steps passed (1)", "steps failed (1)")

	h, err := Histogram(digest.MetricStats{Metric: "overshoot_pct", Label: "overshoot", Unit: "%", Max: ptr(10),
		Mean: metrics.Known(8), Predicted: metrics.Known(6.8), N: 5,
		Bins: []digest.Bin{{Lo: 2, Hi: 6, Count: 2}, {Lo: 6, Hi: 10, Count: 2}, {Lo: 10, Hi: 14, Count: 1, Outside: true}}})
	if err != nil {
		t.Fatal(err)
	}
	checkLegendBox(t, h, "limit", "predicted", "mean")
}

// TestThinKeepsPassing: with many steps and a low yield, the overlay keeps
// passed and failed steps in proportion to the batch, so a line with 68 %
// of its steps passing does not look all red.
func TestThinKeepsPassing(t *testing.T) {
	b := &acceptance.Batch{Limits: map[metrics.Name]spec.Limit{}}
	tr := secondOrder(0.7, 5, 0.05, 2, 0.5, 0, 1)
	for i := 0; i < 2000; i++ {
		v := acceptance.Pass
		if i%25 < 8 {
			v = acceptance.Fail
		}
		b.Units = append(b.Units, acceptance.UnitResult{Unit: fmt.Sprint(i), Verdict: v, Trace: tr,
			Steps: []acceptance.StepResult{{Index: 1, StartS: 0.5, From: 0, To: 1, Verdict: v}}})
	}
	o := ForBatch(b)
	n := map[Kind]int{}
	for _, c := range o.Curves {
		n[c.Kind]++
	}
	// 68 % of MaxCurves passed, the rest failed.
	if n[StepPass] != 408 || n[StepFail] != 192 || o.Thinned != 1400 {
		t.Errorf("passed %d, failed %d, thinned %d; want 408, 192, 1400", n[StepPass], n[StepFail], o.Thinned)
	}
	// Both spread over the batch: drawn from its first units to its last
	// 25 (each 25 units hold 8 that failed).
	last := map[Kind]int{}
	first := map[Kind]int{StepPass: 2000, StepFail: 2000}
	for _, c := range o.Curves {
		var u int
		fmt.Sscanf(c.Label, "%d,", &u)
		last[c.Kind], first[c.Kind] = max(last[c.Kind], u), min(first[c.Kind], u)
	}
	for _, k := range []Kind{StepPass, StepFail} {
		if first[k] >= 25 || last[k] < 1975 {
			t.Errorf("kind %d drawn from unit %d to %d, want from the first 25 to the last 25", k, first[k], last[k])
		}
	}
}
