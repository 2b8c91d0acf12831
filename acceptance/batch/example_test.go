package batch_test

import (
	"context"
	"fmt"
	"os"

	"github.com/stepgate/stepgate/acceptance/batch"
	"github.com/stepgate/stepgate/acceptance/demo"
	"github.com/stepgate/stepgate/acceptance/logs"
	"github.com/stepgate/stepgate/acceptance/spec"
)

// Judge the invented demo line: find the logs, run the batch, and read a
// unit's record back from the store the run returns.
func ExampleRun() {
	dir, err := os.MkdirTemp("", "batch")
	if err != nil {
		fmt.Println(err)
		return
	}
	defer os.RemoveAll(dir)
	specPath, logDir, err := demo.Write(dir, demo.Options{Units: 12})
	if err != nil {
		fmt.Println(err)
		return
	}
	sp, err := spec.Load(specPath)
	if err != nil {
		fmt.Println(err)
		return
	}
	files, err := logs.FindLogs([]string{logDir}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	b, recs, err := batch.Run(context.Background(), sp, files, batch.DefaultOptions())
	if err != nil {
		fmt.Println(err)
		return
	}
	s := b.Summary
	fmt.Println(s.Units == len(files), s.Pass+s.Fail+s.Invalid == s.Units)
	page := b.PageUnits(false)
	if len(page) > 0 {
		tr, err := recs.UnitTrace(&b.Units[page[0]])
		fmt.Println(tr != nil, err)
	}
	// Output:
	// true true
	// true <nil>
}
