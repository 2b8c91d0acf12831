package record_test

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"log"
	"os"
	"path/filepath"
	"time"

	"github.com/stepgate/stepgate/acceptance/record"
)

func hash(s string) string {
	sum := sha256.Sum256([]byte(s))
	return hex.EncodeToString(sum[:])
}

// Record a run of two attempts of one serial (a failure, then a pass after
// rework), record the same run again, and print the serial's history.
func Example() {
	dir, err := os.MkdirTemp("", "record-example")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)
	ctx := context.Background()
	store, err := record.Open(ctx, filepath.Join(dir, "line.db")) // or a postgres:// URL
	if err != nil {
		log.Fatal(err)
	}
	defer store.Close()

	specText := "spec_id: VD25-EOL\nrevision: B\n"
	spec := record.Spec{ID: "VD25-EOL", Revision: "B", SHA256: hash(specText), Text: specText}
	start := time.Date(2026, 11, 30, 6, 0, 0, 0, time.UTC)
	step := func(overshoot float64, verdict string) record.Step {
		return record.Step{Index: 1, StartS: 0.5, From: 0, To: 25, Verdict: verdict,
			Metrics: []record.Metric{
				{Name: "overshoot_pct", Value: record.Some(overshoot)},
				{Name: "settling_time_s", Reason: "the response did not settle within the record"},
			},
			Checks: []record.Check{{Metric: "overshoot_pct", Value: record.Some(overshoot), Max: record.Some(10), Verdict: verdict}},
		}
	}
	units := []record.Unit{
		{Serial: "VD25-261105", File: "logs/VD25-261105.csv", FileSHA256: hash("first log"),
			StartedAt: start, Lot: "L-4711", Verdict: record.Fail,
			Reasons: []string{"overshoot_pct 27.72 > 10 at step 1"}, Steps: []record.Step{step(27.72, record.Fail)}},
		{Serial: "VD25-261105", File: "logs/VD25-261105-retest.csv", FileSHA256: hash("retest log"),
			StartedAt: start.Add(2 * time.Hour), Lot: "L-4711", Verdict: record.Pass, Steps: []record.Step{step(8.1, record.Pass)}},
	}
	run := record.Run{Time: start.Add(3 * time.Hour), ToolVersion: "0.1.0", RanBy: "qa", ReportID: "R-20261130"}
	for range 2 {
		res, err := store.RecordRun(ctx, run, spec, units)
		if err != nil {
			log.Fatal(err)
		}
		fmt.Printf("recorded %d, already in the record %d\n", res.Recorded, res.Skipped)
	}

	attempts, err := store.Attempts(ctx, "VD25-261105")
	if err != nil {
		log.Fatal(err)
	}
	for i, a := range attempts {
		u := a.Unit
		fmt.Printf("attempt %d  %s  %-4s  %s  settling: %s (%s)\n", i+1, u.StartedAt.Format(time.DateTime),
			u.Verdict, u.File, u.Steps[0].Metrics[1].Value, u.Steps[0].Metrics[1].Reason)
	}
	// Output:
	// recorded 2, already in the record 0
	// recorded 0, already in the record 2
	// attempt 1  2026-11-30 06:00:00  fail  logs/VD25-261105.csv  settling: null (the response did not settle within the record)
	// attempt 2  2026-11-30 08:00:00  pass  logs/VD25-261105-retest.csv  settling: null (the response did not settle within the record)
}

// Stream the units of one lot, in start order, with one metric per step,
// as a trend reads them.
func ExampleStore_Units() {
	dir, _ := os.MkdirTemp("", "record-example")
	defer os.RemoveAll(dir)
	ctx := context.Background()
	store, err := record.Open(ctx, filepath.Join(dir, "line.db"))
	if err != nil {
		log.Fatal(err)
	}
	defer store.Close()
	text := "spec_id: VD25-EOL\n"
	spec := record.Spec{ID: "VD25-EOL", Revision: "A", SHA256: hash(text), Text: text}
	start := time.Date(2026, 11, 30, 6, 0, 0, 0, time.UTC)
	var units []record.Unit
	for i, ov := range []float64{9.3, 7.9, 12.4} {
		units = append(units, record.Unit{Serial: fmt.Sprintf("VD25-%d", 261101+i),
			FileSHA256: hash(fmt.Sprint(i)), StartedAt: start.Add(time.Duration(2-i) * time.Hour),
			Lot: "L-4711", Verdict: record.Pass, Steps: []record.Step{{Index: 1, To: 25, Verdict: record.Pass,
				Metrics: []record.Metric{{Name: "overshoot_pct", Value: record.Some(ov)},
					{Name: "rise_time_s", Value: record.Some(0.12)}}}}})
	}
	if _, err := store.RecordRun(ctx, record.Run{Time: start}, spec, units); err != nil {
		log.Fatal(err)
	}
	f := record.Filter{SpecID: "VD25-EOL", Lot: "L-4711", Since: start, Steps: true, Metrics: []string{"overshoot_pct"}}
	err = store.Units(ctx, f, func(a record.Attempt) error {
		m := a.Unit.Steps[0].Metrics[0]
		fmt.Println(a.Unit.StartedAt.Format(time.Kitchen), a.Unit.Serial, m.Name, m.Value)
		return nil
	})
	if err != nil {
		log.Fatal(err)
	}
	// Output:
	// 6:00AM VD25-261103 overshoot_pct 12.4
	// 7:00AM VD25-261102 overshoot_pct 7.9
	// 8:00AM VD25-261101 overshoot_pct 9.3
}
