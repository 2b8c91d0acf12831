package batch_test

import (
	"context"
	"os"
	"reflect"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/batch"
	"github.com/stepgate/stepgate/acceptance/logs"
)

// With KeepPageTraces, the units that get a detail page keep the record
// that was judged: their pages draw it even when the log has changed on
// disk since, and it is the record the log held. A unit without a page
// keeps none, and a changed log then gives no record.
func TestRunKeepsThePageUnitsRecords(t *testing.T) {
	spec, files, _ := benchBatch(t, 40)
	const pages = 3
	b, recs, err := batch.Run(context.Background(), spec, files, batch.Options{
		Traces: batch.KeepPageTraces, MaxUnitPages: pages, ReportDate: "2026-12-01"})
	if err != nil {
		t.Fatal(err)
	}
	withPage := b.PageUnits(false)
	if len(withPage) != pages {
		t.Fatalf("%d units with a page, want %d", len(withPage), pages)
	}
	// A failing unit beyond the cap, with a record to read.
	beyond := -1
	for i := withPage[len(withPage)-1] + 1; i < len(b.Units); i++ {
		if b.Units[i].Verdict != acceptance.Pass && len(b.Units[i].Steps) > 0 {
			beyond = i
			break
		}
	}
	if beyond < 0 {
		t.Fatal("the demo has no failing unit beyond the page cap")
	}
	for _, i := range append(withPage, beyond) {
		u := &b.Units[i]
		lg, err := logs.ReadFile(u.File, spec.Format())
		if err != nil {
			if len(u.Steps) == 0 {
				continue // an unreadable log has no record either way
			}
			t.Fatal(err)
		}
		// Change the log on disk after the run.
		if err := os.WriteFile(u.File, []byte("t,target,position\n0,0,0\n"), 0o644); err != nil {
			t.Fatal(err)
		}
		got, err := recs.UnitTrace(u)
		if err != nil {
			t.Fatal(err)
		}
		if i == beyond {
			if got != nil {
				t.Errorf("unit %s without a page: a record although its log changed", u.Unit)
			}
			continue
		}
		if got == nil {
			t.Fatalf("unit %s with a page: no record kept", u.Unit)
		}
		if !reflect.DeepEqual(got.Time, lg.Trace.Time) || !reflect.DeepEqual(got.Response, lg.Trace.Response) ||
			!reflect.DeepEqual(got.Command, lg.Trace.Command) || !reflect.DeepEqual(got.Effort, lg.Trace.Effort) {
			t.Errorf("unit %s: the kept record differs from its log", u.Unit)
		}
	}
}
