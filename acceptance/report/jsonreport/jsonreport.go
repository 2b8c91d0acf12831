// Package jsonreport writes the batch result as results.json, the
// machine-readable record of a stepgate run. Its key names are a contract for
// machine consumers: keys may be added, never renamed.
package jsonreport

import (
	"encoding/json"
	"fmt"
	"io"

	"github.com/stepgate/stepgate/acceptance"
)

// Write encodes b as indented JSON followed by a newline. Map keys are
// sorted by encoding/json, so the same batch always gives the same bytes.
func Write(w io.Writer, b *acceptance.Batch) error {
	data, err := json.MarshalIndent(b, "", "  ")
	if err != nil {
		return fmt.Errorf("results.json: encoding batch: %w", err)
	}
	data = append(data, '\n')
	if _, err := w.Write(data); err != nil {
		return fmt.Errorf("results.json: %w", err)
	}
	return nil
}
