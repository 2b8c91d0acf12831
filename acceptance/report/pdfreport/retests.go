package pdfreport

import (
	"fmt"
	"path/filepath"
	"strconv"
	"time"

	"github.com/stepgate/stepgate/acceptance/report/digest"
)

// yieldPct writes a yield in %, or a dash when it is not defined.
func yieldPct(p *float64) string {
	if p == nil {
		return "not defined (no unit)"
	}
	return digest.Percent(*p / 100)
}

// retests shows the first-pass and final yields over serials and the
// table of the serials tested more than once, attempt by attempt.
func (r *report) retests() {
	s := r.b.Summary
	r.heading("First-pass and final yield", 30)
	r.keyValues(52, [][2]string{
		{"Serials", fmt.Sprintf("%d (%d log files; %d serials tested more than once)", s.Serials, s.Units, s.Retested)},
		{"First-pass yield", yieldPct(s.FirstPassYieldPct) + " of serials passed at their first attempt"},
		{"Final yield", yieldPct(s.FinalYieldPct) + " of serials passed at their latest attempt (their disposition)"},
	})
	r.para("Attempts of a serial are ordered by the log's start time (started_at), else the file's time. A second copy of a log counts once. The pass, fail and invalid counts above count log files.", 8, 4.2, grey)
	if len(r.b.Retests) == 0 {
		return
	}
	r.pdf.Ln(2)
	r.heading(fmt.Sprintf("Retested units (%d)", len(r.b.Retests)), 20)
	cols := []column{
		{title: "unit", width: 38, align: "L"},
		{title: "attempt", width: 16, align: "R"},
		{title: "file", width: 56, align: "L"},
		{title: "started", width: 36, align: "L"},
		{title: "verdict", width: 18, align: "C"},
		{title: "", width: 16, align: "L"},
	}
	var rows [][]cell
	shown := 0
	for _, rt := range r.b.Retests {
		if len(rows)+len(rt.Attempts) > maxTableRows {
			break
		}
		shown++
		for _, a := range rt.Attempts {
			note := ""
			if a.Earlier {
				note = "earlier run"
			}
			rows = append(rows, []cell{txt(rt.Serial), txt(strconv.Itoa(a.Attempt) + " of " + strconv.Itoa(len(rt.Attempts))),
				txt(filepath.Base(a.File)), txt(startedText(a.StartedAt)), verdictCell(a.Verdict), {text: note, smallerInk: true}})
		}
	}
	r.table(cols, rows)
	if n := len(r.b.Retests) - shown; n > 0 {
		r.para(fmt.Sprintf("%d more retested units not listed here: report.xlsx (Retests sheet) lists every one.", n), 8.5, 4.3, grey)
	}
	r.para("A serial's disposition is the verdict of its latest attempt.", 8, 4.2, grey)
}

// startedText is a start time as the tables print it, or a dash.
func startedText(t time.Time) string {
	if t.IsZero() {
		return "—"
	}
	return t.UTC().Format("2006-01-02 15:04:05Z")
}
