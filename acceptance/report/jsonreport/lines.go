package jsonreport

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"io"

	"github.com/stepgate/stepgate/acceptance/report/digest"
)

// WriteUnits writes units.jsonl to w: one line per unit, in report order,
// each the unit's object exactly as it stands in results.json's "units"
// array (the same members, values and precision), without the indentation.
// A stream processor or a database loader reads it a unit at a time.
func WriteUnits(w io.Writer, d *digest.Digest) error {
	if d == nil || d.Batch == nil {
		return fmt.Errorf("units.jsonl: no batch to report")
	}
	bw := bufio.NewWriterSize(w, 1<<16)
	e := &encoder{}
	var line bytes.Buffer
	for i := range d.Batch.Units {
		u := &d.Batch.Units[i]
		e.B = e.B[:0]
		e.unit(0, u)
		if e.NonFinite {
			return fmt.Errorf("units.jsonl: encoding unit %q (%s): json: unsupported value: a number that is not finite", u.Unit, u.File)
		}
		line.Reset()
		if err := json.Compact(&line, e.B); err != nil {
			return fmt.Errorf("units.jsonl: unit %q (%s): %w", u.Unit, u.File, err)
		}
		line.WriteByte('\n')
		if _, err := bw.Write(line.Bytes()); err != nil {
			return fmt.Errorf("units.jsonl: %w", err)
		}
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("units.jsonl: %w", err)
	}
	return nil
}
