package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// updateGolden rewrites the golden files from the current code:
//
//	go test ./cmd/stepgate -run Golden -update-golden
//
// Only after a deliberate change to the reports, reviewed in the diff.
var updateGolden = flag.Bool("update-golden", false, "rewrite the golden report files")

// TestGoldenReports pins the reports of two batches byte for byte
// under a fixed report date: the demo line, and the bad-input corpus
// (testdata/bad, every kind of unreadable or unmeasurable log). results.json
// is kept as a file (so a change shows as a diff), report.xlsx and
// report.pdf by their SHA-256. A reshaping of the code must leave all of
// them unchanged. Paths are relative so that the bytes do not depend on
// where the checkout lives; the one absolute path results.json holds, the
// spec's resolved path, is compared with the working directory written as
// $WORKDIR.
func TestGoldenReports(t *testing.T) {
	cases := []struct {
		name  string
		setup func(t *testing.T) // prepares the working directory
		args  []string
		code  int
		out   string // directory holding the reports
	}{
		{"demo", func(*testing.T) {}, []string{"demo", "--out", "demo-report", "--report-date", "2026-12-01"}, 0, "demo-report/report"},
		{"bad", copyBadCorpus, []string{"run", "--spec", "corpus.yaml", "--out", "out", "--report-date", "2026-12-01", "bad"}, 1, "out"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			golden := filepath.Join(goldenDir(t), c.name)
			t.Chdir(t.TempDir())
			c.setup(t)
			code, _, stderr := captureRun(t, c.args...)
			if code != c.code {
				t.Fatalf("exit %d, want %d; stderr: %s", code, c.code, stderr)
			}
			checkGolden(t, golden, c.out)
		})
	}
}

// copyBadCorpus copies testdata/bad's logs to ./bad and its corpus spec to
// ./corpus.yaml.
func copyBadCorpus(t *testing.T) {
	t.Helper()
	src := filepath.Join(testDir, "..", "..", "testdata", "bad")
	if err := os.Mkdir("bad", 0o755); err != nil {
		t.Fatal(err)
	}
	ents, err := os.ReadDir(src)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range ents {
		if !strings.HasSuffix(e.Name(), ".csv") {
			continue
		}
		copyFile(t, filepath.Join(src, e.Name()), filepath.Join("bad", e.Name()))
	}
	copyFile(t, filepath.Join(src, "specs", "corpus.yaml"), "corpus.yaml")
}

// copyFile copies one file.
func copyFile(t *testing.T, from, to string) {
	t.Helper()
	b, err := os.ReadFile(from)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(to, b, 0o644); err != nil {
		t.Fatal(err)
	}
}

// checkGolden compares the reports in dir with the golden files, or rewrites
// them under -update-golden.
func checkGolden(t *testing.T, golden, dir string) {
	t.Helper()
	got := map[string][]byte{}
	for _, f := range []string{"results.json", "report.xlsx", "report.pdf"} {
		b, err := os.ReadFile(filepath.Join(dir, f))
		if err != nil {
			t.Fatal(err)
		}
		got[f] = b
	}
	got["results.json"] = bytes.ReplaceAll(got["results.json"], []byte(workDir(t)+string(filepath.Separator)), []byte("$WORKDIR/"))
	sums := ""
	for _, f := range []string{"report.xlsx", "report.pdf"} {
		s := sha256.Sum256(got[f])
		sums += hex.EncodeToString(s[:]) + "  " + f + "\n"
	}
	if *updateGolden {
		if err := os.MkdirAll(golden, 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(golden, "results.json"), got["results.json"], 0o644); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(golden, "SHA256SUMS"), []byte(sums), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(filepath.Join(golden, "results.json"))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got["results.json"], want) {
		t.Errorf("results.json differs from %s (%d bytes, want %d); first difference at byte %d",
			filepath.Join(golden, "results.json"), len(got["results.json"]), len(want), firstDiff(got["results.json"], want))
	}
	wantSums, err := os.ReadFile(filepath.Join(golden, "SHA256SUMS"))
	if err != nil {
		t.Fatal(err)
	}
	gotLines, wantLines := strings.Split(sums, "\n"), strings.Split(string(wantSums), "\n")
	for i := range gotLines {
		if i >= len(wantLines) || gotLines[i] != wantLines[i] {
			t.Errorf("report digest changed:\n got %s\nwant %s", gotLines[i], wantLines[min(i, len(wantLines)-1)])
		}
	}
}

// workDir is the working directory with symbolic links resolved, as a
// resolved path in results.json begins.
func workDir(t *testing.T) string {
	t.Helper()
	wd, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	if r, err := filepath.EvalSymlinks(wd); err == nil {
		wd = r
	}
	return wd
}

// goldenDir is testdata/golden beside this test, as an absolute path (the
// test changes its working directory).
func goldenDir(t *testing.T) string {
	t.Helper()
	return filepath.Join(testDir, "testdata", "golden")
}

// testDir is the package directory, read before any test changes directory.
var testDir = func() string {
	d, err := os.Getwd()
	if err != nil {
		panic(err)
	}
	return d
}()

// firstDiff returns the index of the first byte where a and b differ.
func firstDiff(a, b []byte) int {
	n := min(len(a), len(b))
	for i := 0; i < n; i++ {
		if a[i] != b[i] {
			return i
		}
	}
	return n
}
