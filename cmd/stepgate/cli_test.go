package main

import (
	"os"
	"path/filepath"
	"runtime/debug"
	"strings"
	"testing"
)

// A run whose --out already holds reports refuses with exit status 2 and
// says so, and the reports that were there stay untouched, byte for byte
// and in their modification times; with --force the run replaces them.
// The demo replaces its own reports without asking (its folder is its
// own).
func TestOverwriteRefused(t *testing.T) {
	out := filepath.Join(t.TempDir(), "out")
	args := []string{"run", "--quiet", "--spec", "../../testdata/e2e/spec.yaml", "--out", out, "--report-date", "2026-12-01", "../../testdata/e2e"}
	if code, _, stderr := captureRun(t, args...); code != 1 {
		t.Fatalf("first run: exit %d: %s", code, stderr)
	}
	before := snapshot(t, out)
	previous := readReports(t, out)
	for _, only := range []string{"", "report.pdf"} {
		if only != "" {
			// One report left from an earlier run is enough to refuse.
			for _, n := range reportNames {
				if n != only {
					os.Remove(filepath.Join(out, n))
				}
			}
			before = snapshot(t, out)
		}
		code, stdout, stderr := captureRun(t, args...)
		if code != 2 || !strings.Contains(stderr, "--out "+out+" already holds reports") || !strings.Contains(stderr, "--force") {
			t.Errorf("second run: exit %d, stderr %q; want 2 naming the directory and --force", code, stderr)
		}
		if stdout != "" {
			t.Errorf("a refused run printed %q", stdout)
		}
		sameTree(t, "the earlier reports", before, snapshot(t, out))
	}
	code, _, stderr := captureRun(t, append([]string{"run", "--force"}, args[1:]...)...)
	if code != 1 {
		t.Fatalf("--force: exit %d: %s", code, stderr)
	}
	keepsPreviousReports(t, out, previous) // the same inputs give the same bytes
	demo := t.TempDir()
	for i := range 2 {
		if code, _, stderr := captureRun(t, "demo", "--out", demo, "--units", "3"); code != 0 {
			t.Fatalf("demo run %d: exit %d: %s", i+1, code, stderr)
		}
	}
}

// Usage errors name what is missing and point to --help; a path that does
// not exist is said in plain words.
func TestUsageMessages(t *testing.T) {
	cases := []struct {
		args []string
		want []string
	}{
		{[]string{"run", "--spec", "s.yaml", "--out", "o"}, []string{"missing PATH", "see stepgate run --help"}},
		{[]string{"run", "x"}, []string{`"out", "spec" not set`, "see stepgate run --help"}},
		{[]string{"identify", "--gain", "2"}, []string{"missing LOG", "see stepgate identify --help"}},
		{[]string{"spec", "check"}, []string{"missing FILE", "see stepgate spec check --help"}},
		{[]string{"spec", "check", "a.yaml", "b.yaml"}, []string{"one FILE wanted", "see stepgate spec check --help"}},
		{[]string{"-v"}, []string{"unknown shorthand flag: 'v'", "see stepgate --help"}},
		{[]string{"run", "--spec", "nope.yaml", "--out", "o", "x"}, []string{"no such file or folder: nope.yaml"}},
		{[]string{"run", "--spec", "../../testdata/e2e/spec.yaml", "--out", filepath.Join(t.TempDir(), "o"), "no-such-logs"}, []string{"no such file or folder: no-such-logs"}},
		{[]string{"run", "-q", "-v", "--spec", "s.yaml", "--out", "o", "x"}, []string{"[quiet verbose] were all set"}},
	}
	for _, c := range cases {
		code, _, stderr := captureRun(t, c.args...)
		if code != 2 {
			t.Errorf("%v: exit %d, want 2", c.args, code)
		}
		for _, w := range c.want {
			if !strings.Contains(stderr, w) {
				t.Errorf("%v: stderr %q lacks %q", c.args, stderr, w)
			}
		}
		if strings.Contains(stderr, "no such file or directory") {
			t.Errorf("%v: stderr %q keeps the system's wording", c.args, stderr)
		}
	}
}

// --version prints the version, with the commit when the binary was built
// from a repository; the commit is read from the build settings Go
// records (runtime/debug.BuildInfo).
func TestVersion(t *testing.T) {
	code, stdout, _ := captureRun(t, "--version")
	if code != 0 || !strings.HasPrefix(stdout, "stepgate "+version) {
		t.Errorf("--version: exit %d, %q", code, stdout)
	}
	cases := []struct {
		settings []debug.BuildSetting
		want     string
	}{
		{nil, ""},
		{[]debug.BuildSetting{{Key: "vcs.revision", Value: "0123456789abcdef0123"}, {Key: "vcs.modified", Value: "false"}}, " (commit 0123456789ab)"},
		{[]debug.BuildSetting{{Key: "vcs.modified", Value: "true"}, {Key: "vcs.revision", Value: "abc"}}, " (commit abc, modified)"},
		{[]debug.BuildSetting{{Key: "vcs.modified", Value: "true"}}, ""},
	}
	for _, c := range cases {
		if got := commitOf(c.settings); got != c.want {
			t.Errorf("commitOf(%v) = %q, want %q", c.settings, got, c.want)
		}
	}
}

// Shell completion offers YAML files for --spec and directories for
// --out (cobra's completion protocol: the directive after the colon,
// ShellCompDirectiveFilterFileExt = 8 with the extensions listed,
// ShellCompDirectiveFilterDirs = 16).
func TestCompletion(t *testing.T) {
	code, stdout, stderr := captureRun(t, "__complete", "run", "--spec", "")
	if code != 0 || !strings.Contains(stdout, "yaml\nyml\n:8") {
		t.Errorf("completion of --spec: exit %d, %q %s", code, stdout, stderr)
	}
	code, stdout, _ = captureRun(t, "__complete", "run", "--out", "")
	if code != 0 || !strings.Contains(stdout, ":16") {
		t.Errorf("completion of --out: exit %d, %q", code, stdout)
	}
}
