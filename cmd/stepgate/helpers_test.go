package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"sort"
	"strings"
	"testing"
	"time"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report"
)

// Helpers of the tests that run stepgate and look at what it leaves on
// disk: the built binary, snapshots of directories, the reports.

// reportNames are the files a run writes.
var reportNames = report.Names

// allReports is the output directory of a complete run, as dirNames lists it.
const allReports = "report.pdf report.xlsx results.json steps.csv units.jsonl"

// buildStepgate builds the command into dir and returns its path.
func buildStepgate(t *testing.T, dir string) string {
	t.Helper()
	goTool, err := exec.LookPath("go")
	if err != nil {
		goTool = filepath.Join(runtime.GOROOT(), "bin", "go")
	}
	bin := filepath.Join(dir, "stepgate")
	out, err := exec.Command(goTool, "build", "-o", bin, ".").CombinedOutput()
	if err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

// snapshot maps every entry under dir (relative name) to its content's
// digest; directories map to "dir", links to their target.
func snapshot(t *testing.T, dir string) map[string]string {
	t.Helper()
	out := map[string]string{}
	err := filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(dir, p)
		switch {
		case d.Type()&fs.ModeSymlink != 0:
			target, _ := os.Readlink(p)
			out[rel] = "link " + target
		case d.IsDir():
			out[rel] = "dir"
		default:
			data, err := os.ReadFile(p)
			if err != nil {
				return err
			}
			st, err := d.Info()
			if err != nil {
				return err
			}
			sum := sha256.Sum256(data)
			out[rel] = hex.EncodeToString(sum[:]) + " " + st.Mode().String() + " " + st.ModTime().UTC().Format(time.RFC3339Nano)
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// sameTree fails when two snapshots differ, naming the entries.
func sameTree(t *testing.T, what string, before, after map[string]string) {
	t.Helper()
	var diff []string
	for k, v := range before {
		if after[k] != v {
			diff = append(diff, k)
		}
	}
	for k := range after {
		if _, ok := before[k]; !ok {
			diff = append(diff, k+" (new)")
		}
	}
	sort.Strings(diff)
	if len(diff) > 0 {
		t.Errorf("%s changed: %q", what, diff)
	}
}

// readReports returns the bytes of the reports in dir.
func readReports(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	for _, n := range reportNames {
		data, err := os.ReadFile(filepath.Join(dir, n))
		if err != nil {
			t.Fatal(err)
		}
		out[n] = data
	}
	return out
}

// dirNames lists the entries of dir, sorted.
func dirNames(t *testing.T, dir string) []string {
	t.Helper()
	ents, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, e := range ents {
		names = append(names, e.Name())
	}
	return names
}

// keepsPreviousReports checks that dir holds exactly the previous run's
// reports, byte for byte, and nothing else (no temporary file).
func keepsPreviousReports(t *testing.T, dir string, previous map[string][]byte) {
	t.Helper()
	if got := strings.Join(dirNames(t, dir), " "); got != allReports {
		t.Errorf("output directory holds %q, want the previous reports only", got)
	}
	for n, want := range previous {
		got, err := os.ReadFile(filepath.Join(dir, n))
		if err != nil || !bytes.Equal(got, want) {
			t.Errorf("%s is not the previous run's report (%d bytes, was %d): %v", n, len(got), len(want), err)
		}
	}
}

// exitCode returns a process's exit status: 0 for no error, -1 when it did
// not exit normally.
func exitCode(err error) int {
	if err == nil {
		return 0
	}
	var ee *exec.ExitError
	if errors.As(err, &ee) {
		return ee.ExitCode()
	}
	return -1
}

// results is the part of results.json these tests read.
type results struct {
	Summary acceptance.Summary `json:"summary"`
	Units   []struct {
		Unit     string            `json:"unit"`
		File     string            `json:"file"`
		Verdict  string            `json:"verdict"`
		Metadata map[string]string `json:"metadata"`
	} `json:"units"`
}

func readResults(t *testing.T, path string) results {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var r results
	if err := json.Unmarshal(data, &r); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return r
}
