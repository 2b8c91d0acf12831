package acceptance

import (
	"testing"

	"github.com/stepgate/stepgate/metrics"
)

// A copy of a set is independent of the original: setting a value or a
// reason on one leaves the other as it was.
func TestMetricSetCopyIndependent(t *testing.T) {
	var a MetricSet
	a.Set(metrics.Overshoot, metrics.Unknown("no peak"))
	a.Set(metrics.RiseTime, metrics.Known(0.2))
	b := a
	b.Set(metrics.Overshoot, metrics.Unknown("other reason"))
	b.Set(metrics.RiseTime, metrics.Unknown("not crossed"))
	b.Set(metrics.SettlingTime, metrics.Known(0.4))
	if got := a.Get(metrics.Overshoot); got.OK || got.Why != "no peak" {
		t.Errorf("original overshoot %+v after the copy changed", got)
	}
	if got := a.Get(metrics.RiseTime); !got.OK || got.V != 0.2 || got.Why != "" {
		t.Errorf("original rise time %+v after the copy changed", got)
	}
	if got := b.Get(metrics.RiseTime); got.OK || got.Why != "not crossed" {
		t.Errorf("copy's rise time %+v", got)
	}
	if got := b.Get(metrics.Overshoot); got.Why != "other reason" {
		t.Errorf("copy's overshoot %+v", got)
	}
}
