package pdfreport_test

import (
	"bytes"
	"fmt"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/acceptance/report/pdfreport"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

func ExampleWrite() {
	max := 15.0
	b := &acceptance.Batch{
		Tool:       acceptance.ToolInfo{Name: "stepgate", Version: "0.1.0"},
		Spec:       acceptance.SpecInfo{SpecID: "DEMO", Revision: "A", Title: "Demo actuator", SHA256: "00"},
		Limits:     map[metrics.Name]spec.Limit{"overshoot_pct": {Max: &max}},
		ReportDate: "2024-05-17",
		Summary:    acceptance.Summary{Units: 1, Pass: 1},
		Units: []acceptance.UnitResult{{
			Unit: "SN-1", File: "SN-1.csv", SHA256: "11", Verdict: acceptance.Pass,
			Steps: []acceptance.StepResult{{
				Index: 1, StartS: 0.5, From: 0, To: 10, Verdict: acceptance.Pass,
				Metrics: acceptance.MetricsOf(map[metrics.Name]metrics.Value{"overshoot_pct": metrics.Known(9.48)}),
			}},
		}},
	}
	var buf bytes.Buffer
	d, err := digest.New(b)
	if err != nil {
		panic(err)
	}
	if err := pdfreport.Write(&buf, d, nil, pdfreport.Options{}); err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(bytes.HasPrefix(buf.Bytes(), []byte("%PDF-")))
	fmt.Println(digest.ReportID(b))
	// Output:
	// true
	// DEMO-A-c81406f0
}
