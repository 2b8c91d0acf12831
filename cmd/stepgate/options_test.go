package main

import (
	"bytes"
	"context"
	"errors"
	"path/filepath"
	"strings"
	"testing"
)

// usageCode returns the exit status an error from a command's run function
// gives (as execute maps it), and its message.
func usageCode(err error) (int, string) {
	if err == nil {
		return 0, ""
	}
	var ee *exitError
	if errors.As(err, &ee) {
		return ee.code, ee.err.Error()
	}
	return 2, err.Error()
}

// The run options are checked before the spec is loaded or a log is
// searched: a bad option is refused even with a spec that does not exist,
// and nothing is written.
func TestRunOptionsCheckedFirst(t *testing.T) {
	dir := t.TempDir()
	base := runOptions{Spec: filepath.Join(dir, "nope.yaml"), Out: filepath.Join(dir, "out"), Paths: []string{dir}}
	cases := []struct {
		name string
		edit func(o *runOptions)
		msg  string
	}{
		{"pages", func(o *runOptions) { o.MaxUnitPages = -1 }, "--max-unit-pages -1: want 0 (no limit) or more"},
		{"workers", func(o *runOptions) { o.Workers = -2 }, "--workers -2: want 0 (one per core) or more"},
		{"date", func(o *runOptions) { o.ReportDate = "1/12/26" }, `--report-date "1/12/26": want YYYY-MM-DD`},
		{"spec", func(o *runOptions) {}, "nope.yaml"}, // options fine: the spec is read
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			o := base
			c.edit(&o)
			var stdout, stderr bytes.Buffer
			code, msg := usageCode(runBatch(context.Background(), streams{&stdout, &stderr}, o))
			if code != 2 || !strings.Contains(msg, c.msg) {
				t.Errorf("exit %d, %q; want 2 with %q", code, msg, c.msg)
			}
			if stdout.Len()+stderr.Len() != 0 {
				t.Errorf("printed %q %q before refusing", stdout.String(), stderr.String())
			}
		})
	}
}

// Flags that exclude each other are refused by the command line, whatever
// else is wrong (the spec named does not exist).
func TestExclusiveFlags(t *testing.T) {
	dir := t.TempDir()
	cases := []struct {
		args  []string
		flags []string
	}{
		{[]string{"run", "--quiet", "--verbose", "--spec", filepath.Join(dir, "nope.yaml"), "--out", dir, dir}, []string{"quiet", "verbose"}},
		{[]string{"predict", "--spec", filepath.Join(dir, "nope.yaml"), "--for-damping", "1", "--for-overshoot", "5"}, []string{"for-damping", "for-overshoot"}},
	}
	for _, c := range cases {
		code, _, stderr := captureRun(t, c.args...)
		if code != 2 || strings.Contains(stderr, "nope.yaml") {
			t.Errorf("%v: exit %d, %q; want 2 without reading the spec", c.args, code, stderr)
		}
		for _, f := range c.flags {
			if !strings.Contains(stderr, f) {
				t.Errorf("%v: %q does not name %s", c.args, stderr, f)
			}
		}
	}
}

func TestOrList(t *testing.T) {
	cases := []struct {
		in   []string
		want string
	}{
		{nil, ""},
		{[]string{".csv"}, ".csv"},
		{[]string{".csv", ".tsv"}, ".csv or .tsv"},
		{[]string{".csv", ".tsv", ".txt"}, ".csv, .tsv or .txt"},
	}
	for _, c := range cases {
		if got := orList(c.in); got != c.want {
			t.Errorf("orList(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}

// The predict options are checked before the spec is read; the spec is
// read only when they are sound.
func TestPredictOptionsCheckedFirst(t *testing.T) {
	one, five := 1.0, 5.0
	nope := filepath.Join(t.TempDir(), "nope.yaml")
	cases := []struct {
		name string
		o    predictOptions
		msg  string
	}{
		{"two targets", predictOptions{Spec: nope, To: 1, ForDamping: &one, ForOvershoot: &five}, "give --for-damping or --for-overshoot, not both"},
		{"no step", predictOptions{Spec: nope, From: 2, To: 2}, "--from and --to are both 2: no step to predict"},
		{"spec", predictOptions{Spec: nope, To: 1, ForDamping: &one}, "nope.yaml"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var stdout bytes.Buffer
			code, msg := usageCode(runPredict(streams{&stdout, &stdout}, c.o))
			if code != 2 || !strings.Contains(msg, c.msg) || stdout.Len() != 0 {
				t.Errorf("exit %d, %q, printed %q; want 2 with %q", code, msg, stdout.String(), c.msg)
			}
		})
	}
}

// The identify options are checked before the log is read.
func TestIdentifyOptionsCheckedFirst(t *testing.T) {
	zero := 0.0
	nope := filepath.Join(t.TempDir(), "nope.csv")
	base := defaultIdentifyOptions()
	base.Log, base.Gain = nope, 2
	cases := []struct {
		name string
		edit func(o *identifyOptions)
		msg  string
	}{
		{"gain", func(o *identifyOptions) { o.Gain = 0 }, "--gain 0: the proportional gain of the reference test must be positive"},
		{"columns", func(o *identifyOptions) { o.Columns = "t,x" }, `--columns "t,x": want time,command,response`},
		{"time unit", func(o *identifyOptions) { o.TimeUnit = "h" }, "--time-unit: "},
		{"min change", func(o *identifyOptions) { o.MinChange = &zero }, "--min-change 0: must be positive"},
		{"log", func(o *identifyOptions) {}, "nope.csv"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			o := base
			c.edit(&o)
			var stdout bytes.Buffer
			code, msg := usageCode(runIdentify(streams{&stdout, &stdout}, o))
			if code != 2 || !strings.Contains(msg, c.msg) || stdout.Len() != 0 {
				t.Errorf("exit %d, %q, printed %q; want 2 with %q", code, msg, stdout.String(), c.msg)
			}
		})
	}
}
