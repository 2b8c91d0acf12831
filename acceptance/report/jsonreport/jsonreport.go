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
)

// Write encodes b as indented JSON followed by a newline: the same bytes as
// json.MarshalIndent(b, "", "  ") plus "\n", but streamed unit by unit, so
// that a batch of many thousand units is never held in memory as one text.
// Map keys are sorted by encoding/json, so the same batch always gives the
// same bytes.
func Write(w io.Writer, b *acceptance.Batch) error {
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
	for i := range units {
		if i > 0 {
			w.WriteString(",")
		}
		data, err := json.MarshalIndent(&units[i], "    ", "  ")
		if err != nil {
			return fmt.Errorf("encoding unit %q (%s): %w", units[i].Unit, units[i].File, err)
		}
		w.WriteString("\n    ")
		w.Write(data)
	}
	w.WriteString("\n  ]")
	return nil
}
