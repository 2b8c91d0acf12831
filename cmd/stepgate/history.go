package main

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/spf13/cobra"

	"github.com/stepgate/stepgate/acceptance/record"
)

// historyOptions are the options of `stepgate history`.
type historyOptions struct {
	Serial string // the serial whose attempts are printed
	Record string // --record DB: the line record; required
	JSON   bool   // --json: print JSON instead of a table
}

// newHistoryCmd declares `stepgate history`.
func newHistoryCmd() *cobra.Command {
	var o historyOptions
	cmd := &cobra.Command{
		Use:   "history SERIAL --record DB",
		Short: "Print every recorded attempt of a serial",
		Long: "Print every attempt of a serial kept in the line record, first to latest: when it was tested, " +
			"the file, the spec revision, the station, lot and shift, the verdict and the first reason. " +
			"The serial's disposition is its latest attempt.",
		Example: `  stepgate history VD25-261101 --record line.db
  stepgate history VD25-261101 --record postgres://stepgate@db.plant/line --json`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Serial = args[0]
			return runHistory(cmd.Context(), cmdStreams(cmd), o)
		},
	}
	cmd.Flags().StringVar(&o.Record, "record", "", "the line record: a SQLite file path or a postgres:// URL")
	cmd.Flags().BoolVar(&o.JSON, "json", false, "print JSON")
	cmd.MarkFlagRequired("record")
	return cmd
}

// historyJSON is the --json output of `stepgate history`; its keys are a
// contract.
type historyJSON struct {
	Serial      string           `json:"serial"`
	Attempts    []historyAttempt `json:"attempts"`
	Disposition *string          `json:"disposition"` // the latest attempt's verdict; null without attempts
}

// historyAttempt is one attempt in historyJSON.
type historyAttempt struct {
	Attempt    int      `json:"attempt"`
	StartedAt  *string  `json:"started_at"` // RFC 3339; null when the log gave none
	RecordedAt string   `json:"recorded_at"`
	File       string   `json:"file"`
	SHA256     string   `json:"sha256"`
	SpecID     string   `json:"spec_id"`
	Revision   string   `json:"revision"`
	Station    string   `json:"station"`
	Operator   string   `json:"operator"`
	Lot        string   `json:"lot"`
	Shift      string   `json:"shift"`
	Verdict    string   `json:"verdict"`
	Reasons    []string `json:"reasons"`
	ReportID   string   `json:"report_id"`
}

// runHistory prints the attempts of o.Serial.
func runHistory(ctx context.Context, s streams, o historyOptions) error {
	if strings.TrimSpace(o.Serial) == "" {
		return usageErr(fmt.Errorf("SERIAL: want a unit's serial"))
	}
	if !strings.Contains(o.Record, "://") {
		if _, err := os.Stat(o.Record); err != nil {
			return usageErr(fmt.Errorf("--record %s: %w", o.Record, err))
		}
	}
	st, err := record.Open(ctx, o.Record)
	if err != nil {
		return usageErr(err)
	}
	defer st.Close()
	as, err := st.Attempts(ctx, o.Serial)
	if err != nil {
		return usageErr(err)
	}
	h := historyOf(o.Serial, as)
	if o.JSON {
		enc := json.NewEncoder(s.out)
		enc.SetIndent("", "  ")
		enc.SetEscapeHTML(false)
		return enc.Encode(h)
	}
	printHistory(s, h)
	return nil
}

func historyOf(serial string, as []record.Attempt) historyJSON {
	h := historyJSON{Serial: serial, Attempts: []historyAttempt{}}
	for i, a := range as {
		u := a.Unit
		ha := historyAttempt{
			Attempt: i + 1, RecordedAt: a.RunTime.UTC().Format(time.RFC3339), File: u.File, SHA256: u.FileSHA256,
			SpecID: a.Spec.ID, Revision: a.Spec.Revision, Station: u.Station, Operator: u.Operator,
			Lot: u.Lot, Shift: u.Shift, Verdict: u.Verdict, Reasons: u.Reasons, ReportID: a.ReportID,
		}
		if ha.Reasons == nil {
			ha.Reasons = []string{}
		}
		if !u.StartedAt.IsZero() {
			t := u.StartedAt.Format(time.RFC3339)
			ha.StartedAt = &t
		}
		h.Attempts = append(h.Attempts, ha)
	}
	if n := len(h.Attempts); n > 0 {
		d := h.Attempts[n-1].Verdict
		h.Disposition = &d
	}
	return h
}

func printHistory(s streams, h historyJSON) {
	if len(h.Attempts) == 0 {
		fmt.Fprintf(s.out, "%s: no attempt in the record\n", h.Serial)
		return
	}
	fmt.Fprintf(s.out, "%s: %d attempt(s); disposition (latest attempt): %s\n\n", h.Serial, len(h.Attempts), *h.Disposition)
	tw := tabwriter.NewWriter(s.out, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "#\tstarted\tfile\tspec\tstation\tlot\tshift\tverdict\tfirst reason")
	for _, a := range h.Attempts {
		started, reason := "—", ""
		if a.StartedAt != nil {
			started = *a.StartedAt
		}
		if len(a.Reasons) > 0 {
			reason = a.Reasons[0]
		}
		fmt.Fprintf(tw, "%d\t%s\t%s\t%s rev %s\t%s\t%s\t%s\t%s\t%s\n", a.Attempt, started, a.File, a.SpecID, a.Revision,
			orDashText(a.Station), orDashText(a.Lot), orDashText(a.Shift), a.Verdict, reason)
	}
	tw.Flush()
}

func orDashText(s string) string {
	if s == "" {
		return "—"
	}
	return s
}
