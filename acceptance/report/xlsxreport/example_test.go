package xlsxreport_test

import (
	"bytes"
	"fmt"

	"github.com/xuri/excelize/v2"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/acceptance/report/xlsxreport"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

func ExampleWrite() {
	max := 15.0
	b := &acceptance.Batch{
		Tool:       acceptance.ToolInfo{Name: "stepgate", Version: "0.1.0"},
		Spec:       acceptance.SpecInfo{SpecID: "DEMO", Revision: "A", Title: "Demo actuator"},
		Limits:     map[metrics.Name]spec.Limit{"overshoot_pct": {Max: &max}},
		ReportDate: "2024-05-17",
		Summary:    acceptance.Summary{Units: 1, Fail: 1},
		Units: []acceptance.UnitResult{{
			Unit: "=1+1", File: "odd-serial.csv", Verdict: acceptance.Fail,
			Reasons: acceptance.TextReasons("overshoot_pct 44.43 above max 15"),
			Steps: []acceptance.StepResult{{
				Index: 1, StartS: 0.5, From: 0, To: 10, Verdict: acceptance.Fail,
				Metrics: acceptance.MetricsOf(map[metrics.Name]metrics.Value{
					"overshoot_pct":   metrics.Known(44.43),
					"settling_time_s": metrics.Unknown("the record ends before the response settles"),
				}),
			}},
		}},
	}
	var buf bytes.Buffer
	d, err := digest.New(b)
	if err != nil {
		panic(err)
	}
	if err := xlsxreport.Write(&buf, d); err != nil {
		fmt.Println(err)
		return
	}
	f, err := excelize.OpenReader(&buf)
	if err != nil {
		fmt.Println(err)
		return
	}
	defer f.Close()
	fmt.Println(f.GetSheetList())
	rows, _ := f.GetRows(xlsxreport.SheetUnits)
	fmt.Printf("%s | %s | %s | %q\n", rows[1][0], rows[0][15], rows[1][15], rows[1][16])
	// Output:
	// [Summary Units Checks Retests Limits Safety]
	// =1+1 | overshoot_pct (%) | 44.43 | ""
}
