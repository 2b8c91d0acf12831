package main

import (
	"bytes"
	"fmt"
	"slices"
	"strings"

	"github.com/spf13/cobra"

	"github.com/stepgate/stepgate/templates"
)

// schemaDocuments maps the documents `stepgate schema` describes to their
// definition in the schema (templates/schema.json).
var schemaDocuments = map[string]string{
	"results":  "results",     // results.json
	"unit":     "unit",        // one line of units.jsonl, an element of results.json's units
	"run":      "run_summary", // run --json
	"predict":  "predict",     // predict --json
	"identify": "identify",    // identify --json
}

// schemaRoot is the line of the schema that makes results.json its root.
const schemaRoot = `  "$ref": "#/$defs/results",`

// schemaOptions are the arguments of `stepgate schema`.
type schemaOptions struct {
	Document string // the document to describe: a key of schemaDocuments; "" is results
}

// newSchemaCmd declares `stepgate schema`.
func newSchemaCmd() *cobra.Command {
	var o schemaOptions
	cmd := &cobra.Command{
		Use:   "schema [results|unit|run|predict|identify]",
		Short: "Print the JSON Schema of results.json or of another JSON output",
		Long: `schema prints a JSON Schema (draft 2020-12) of a JSON document stepgate writes:
results.json (the default), a line of units.jsonl (unit), run --json (run),
predict --json (predict) or identify --json (identify). Every schema holds the
definitions of all of them under $defs; only its root differs. Keys are added
to the outputs without notice and never renamed.`,
		Example: `  stepgate schema > results.schema.json
  stepgate schema unit > units-line.schema.json`,
		Args:      cobra.MaximumNArgs(1),
		ValidArgs: sortedKeys(schemaDocuments),
		RunE: func(cmd *cobra.Command, args []string) error {
			if len(args) == 1 {
				o.Document = args[0]
			}
			return runSchema(cmdStreams(cmd), o)
		},
	}
	return cmd
}

// runSchema prints the schema of o.Document.
func runSchema(s streams, o schemaOptions) error {
	doc, err := schemaFor(o.Document)
	if err != nil {
		return usageErr(err)
	}
	_, err = s.out.Write(doc)
	return err
}

// schemaFor returns the schema whose root is the named document.
func schemaFor(name string) ([]byte, error) {
	if name == "" {
		name = "results"
	}
	def, ok := schemaDocuments[name]
	if !ok {
		return nil, fmt.Errorf("schema %q: want one of %s; see stepgate schema --help", name, orList(sortedKeys(schemaDocuments)))
	}
	root := strings.Replace(schemaRoot, "results", def, 1)
	if !bytes.Contains(templates.Schema, []byte(schemaRoot)) {
		return nil, fmt.Errorf("the embedded schema lacks its root line %s", schemaRoot)
	}
	return bytes.Replace(templates.Schema, []byte(schemaRoot), []byte(root), 1), nil
}

// sortedKeys returns the keys of m in order.
func sortedKeys(m map[string]string) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	return keys
}
