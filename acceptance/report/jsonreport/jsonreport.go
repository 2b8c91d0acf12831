// Package jsonreport writes the batch result as results.json, the
// machine-readable record of a stepgate run. Its key names are a contract for
// machine consumers: keys may be added, never renamed.
package jsonreport

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"reflect"
	"strings"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/digest"
)

// Write encodes the digested batch as indented JSON followed by a newline: the same bytes as
// json.MarshalIndent(b, "", "  ") plus "\n", but streamed unit by unit, so
// that a batch of many thousand units is never held in memory as one text.
// Units are encoded without reflection (see unitEncoder); the other fields
// go through encoding/json. Map keys are sorted, as encoding/json sorts them,
// so the same batch always gives the same bytes.
func Write(w io.Writer, d *digest.Digest) error {
	if d == nil || d.Batch == nil {
		return fmt.Errorf("results.json: no batch to report")
	}
	return writeBatch(w, d.Batch)
}

// writeBatch streams b to w through a buffer.
func writeBatch(w io.Writer, b *acceptance.Batch) error {
	bw := bufio.NewWriterSize(w, 1<<16)
	if err := write(bw, b); err != nil {
		return fmt.Errorf("results.json: %w", err)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("results.json: %w", err)
	}
	return nil
}

func write(w *bufio.Writer, b *acceptance.Batch) error {
	v := reflect.ValueOf(b).Elem()
	t := v.Type()
	first := true
	w.WriteString("{")
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		tag := f.Tag.Get("json")
		if tag == "-" || !f.IsExported() {
			continue
		}
		name, opts, _ := strings.Cut(tag, ",")
		if name == "" {
			name = f.Name
		}
		fv := v.Field(i)
		if strings.Contains(opts, "omitempty") && fv.IsZero() {
			continue
		}
		if !first {
			w.WriteString(",")
		}
		first = false
		key, _ := json.Marshal(name)
		w.WriteString("\n  ")
		w.Write(key)
		w.WriteString(": ")
		if name == "units" {
			if err := writeUnits(w, b.Units); err != nil {
				return err
			}
			continue
		}
		data, err := json.MarshalIndent(fv.Interface(), "  ", "  ")
		if err != nil {
			return fmt.Errorf("encoding %s: %w", name, err)
		}
		w.Write(data)
	}
	if first {
		w.WriteString("}\n")
	} else {
		w.WriteString("\n}\n")
	}
	return nil
}

// writeUnits writes the units array as MarshalIndent would at depth one.
// Each unit is encoded by a unitEncoder into one reused buffer; a unit it
// cannot encode (a number that is not finite) goes through encoding/json,
// which reports the error.
func writeUnits(w *bufio.Writer, units []acceptance.UnitResult) error {
	if units == nil {
		w.WriteString("null")
		return nil
	}
	if len(units) == 0 {
		w.WriteString("[]")
		return nil
	}
	w.WriteString("[")
	e := unitEncoder{b: make([]byte, 0, 16<<10)}
	for i := range units {
		e.b = e.b[:0]
		e.unit(&units[i])
		if e.bad {
			data, err := json.MarshalIndent(&units[i], "    ", "  ")
			if err != nil {
				return fmt.Errorf("encoding unit %q (%s): %w", units[i].Unit, units[i].File, err)
			}
			e.b = append(e.b[:0], data...)
			e.bad = false
		}
		if i > 0 {
			w.WriteString(",")
		}
		w.WriteString("\n    ")
		w.Write(e.b)
	}
	w.WriteString("\n  ]")
	return nil
}
