package main

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"os"
	"strings"
	"time"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/record"
	"github.com/stepgate/stepgate/acceptance/recording"
	"github.com/stepgate/stepgate/acceptance/report/digest"
)

// exitRecord is the exit status of a run whose reports were written but
// whose line record could not be (README, Exit status).
const exitRecord = 3

// lineRecord is the line record of one run: the store, once open, and the
// first error met, which the run reports after writing its reports.
type lineRecord struct {
	dsn   string
	store *record.Store
	err   error
}

// openRecord opens the record named by --record and numbers the batch's
// attempts after the earlier attempts of its serials. A record that cannot
// be opened or read is remembered, not fatal: the reports are still
// written, and the run ends with exitRecord.
func openRecord(ctx context.Context, dsn string, b *acceptance.Batch) *lineRecord {
	lr := &lineRecord{dsn: dsn}
	if dsn == "" {
		return lr
	}
	st, err := record.Open(ctx, dsn)
	if err != nil {
		lr.err = err
		return lr
	}
	lr.store = st
	prior, err := st.PriorAttempts(ctx, recording.Serials(b))
	if err != nil {
		lr.err = err
		return lr
	}
	acceptance.ChainAttempts(b, recording.Prior(prior))
	return lr
}

// write records the run: who ran it, when, with what options, the spec's
// text and every unit judged. It returns nil when no record was asked for.
func (lr *lineRecord) write(ctx context.Context, s streams, o runOptions, b *acceptance.Batch) error {
	if lr.dsn == "" {
		return nil
	}
	if lr.store != nil {
		defer lr.store.Close()
	}
	if lr.err == nil {
		lr.err = lr.record(ctx, s, o, b)
	}
	if lr.err != nil {
		return &exitError{code: exitRecord, err: fmt.Errorf("the reports were written, but the line record %s was not: %w", redactDSN(lr.dsn), lr.err)}
	}
	return nil
}

func (lr *lineRecord) record(ctx context.Context, s streams, o runOptions, b *acceptance.Batch) error {
	text, err := os.ReadFile(o.Spec)
	if err != nil {
		return fmt.Errorf("reading the spec's text: %w", err)
	}
	sp := recording.Spec(b.SpecDoc, text)
	if sum := sha256.Sum256(text); sp.SHA256 != hex.EncodeToString(sum[:]) {
		return fmt.Errorf("--spec %s changed while the run judged its units", o.Spec)
	}
	units, left := recording.Units(b)
	opts, err := json.Marshal(recordedOptions(o))
	if err != nil {
		return err
	}
	run := record.Run{Time: time.Now().UTC(), ToolVersion: b.Tool.Version, Options: opts, RanBy: operator(o), ReportID: digest.ReportID(b)}
	res, err := lr.store.RecordRun(ctx, run, sp, units)
	if err != nil {
		return err
	}
	if !o.Quiet {
		fmt.Fprintf(s.out, "recorded %d unit(s) in the line record (run %d); %d already recorded", res.Recorded, res.RunID, res.Skipped)
		if len(left) > 0 {
			fmt.Fprintf(s.out, "; %d file(s) without content to record: %s", len(left), strings.Join(left, ", "))
		}
		fmt.Fprintln(s.out)
	}
	return nil
}

// recordedOptions are the run's options as the record keeps them.
func recordedOptions(o runOptions) map[string]any {
	return map[string]any{
		"spec": o.Spec, "out": o.Out, "paths": o.Paths, "report_date": o.ReportDate,
		"all_units": o.AllUnits, "max_unit_pages": o.MaxUnitPages, "workers": o.Workers,
	}
}

// operator is who ran the run: --operator, else $USER, else $LOGNAME,
// else "unknown".
func operator(o runOptions) string {
	for _, v := range []string{o.Operator, os.Getenv("USER"), os.Getenv("LOGNAME")} {
		if v = strings.TrimSpace(v); v != "" {
			return v
		}
	}
	return "unknown"
}

// redactDSN hides a URL's password in messages.
func redactDSN(dsn string) string {
	if i := strings.Index(dsn, "://"); i >= 0 {
		if at := strings.LastIndex(dsn, "@"); at > i {
			if c := strings.Index(dsn[i+3:at], ":"); c >= 0 {
				return dsn[:i+3+c] + ":xxxxx" + dsn[at:]
			}
		}
	}
	return dsn
}
