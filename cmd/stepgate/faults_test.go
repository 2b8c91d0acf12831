package main

import (
	"bytes"
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/batch"
	"github.com/stepgate/stepgate/acceptance/demo"
	"github.com/stepgate/stepgate/acceptance/report"
	"github.com/stepgate/stepgate/acceptance/spec"
)

// The fault tests run stepgate as a user does, as a separate process, so
// that signals, file-size limits and the exit status are real. The logs
// are the invented demo line (acceptance/demo) and the bad-input corpus
// (testdata/bad, see its README); neither is reference data.

// demoLine writes n demo logs and the demo spec, and a second spec without
// the model section, whose batch is fast so that a run spends most of its
// time writing the reports.
func demoLine(t *testing.T, dir string, n int) (specPath, noModel, logs string) {
	t.Helper()
	specPath, logs, err := demo.Write(dir, demo.Options{Units: n})
	if err != nil {
		t.Fatal(err)
	}
	text := demo.Spec
	i, j := strings.Index(text, "\nmodel:"), strings.Index(text, "\nreport:")
	if i < 0 || j < i {
		t.Fatalf("demo spec has no model section before its report section:\n%s", text)
	}
	noModel = filepath.Join(dir, "no-model.yaml")
	if err := os.WriteFile(noModel, []byte(text[:i]+text[j:]), 0o644); err != nil {
		t.Fatal(err)
	}
	return specPath, noModel, logs
}

// waitUntil polls cond every millisecond until it holds or the process
// exits; it reports whether cond held.
func waitUntil(done <-chan struct{}, limit time.Duration, cond func() bool) bool {
	end := time.Now().Add(limit)
	for time.Now().Before(end) {
		select {
		case <-done:
			return cond()
		default:
		}
		if cond() {
			return true
		}
		time.Sleep(time.Millisecond)
	}
	return false
}

// opensUnder reports whether process pid has a file under dir open
// (Linux /proc/PID/fd).
func opensUnder(pid int, dir string) bool {
	fds, _ := os.ReadDir(filepath.Join("/proc", strconv.Itoa(pid), "fd"))
	for _, fd := range fds {
		if target, err := os.Readlink(filepath.Join("/proc", strconv.Itoa(pid), "fd", fd.Name())); err == nil && strings.HasPrefix(target, dir+string(filepath.Separator)) {
			return true
		}
	}
	return false
}

// hasTemp reports whether dir holds a report's temporary file.
func hasTemp(dir string) bool {
	ents, _ := os.ReadDir(dir)
	for _, e := range ents {
		if strings.Contains(e.Name(), ".tmp-") {
			return true
		}
	}
	return false
}

// TestProcessFaults builds the command and runs it as a separate process
// under faults a user meets: a file-size limit that makes a report's write
// fail as on a full disk (see fullDisk), and SIGINT and SIGTERM, once while
// the batch is running and once while the reports are being written, into
// an output directory that holds a previous run's reports. Each time the
// run must stop promptly with exit status 2 and a message, and leave the
// previous reports byte for byte, with no torn file and no temporary file.
func TestProcessFaults(t *testing.T) {
	if runtime.GOOS != "linux" {
		t.Skip("the test watches the process through /proc (Linux)")
	}
	tmp := t.TempDir()
	bin := buildStepgate(t, tmp)
	t.Run("full disk", func(t *testing.T) { fullDisk(t, bin) })
	specPath, noModel, logs := demoLine(t, tmp, 300)
	// A first complete run on three logs gives the previous reports.
	few := copyFirstLogs(t, logs, filepath.Join(tmp, "few"), 3)

	cases := []interruption{
		{"SIGINT during the batch", syscall.SIGINT, specPath, "batch"},
		{"SIGTERM during the batch", syscall.SIGTERM, specPath, "batch"},
		{"SIGINT while writing", syscall.SIGINT, noModel, "writing"},
		{"SIGTERM while writing", syscall.SIGTERM, noModel, "writing"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "out")
			first := exec.Command(bin, "run", "--quiet", "--spec", c.spec, "--out", out, "--report-date", "2026-12-01", few)
			if msg, err := first.CombinedOutput(); exitCode(err) > 1 {
				t.Fatalf("first run: %v\n%s", err, msg)
			}
			previous := readReports(t, out)
			before := snapshot(t, logs)

			stderr, err := c.interrupt(t, exec.Command(bin, "run", "--quiet", "--force", "--spec", c.spec, "--out", out, "--report-date", "2026-12-01", logs), out, logs)
			// 130 = 128 + SIGINT, as shells report an interrupted program
			// (POSIX.1-2017, Shell Command Language §2.8.2), for either signal.
			if code := exitCode(err); code != 130 {
				t.Errorf("exit status %d (%v), want 130", code, err)
			}
			if !strings.Contains(stderr, "stepgate: ") || !strings.Contains(stderr, "interrupted") || !strings.Contains(stderr, "no report written") {
				t.Errorf("stderr %q, want a message saying the run was interrupted and wrote no report", stderr)
			}
			keepsPreviousReports(t, out, previous)
			sameTree(t, "the logs", before, snapshot(t, logs))
		})
	}
}

// copyFirstLogs copies the first n logs of dir (in name order) into a new
// directory to and returns it.
func copyFirstLogs(t *testing.T, dir, to string, n int) string {
	t.Helper()
	if err := os.MkdirAll(to, 0o755); err != nil {
		t.Fatal(err)
	}
	for _, name := range dirNames(t, dir)[:n] {
		copyFile(t, filepath.Join(dir, name), filepath.Join(to, name))
	}
	return to
}

// interruption is a signal sent to a run during one of its phases.
type interruption struct {
	name   string
	sig    syscall.Signal
	spec   string
	during string // "batch" or "writing"
}

// interrupt starts cmd, waits until it reaches the phase (a log under logs
// open: the batch runs, and the signal handler, installed first, is in
// place; a temporary report in out: the reports are being written), sends
// the signal and waits for the process to end. It returns the process's
// stderr and its Wait error.
func (c interruption) interrupt(t *testing.T, cmd *exec.Cmd, out, logs string) (string, error) {
	t.Helper()
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	done := make(chan struct{})
	var werr error
	go func() { werr = cmd.Wait(); close(done) }()
	reached := func() bool { return opensUnder(cmd.Process.Pid, logs) }
	if c.during == "writing" {
		reached = func() bool { return hasTemp(out) }
	}
	if !waitUntil(done, 30*time.Second, reached) {
		cmd.Process.Kill()
		<-done
		t.Fatalf("the run never reached the %s phase (stderr %q)", c.during, stderr.String())
	}
	sent := time.Now()
	cmd.Process.Signal(c.sig)
	select {
	case <-done:
	case <-time.After(60 * time.Second):
		cmd.Process.Kill()
		<-done
		t.Fatalf("the run did not stop within 60 s of %v", c.sig)
	}
	t.Logf("%v stopped the run %v after it was sent", c.sig, time.Since(sent).Round(time.Millisecond))
	return stderr.String(), werr
}

// fullDisk runs stepgate under a file-size limit (POSIX.1-2017
// setrlimit RLIMIT_FSIZE, set with the shell's ulimit -f: 64 blocks of 512
// or 1024 bytes) smaller than its PDF report: writing a report fails with
// EFBIG as on a full disk. The run must
// exit 2 naming the report, keep the previous reports and leave no
// temporary file.
func fullDisk(t *testing.T, bin string) {
	sh, err := exec.LookPath("sh")
	if err != nil {
		t.Skip("no POSIX shell to set a file-size limit")
	}
	out := filepath.Join(t.TempDir(), "out")
	args := []string{"run", "--quiet", "--spec", "../../testdata/e2e/spec.yaml", "--out", out, "--report-date", "2026-12-01", "../../testdata/e2e"}
	if msg, err := exec.Command(bin, args...).CombinedOutput(); exitCode(err) != 1 {
		t.Fatalf("first run: %v\n%s", err, msg)
	}
	previous := readReports(t, out)
	if len(previous[report.PDFName]) < 64<<10 {
		t.Fatalf("the PDF has %d bytes; the test needs one over the limit", len(previous[report.PDFName]))
	}
	var stderr bytes.Buffer
	args = append([]string{"run", "--force"}, args[1:]...)
	cmd := exec.Command(sh, append([]string{"-c", `ulimit -f 64 && exec "$0" "$@"`, bin}, args...)...)
	cmd.Stderr = &stderr
	err = cmd.Run()
	if code := exitCode(err); code != 2 {
		t.Errorf("exit status %d (%v), want 2; stderr %q", code, err, stderr.String())
	}
	named := false
	for _, n := range reportNames {
		named = named || strings.Contains(stderr.String(), "writing "+n+" in "+out+": ")
	}
	if msg := stderr.String(); !named || !strings.Contains(msg, "file too large") {
		t.Errorf("stderr %q, want it to name the report, the directory and the cause", msg)
	}
	keepsPreviousReports(t, out, previous)
}

// TestUnwritableOutput checks output directories that cannot be used: a
// regular file, a path under a regular file, and a directory in place of
// one of the reports. Each is exit 2 with a message naming the path, and no
// report under a final name changes.
func TestUnwritableOutput(t *testing.T) {
	dir := t.TempDir()
	file := filepath.Join(dir, "file")
	os.WriteFile(file, []byte("not a directory\n"), 0o644)
	taken := filepath.Join(dir, "taken")
	if code, _, stderr := captureRun(t, "run", "--quiet", "--spec", "../../testdata/e2e/spec.yaml", "--out", taken, "--report-date", "2026-12-01", "../../testdata/e2e"); code != 1 {
		t.Fatalf("first run: exit %d: %s", code, stderr)
	}
	previous := readReports(t, taken)
	os.Remove(filepath.Join(taken, report.PDFName))
	os.Mkdir(filepath.Join(taken, report.PDFName), 0o755)
	delete(previous, report.PDFName)

	cases := []struct {
		name, out, msg string
	}{
		{"a regular file", file, "--out " + file + ": " + file + " is a file, not a directory"},
		{"under a regular file", filepath.Join(file, "sub"), "--out " + filepath.Join(file, "sub") + ": " + file + " is a file, not a directory"},
		{"a directory where a report goes", taken, filepath.Join(taken, report.PDFName) + " is a directory; cannot replace it with the report"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			code, _, stderr := captureRun(t, "run", "--quiet", "--force", "--spec", "../../testdata/e2e/spec.yaml", "--out", c.out, "--report-date", "2026-12-01", "../../testdata/e2e")
			if code != 2 || !strings.Contains(stderr, c.msg) {
				t.Errorf("exit %d, stderr %q; want 2 with %q", code, stderr, c.msg)
			}
		})
	}
	if data, _ := os.ReadFile(file); string(data) != "not a directory\n" {
		t.Errorf("the file named as --out was changed: %q", data)
	}
	for n, want := range previous {
		if got, _ := os.ReadFile(filepath.Join(taken, n)); !bytes.Equal(got, want) {
			t.Errorf("%s was replaced although the run failed", n)
		}
	}
	if got := strings.Join(dirNames(t, taken), " "); got != allReports {
		t.Errorf("output directory holds %q", got)
	}
}

// TestVanishingInput deletes a log after the batch has found it and before
// it is read. The batch goes on: a log that cannot be read is an invalid
// unit with the reason, like any other unreadable log, and the other units
// are judged as usual. (A vanished input is not a reason to stop the batch
// and write nothing: the units already judged are evidence, and the report
// shows exactly which log went missing.)
func TestVanishingInput(t *testing.T) {
	dir := t.TempDir()
	var files []string
	for _, n := range []string{"VD25-261101.csv", "VD25-261105.csv", "VD25-261109.csv"} {
		data, err := os.ReadFile(filepath.Join("../../testdata/e2e", n))
		if err != nil {
			t.Fatal(err)
		}
		p := filepath.Join(dir, n)
		os.WriteFile(p, data, 0o644)
		files = append(files, p)
	}
	sp, err := spec.Load("../../testdata/e2e/spec.yaml")
	if err != nil {
		t.Fatal(err)
	}
	gone := files[2]
	b, recs, err := batch.Run(context.Background(), sp, files, batch.Options{
		Workers: 1, ReportDate: "2026-12-01",
		// One worker takes the files in order: the last is deleted once
		// the first has been judged.
		Progress: func(done, total int, bytes int64) {
			if done == 1 {
				os.Remove(gone)
			}
		},
	})
	if err != nil {
		t.Fatal(err)
	}
	if s := b.Summary; s.Units != 3 || s.Pass+s.Fail+s.Invalid != 3 {
		t.Errorf("summary %+v", s)
	}
	for _, u := range b.Units {
		switch u.File {
		case gone:
			if u.Verdict != acceptance.Invalid || len(u.Reasons) != 1 || !strings.Contains(u.Reasons[0].Text, "log cannot be read: read log: stat "+gone+": no such file or directory") {
				t.Errorf("vanished log: %s %q", u.Verdict, u.Reasons)
			}
		case files[0]:
			if u.Verdict != acceptance.Pass {
				t.Errorf("%s: %s %q", u.Unit, u.Verdict, u.Reasons)
			}
		default:
			if u.Verdict != acceptance.Fail {
				t.Errorf("%s: %s %q, want fail (testdata/e2e/README.md)", u.Unit, u.Verdict, u.Reasons)
			}
		}
	}
	out := filepath.Join(dir, "out")
	if _, err := report.WriteAll(context.Background(), out, b, recs, report.Options{}); err != nil {
		t.Fatalf("reports of a batch with a vanished log: %v", err)
	}
}
