package record

import (
	"context"
	"errors"
	"fmt"
	"reflect"
	"testing"
	"time"
)

// trendRecord records attempts over two specs, three lots and two stations,
// in an order unlike their start times.
func trendRecord(t *testing.T, s *Store) {
	t.Helper()
	ctx := context.Background()
	mk := func(serial string, n int, hours int, lot, station string) Unit {
		u := testUnit(serial, n, t0.Add(time.Duration(hours)*time.Hour))
		u.Lot, u.Station = lot, station
		return u
	}
	runA := []Unit{mk("SN-3", 1, 30, "L2", "EOL-1"), mk("SN-1", 1, 2, "L1", "EOL-1"),
		mk("SN-2", 1, 5, "L1", "EOL-2"), mk("SN-4", 1, 50, "L3", "EOL-2")}
	if _, err := s.RecordRun(ctx, testRun(t0), testSpec("A"), runA); err != nil {
		t.Fatal(err)
	}
	other := testSpec("A")
	other.ID, other.Text = "VD40-EOL", "spec_id: VD40-EOL\n"
	other.SHA256 = hexSHA256(other.Text)
	if _, err := s.RecordRun(ctx, testRun(t0), other, []Unit{mk("SX-1", 1, 3, "L1", "EOL-1")}); err != nil {
		t.Fatal(err)
	}
	if _, err := s.RecordRun(ctx, testRun(t0), testSpec("B"), []Unit{mk("SN-2", 2, 26, "L2", "EOL-1"), invalidUnit()}); err != nil {
		t.Fatal(err)
	}
}

func TestUnitsFilters(t *testing.T) {
	eachBackend(t, func(t *testing.T, b backend) {
		s := open(t, b.fresh(t))
		trendRecord(t, s)
		day := func(d int) time.Time { return t0.Add(time.Duration(d) * 24 * time.Hour) }
		cases := []struct {
			name string
			f    Filter
			want []string
		}{
			{"everything, by start time, no start time last", Filter{},
				[]string{"SN-1", "SX-1", "SN-2", "SN-2", "SN-3", "SN-4", "SN-BAD"}},
			{"one spec, all revisions", Filter{SpecID: "VD25-EOL"},
				[]string{"SN-1", "SN-2", "SN-2", "SN-3", "SN-4", "SN-BAD"}},
			{"one revision", Filter{SpecID: "VD25-EOL", Revision: "B"}, []string{"SN-2", "SN-BAD"}},
			{"since", Filter{Since: day(1)}, []string{"SN-2", "SN-3", "SN-4"}},
			{"since and until", Filter{Since: day(1), Until: t0.Add(50 * time.Hour)}, []string{"SN-2", "SN-3"}},
			{"lot", Filter{Lot: "L1"}, []string{"SN-1", "SX-1", "SN-2"}},
			{"station and spec", Filter{Station: "EOL-1", SpecID: "VD25-EOL"}, []string{"SN-1", "SN-2", "SN-3"}},
			{"nothing matches", Filter{Lot: "L9"}, nil},
		}
		for _, c := range cases {
			got := collect(t, s, c.f)
			if !reflect.DeepEqual(serials(got), c.want) {
				t.Errorf("%s: %v, want %v", c.name, serials(got), c.want)
			}
			for _, a := range got {
				if a.Unit.Steps != nil {
					t.Errorf("%s: steps loaded without Filter.Steps", c.name)
				}
			}
		}
	})
}

// The trend form: steps with only the named metrics, their predictions and
// gaps, and every check.
func TestUnitsWithMetrics(t *testing.T) {
	eachBackend(t, func(t *testing.T, b backend) {
		s := open(t, b.fresh(t))
		trendRecord(t, s)
		got := collect(t, s, Filter{Lot: "L1", Steps: true, Metrics: []string{"settling_time_s", "overshoot_pct"}, Checks: true})
		if len(got) != 3 {
			t.Fatalf("%d units, want 3", len(got))
		}
		for _, a := range got {
			full := testUnit(a.Unit.Serial, 1, a.Unit.StartedAt)
			if len(a.Unit.Steps) != 3 {
				t.Fatalf("%s: %d steps, want 3", a.Unit.Serial, len(a.Unit.Steps))
			}
			for i, st := range a.Unit.Steps {
				want := full.Steps[i]
				pick := func(l []Metric) []Metric { return []Metric{l[3], l[7]} } // overshoot_pct, settling_time_s
				if st.Index != want.Index || st.From != want.From || st.To != want.To ||
					!reflect.DeepEqual(st.Metrics, pick(want.Metrics)) ||
					!reflect.DeepEqual(st.Predicted.Metrics, pick(want.Predicted.Metrics)) ||
					!reflect.DeepEqual(st.Gaps, pick(want.Gaps)) || !reflect.DeepEqual(st.Checks, want.Checks) {
					t.Errorf("%s step %d: %+v", a.Unit.Serial, st.Index, st)
				}
			}
		}
		// Measured values only: the prediction keeps its kind, not its values.
		for _, a := range collect(t, s, Filter{Lot: "L1", Steps: true, Metrics: []string{"overshoot_pct"}, MeasuredOnly: true}) {
			st := a.Unit.Steps[0]
			if len(st.Metrics) != 1 || st.Metrics[0].Name != "overshoot_pct" || st.Gaps != nil ||
				st.Predicted == nil || st.Predicted.Metrics != nil {
				t.Errorf("%s measured only: %+v", a.Unit.Serial, st)
			}
		}
		// An error from the callback stops the stream and comes back.
		stop := errors.New("enough")
		n := 0
		err := s.Units(context.Background(), Filter{}, func(Attempt) error { n++; return stop })
		if !errors.Is(err, stop) || n != 1 {
			t.Errorf("stopping the stream: %v after %d units", err, n)
		}
	})
}

// Units streams more attempts than fit one page of steps, in order, each
// with its own steps.
func TestUnitsAcrossPages(t *testing.T) {
	eachBackend(t, func(t *testing.T, b backend) {
		s := open(t, b.fresh(t))
		const n = 1100
		units := make([]Unit, n)
		for i := range units {
			// Recorded in reverse start order.
			units[i] = testUnit("SN-P", i, t0.Add(time.Duration(n-i)*time.Second))
		}
		if _, err := s.RecordRun(context.Background(), testRun(t0), testSpec("A"), units); err != nil {
			t.Fatal(err)
		}
		i := n - 1
		err := s.Units(context.Background(), Filter{Steps: true, Metrics: []string{"rise_time_s"}}, func(a Attempt) error {
			want := units[i]
			if a.Unit.File != want.File || len(a.Unit.Steps) != 3 ||
				!reflect.DeepEqual(a.Unit.Steps[2].Metrics, []Metric{want.Steps[2].Metrics[6]}) {
				t.Fatalf("unit %d of the stream: %s with %d steps, want %s", n-i, a.Unit.File, len(a.Unit.Steps), want.File)
			}
			i--
			return nil
		})
		if err != nil || i != -1 {
			t.Errorf("streamed %d of %d units: %v", n-1-i, n, err)
		}
		// A callback error in the middle of the stream ends it, page
		// reading included.
		stop, seen := errors.New("enough"), 0
		err = s.Units(context.Background(), Filter{Steps: true}, func(Attempt) error {
			seen++
			if seen == 5 {
				return stop
			}
			return nil
		})
		if !errors.Is(err, stop) || seen != 5 {
			t.Errorf("stopping a stream with steps: %v after %d units", err, seen)
		}
		// Without Checks, the steps come without their checks.
		err = s.Units(context.Background(), Filter{Steps: true, Metrics: []string{}}, func(a Attempt) error {
			if len(a.Unit.Steps) != 3 || a.Unit.Steps[0].Checks != nil || a.Unit.Steps[0].Metrics != nil {
				return fmt.Errorf("%s: %+v", a.Unit.File, a.Unit.Steps[0])
			}
			i++
			return nil
		})
		if err != nil || i != n-1 {
			t.Errorf("streamed %d of %d units: %v", n-1-i, n, err)
		}
	})
}
