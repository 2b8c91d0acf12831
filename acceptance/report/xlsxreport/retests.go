package xlsxreport

import (
	"github.com/xuri/excelize/v2"

	"github.com/stepgate/stepgate/acceptance/report/digest"
)

// SheetRetests lists every attempt of the serials tested more than once.
const SheetRetests = "Retests"

// retests writes the Retests sheet: one row per attempt of each serial
// with more than one attempt, earlier runs' attempts (from the line
// record) included, and the serial's disposition (its latest attempt).
func retests(f *excelize.File, st *styles, d *digest.Digest) error {
	if _, err := f.NewSheet(SheetRetests); err != nil {
		return err
	}
	rows := [][]interface{}{{"unit", "attempt", "attempts", "file", "started at (UTC)", "verdict", "judged in", "disposition"}}
	for _, rt := range d.Batch.Retests {
		for _, a := range rt.Attempts {
			started, run := interface{}(nil), "this batch"
			if !a.StartedAt.IsZero() {
				started = a.StartedAt.UTC().Format("2006-01-02 15:04:05")
			}
			if a.Earlier {
				run = "an earlier run"
			}
			rows = append(rows, []interface{}{rt.Serial, a.Attempt, len(rt.Attempts), a.File, started, string(a.Verdict), run, string(rt.Final())})
		}
	}
	if len(rows) == 1 {
		rows = append(rows, []interface{}{"no unit was tested more than once"})
	}
	if _, err := table(f, SheetRetests, st, 1, rows); err != nil {
		return err
	}
	if err := freeze(f, SheetRetests); err != nil {
		return err
	}
	return widths(f, SheetRetests, []float64{22, 9, 9, 48, 20, 10, 16, 12})
}
