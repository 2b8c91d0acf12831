package main

import (
	"bytes"
	"context"
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
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/xuri/excelize/v2"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/demo"
	"github.com/stepgate/stepgate/acceptance/report"
)

// The fault tests run stepgate as a user does, as a separate process, so
// that signals, file-size limits and the exit status are real. The logs
// are the invented demo line (acceptance/demo) and the bad-input corpus
// (testdata/bad, see its README); neither is reference data.

// reportNames are the three files a run writes.
var reportNames = []string{report.JSONName, report.PDFName, report.XLSXName}

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

// readReports returns the bytes of the three reports in dir.
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
// three reports, byte for byte, and nothing else (no temporary file).
func keepsPreviousReports(t *testing.T, dir string, previous map[string][]byte) {
	t.Helper()
	if got := strings.Join(dirNames(t, dir), " "); got != "report.pdf report.xlsx results.json" {
		t.Errorf("output directory holds %q, want the previous reports only", got)
	}
	for n, want := range previous {
		got, err := os.ReadFile(filepath.Join(dir, n))
		if err != nil || !bytes.Equal(got, want) {
			t.Errorf("%s is not the previous run's report (%d bytes, was %d): %v", n, len(got), len(want), err)
		}
	}
}

// demoLine writes n demo logs and the demo spec, and a second spec without
// the model section, whose batch is fast so that a run spends most of its
// time writing the reports.
func demoLine(t *testing.T, dir string, n int) (spec, noModel, logs string) {
	t.Helper()
	spec, logs, err := demo.Write(dir, demo.Options{Units: n})
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
	return spec, noModel, logs
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
	spec, noModel, logs := demoLine(t, tmp, 300)

	// A first complete run on three logs gives the previous reports.
	few := filepath.Join(tmp, "few")
	os.MkdirAll(few, 0o755)
	ents, _ := os.ReadDir(logs)
	for _, e := range ents[:3] {
		data, _ := os.ReadFile(filepath.Join(logs, e.Name()))
		os.WriteFile(filepath.Join(few, e.Name()), data, 0o644)
	}

	cases := []struct {
		name   string
		sig    syscall.Signal
		spec   string
		during string // "batch" or "writing"
	}{
		{"SIGINT during the batch", syscall.SIGINT, spec, "batch"},
		{"SIGTERM during the batch", syscall.SIGTERM, spec, "batch"},
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

			var stderr bytes.Buffer
			cmd := exec.Command(bin, "run", "--quiet", "--spec", c.spec, "--out", out, "--report-date", "2026-12-01", logs)
			cmd.Stderr = &stderr
			if err := cmd.Start(); err != nil {
				t.Fatal(err)
			}
			done := make(chan struct{})
			var werr error
			go func() { werr = cmd.Wait(); close(done) }()
			reached := false
			switch c.during {
			case "batch":
				// A log open means the batch runs (and the signal handler,
				// installed first, is in place).
				reached = waitUntil(done, 30*time.Second, func() bool { return opensUnder(cmd.Process.Pid, logs) })
			case "writing":
				reached = waitUntil(done, 30*time.Second, func() bool { return hasTemp(out) })
			}
			if !reached {
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
			if code := exitCode(werr); code != 2 {
				t.Errorf("exit status %d (%v), want 2", code, werr)
			}
			if msg := stderr.String(); !strings.Contains(msg, "stepgate: ") || !strings.Contains(msg, "interrupted") || !strings.Contains(msg, "no report written") {
				t.Errorf("stderr %q, want a message saying the run was interrupted and wrote no report", msg)
			}
			keepsPreviousReports(t, out, previous)
			sameTree(t, "the logs", before, snapshot(t, logs))
		})
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
			code, _, stderr := captureRun(t, "run", "--quiet", "--spec", "../../testdata/e2e/spec.yaml", "--out", c.out, "--report-date", "2026-12-01", "../../testdata/e2e")
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
	if got := strings.Join(dirNames(t, taken), " "); got != "report.pdf report.xlsx results.json" {
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
	spec, err := acceptance.LoadSpec("../../testdata/e2e/spec.yaml")
	if err != nil {
		t.Fatal(err)
	}
	gone := files[2]
	b, err := acceptance.Run(context.Background(), spec, files, acceptance.RunOptions{
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
			if u.Verdict != acceptance.Invalid || len(u.Reasons) != 1 || !strings.Contains(u.Reasons[0], "log cannot be read: read log: stat "+gone+": no such file or directory") {
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
	if _, err := report.WriteAll(context.Background(), out, b, report.BatchTraces(b), report.Options{}); err != nil {
		t.Fatalf("reports of a batch with a vanished log: %v", err)
	}
}

// TestInputsNeverModified runs the corpus and the end-to-end logs and
// checks that every input file keeps its bytes and modification time.
func TestInputsNeverModified(t *testing.T) {
	for _, c := range []struct{ spec, dir string }{
		{"../../testdata/bad/specs/corpus.yaml", "../../testdata/bad"},
		{"../../testdata/e2e/spec.yaml", "../../testdata/e2e"},
	} {
		before := snapshot(t, c.dir)
		code, _, stderr := captureRun(t, "run", "--quiet", "--spec", c.spec, "--out", filepath.Join(t.TempDir(), "out"), "--report-date", "2026-12-01", c.dir)
		if code != 1 {
			t.Errorf("%s: exit %d: %s", c.dir, code, stderr)
		}
		sameTree(t, c.dir, before, snapshot(t, c.dir))
	}
}

// TestOutputInsideInput runs with the output directory inside the logs'
// directory, holding a previous results.json and a stray log: the search
// skips it, so neither is read as a log. An output directory that is the
// input directory itself is refused; one that holds the input directory
// (`--out . logs`) is fine.
func TestOutputInsideInput(t *testing.T) {
	root := t.TempDir()
	logs := filepath.Join(root, "logs")
	out := filepath.Join(logs, "out")
	os.MkdirAll(out, 0o755)
	ents, _ := os.ReadDir("../../testdata/e2e")
	n := 0
	for _, e := range ents {
		if strings.HasSuffix(e.Name(), ".csv") {
			data, _ := os.ReadFile(filepath.Join("../../testdata/e2e", e.Name()))
			os.WriteFile(filepath.Join(logs, e.Name()), data, 0o644)
			n++
		}
	}
	good, _ := os.ReadFile("../../testdata/e2e/VD25-261101.csv")
	os.WriteFile(filepath.Join(out, "stray.csv"), bytes.Replace(good, []byte("VD25-261101"), []byte("STRAY-1"), 1), 0o644)
	os.WriteFile(filepath.Join(out, "results.json"), []byte(`{"previous": true}`), 0o644)

	code, _, stderr := captureRun(t, "run", "--quiet", "--spec", "../../testdata/e2e/spec.yaml", "--out", out, "--report-date", "2026-12-01", logs)
	if code != 1 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	res := readResults(t, filepath.Join(out, "results.json"))
	if res.Summary.Units != n {
		t.Errorf("%d units, want the %d logs outside the output directory", res.Summary.Units, n)
	}
	for _, u := range res.Units {
		if u.Unit == "STRAY-1" || strings.HasPrefix(u.File, out) {
			t.Errorf("a file of the output directory was judged: %s %s", u.Unit, u.File)
		}
	}
	if got := strings.Join(dirNames(t, out), " "); got != "report.pdf report.xlsx results.json stray.csv" {
		t.Errorf("output directory holds %q", got)
	}

	code, _, stderr = captureRun(t, "run", "--quiet", "--spec", "../../testdata/e2e/spec.yaml", "--out", logs, logs)
	if code != 2 || !strings.Contains(stderr, "--out "+logs+" is the input directory "+logs) {
		t.Errorf("--out equal to the input: exit %d, %q", code, stderr)
	}
	if _, err := os.Stat(filepath.Join(logs, report.JSONName)); !os.IsNotExist(err) {
		t.Errorf("a refused run wrote into the input directory: %v", err)
	}

	// A fresh tree: the reports go to the folder that holds the logs.
	os.RemoveAll(out)
	spec, _ := filepath.Abs("../../testdata/e2e/spec.yaml")
	t.Chdir(root)
	code, _, stderr = captureRun(t, "run", "--quiet", "--spec", spec, "--out", ".", "--report-date", "2026-12-01", "logs")
	if code != 1 {
		t.Fatalf("--out . logs: exit %d: %s", code, stderr)
	}
	if res := readResults(t, filepath.Join(root, "results.json")); res.Summary.Units != n {
		t.Errorf("--out . logs: %d units, want %d", res.Summary.Units, n)
	}
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

// TestLogTextIsData runs logs whose serials and metadata hold spreadsheet
// formulas (OWASP, CSV injection: cells starting with =, +, -, @), control
// characters, bytes that are not UTF-8 and a relative path, and whose file
// name holds control characters. Everything must stay text: the workbook's
// cells hold strings, not formulas; no control character reaches the PDF's
// text or the terminal; results.json is valid JSON that keeps the serials;
// and the run writes its three reports and nothing else, anywhere.
func TestLogTextIsData(t *testing.T) {
	root := t.TempDir()
	logs := filepath.Join(root, "logs")
	out := filepath.Join(root, "out")
	os.MkdirAll(logs, 0o755)
	good, err := os.ReadFile("../../testdata/bad/good.csv")
	if err != nil {
		t.Fatal(err)
	}
	body := good[bytes.IndexByte(good, '\n')+1:] // without its serial line
	serials := []string{
		`=HYPERLINK("http://x","y")`,
		`+cmd|' /C calc'!A0`,
		`-2+3+cmd|' /C calc'!A0`,
		`@SUM(1+1)*cmd|' /C calc'!A0`,
		`../../etc/x`,
		"LATIN1-1",
	}
	for i, s := range serials {
		meta := "# serial: " + s + "\n# operator: " + s + "\n"
		if s == "LATIN1-1" {
			meta = "# serial: LATIN1-1\n# operator: J\xfcrgen M\xfcller\n" // ISO 8859-1, not UTF-8
		}
		os.WriteFile(filepath.Join(logs, "u"+strconv.Itoa(i)+".csv"), append([]byte(meta), body...), 0o644)
	}
	ctlName := "bell\x07esc\x1b[31mred.csv"
	if err := os.WriteFile(filepath.Join(logs, ctlName), body, 0o644); err != nil {
		t.Skipf("file system refuses control characters in names: %v", err)
	}
	before := snapshot(t, root)

	code, stdout, stderr := captureRun(t, "run", "--spec", "../../testdata/bad/specs/corpus.yaml", "--out", out, "--report-date", "2026-12-01", logs)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if strings.ContainsAny(stdout, "\x07\x1b") || strings.ContainsAny(stderr, "\x07\x1b") {
		t.Errorf("control characters reached the terminal: %q", stdout)
	}

	// Nothing but the three reports was created, anywhere under the test's
	// root (the logs' serials name no file).
	after := snapshot(t, root)
	for k := range before {
		delete(after, k)
	}
	var made []string
	for k := range after {
		made = append(made, k)
	}
	sort.Strings(made)
	if got := strings.Join(made, " "); got != "out out/report.pdf out/report.xlsx out/results.json" {
		t.Errorf("the run created %q", got)
	}
	if _, err := os.Stat(filepath.Join(root, "..", "etc", "x")); !os.IsNotExist(err) {
		t.Errorf("a file was made from the serial ../../etc/x: %v", err)
	}

	res := readResults(t, filepath.Join(out, report.JSONName))
	found := map[string]bool{}
	for _, u := range res.Units {
		found[u.Unit] = true
	}
	for _, s := range serials {
		if !found[s] {
			t.Errorf("results.json lost serial %q", s)
		}
	}

	f, err := excelize.OpenFile(filepath.Join(out, report.XLSXName))
	if err != nil {
		t.Fatalf("report.xlsx: %v", err)
	}
	defer f.Close()
	cells := 0
	for _, sheet := range f.GetSheetList() {
		rows, err := f.GetRows(sheet)
		if err != nil {
			t.Fatal(err)
		}
		for r, row := range rows {
			for c, v := range row {
				ref, _ := excelize.CoordinatesToCellName(c+1, r+1)
				// The writer uses no formulas, so any formula came from a log.
				if formula, _ := f.GetCellFormula(sheet, ref); formula != "" {
					t.Errorf("%s!%s holds the formula %q", sheet, ref, formula)
				}
				for _, s := range serials[:4] {
					if v != s {
						continue
					}
					cells++
					if typ, _ := f.GetCellType(sheet, ref); typ != excelize.CellTypeSharedString && typ != excelize.CellTypeInlineString {
						t.Errorf("%s!%s holds %q as cell type %v, want a string", sheet, ref, v, typ)
					}
				}
				if strings.ContainsAny(v, "\x07\x1b") {
					t.Errorf("%s!%s holds control characters: %q", sheet, ref, v)
				}
			}
		}
	}
	if cells < 4 {
		t.Errorf("found the formula-like serials in %d cells, want each at least once", cells)
	}

	pdftotext, err := exec.LookPath("pdftotext")
	if err != nil {
		t.Log("pdftotext not installed (poppler-utils); the PDF text is not checked")
		return
	}
	text, err := exec.Command(pdftotext, filepath.Join(out, report.PDFName), "-").Output()
	if err != nil {
		t.Fatalf("pdftotext: %v", err)
	}
	if bytes.ContainsAny(text, "\x07\x1b") {
		i := bytes.IndexAny(text, "\x07\x1b")
		t.Errorf("control characters in the PDF text: %q", text[max(0, i-30):min(len(text), i+30)])
	}
	if !bytes.Contains(text, []byte("../../etc/x")) || !bytes.Contains(text, []byte("LATIN1-1")) {
		t.Errorf("the PDF lacks the serials as text")
	}
}
