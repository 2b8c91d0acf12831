package main

import (
	"encoding/json"
	"io"
	"strconv"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/digest"
)

// runSummaryOutput is the JSON contract of `run --json` (the schema's
// "run_summary"): keys may be added, never renamed.
type runSummaryOutput struct {
	SchemaVersion int    `json:"schema_version"`
	ReportID      string `json:"report_id"`
	Spec          struct {
		SpecID   string `json:"spec_id"`
		Revision string `json:"revision"`
		Title    string `json:"title"`
	} `json:"spec"`
	Summary  acceptance.Summary `json:"summary"`
	YieldPct *float64           `json:"yield_pct"` // null for no units
	Units    []runUnitOutput    `json:"units"`
	Reports  []string           `json:"reports"` // the files written
}

// runUnitOutput is one unit in `run --json`.
type runUnitOutput struct {
	Unit    string   `json:"unit"`
	File    string   `json:"file"`
	Verdict string   `json:"verdict"`
	Reasons []string `json:"reasons"`
}

// writeRunJSON writes the run's summary as indented JSON to w.
func writeRunJSON(w io.Writer, b *acceptance.Batch, paths []string) error {
	out := runSummaryOutput{SchemaVersion: 1, ReportID: digest.ReportID(b), Summary: b.Summary,
		Units: make([]runUnitOutput, len(b.Units)), Reports: paths}
	out.Spec.SpecID, out.Spec.Revision, out.Spec.Title = b.Spec.SpecID, b.Spec.Revision, b.Spec.Title
	for _, p := range []**float64{&out.Summary.FirstPassYieldPct, &out.Summary.FinalYieldPct} {
		if *p != nil {
			y := round12(**p)
			*p = &y
		}
	}
	if b.Summary.Units > 0 {
		y := round12(100 * float64(b.Summary.Pass) / float64(b.Summary.Units))
		out.YieldPct = &y
	}
	for i := range b.Units {
		u := &b.Units[i]
		reasons := make([]string, len(u.Reasons))
		for j, r := range u.Reasons {
			reasons[j] = r.Text
		}
		out.Units[i] = runUnitOutput{Unit: u.Unit, File: u.File, Verdict: string(u.Verdict), Reasons: reasons}
	}
	if out.Reports == nil {
		out.Reports = []string{}
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false) // reasons read "27.72 > 10", as in results.json
	return enc.Encode(out)
}

// round12 rounds v to 12 significant digits, the precision of the numbers
// in results.json.
func round12(v float64) float64 {
	r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 12, 64), 64)
	if err != nil {
		return v
	}
	return r
}
