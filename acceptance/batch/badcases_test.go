package batch_test

import (
	"bytes"
	"compress/gzip"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"unicode/utf16"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/logs"
	"github.com/stepgate/stepgate/metrics"
)

// badCase is one entry of the corpus table.
type badCase struct {
	name string
	// files are corpus files (in badDir); make, when set, builds the case's
	// files at run time in dir instead and may override the reason (for a
	// sub-case that depends on the system, such as running as root).
	files []string
	make  func(t *testing.T, dir string) (paths []string, reason string)
	// verdict every unit of the case must get, and a substring of its first
	// reason (the one the PDF's unit table shows).
	verdict acceptance.Verdict
	reason  string
	// verdictOf, when set, gives the verdict of the named files (base
	// names) instead of verdict: a case whose files differ.
	verdictOf map[string]acceptance.Verdict
	// check, when set, runs extra checks on each of the case's units.
	check func(t *testing.T, b *acceptance.Batch, u acceptance.UnitResult)
}

// badCases lists every case. Reader errors name the file, the line and the
// field (the layout of encoding/csv's ParseError); lines count the three
// metadata lines and the header, so data row k is on line k + 4.
func badCases() []badCase {
	return append(append(badFileCases(), badRecordCases()...), goodInDisguiseCases()...)
}

// badFileCases are the cases of the file as a whole, the header and the rows.
func badFileCases() []badCase {
	inv := acceptance.Invalid
	return []badCase{
		// The file as a whole.
		{name: "empty file", files: []string{"empty.csv"}, verdict: inv, reason: "log cannot be read: file is empty"},
		{name: "blank lines only", files: []string{"blank_lines.csv"}, verdict: inv, reason: "file holds only blank lines"},
		{name: "header only", files: []string{"header_only.csv"}, verdict: inv, reason: "the header is not followed by any data rows; at least 2 are needed"},
		{name: "comments and metadata only", files: []string{"comments_only.csv"}, verdict: inv, reason: "no header row: the file holds only comment and metadata lines"},
		{name: "no header", files: []string{"no_header.csv"}, verdict: inv, reason: "line 1: no header row: the first row \"0.000,0,0.0000,0.000\" holds numbers"},
		{name: "single sample", files: []string{"single_sample.csv"}, verdict: inv, reason: "only 1 data row; at least 2 are needed"},
		{name: "ZIP archive named .csv", files: []string{"zip_named_csv.csv"}, verdict: inv, reason: "file is a ZIP archive (perhaps a spreadsheet workbook), not a delimited text log: export it as CSV"},
		{name: "PDF named .csv", files: []string{"pdf_named_csv.csv"}, verdict: inv, reason: "file is a PDF document"},
		{name: "control byte in the header", files: []string{"control_bytes.csv"}, verdict: inv, reason: "line 2: control byte 0x01"},
		{name: "UTF-16 little-endian with BOM", make: utf16Case(false, true), verdict: inv, reason: "file is UTF-16 text (byte-order mark ff fe): save the log as UTF-8"},
		{name: "UTF-16 big-endian with BOM", make: utf16Case(true, true), verdict: inv, reason: "file is UTF-16 text (byte-order mark fe ff)"},
		{name: "UTF-16 without BOM", make: utf16Case(false, false), verdict: inv, reason: "looks like UTF-16 text without a byte-order mark"},
		{name: "gzip file named .csv", make: gzipCase, verdict: inv, reason: "file is gzip-compressed, not a text log: decompress it first"},
		{name: "binary garbage", make: binaryCase, verdict: inv, reason: "file holds binary data"},
		{name: "NUL byte in a data row", make: nulCase(104), verdict: inv, reason: "log cannot be read: file holds binary data (1 NUL byte in the first"},
		{name: "NUL byte far into the file", make: nulCase(3000), verdict: inv, reason: `line 3005, field 3: column "pos": not a number: "\x00`},
		{name: "very long line", make: longLineCase, verdict: inv, reason: "line 5: line is longer than the 1048576-byte limit"},
		{name: "very large file", make: largeFileCase, verdict: inv, reason: "file is larger than the 1073741824-byte limit"},

		// The header.
		{name: "missing time column", files: []string{"missing_time.csv"}, verdict: inv, reason: `line 4: column "t": the time column is not in the header, which has 4 columns: "time", "cmd", "pos", "effort"`},
		{name: "missing command column", files: []string{"missing_command.csv"}, verdict: inv, reason: `column "cmd": the command column is not in the header`},
		{name: "missing response column", files: []string{"missing_response.csv"}, verdict: inv, reason: `column "pos": the response column is not in the header`},
		{name: "duplicate column names", files: []string{"duplicate_column.csv"}, verdict: inv, reason: `line 4, field 4: column "pos": appears 2 times in the header (fields 3, 4)`},
		{name: "wrong delimiter", files: []string{"wrong_delimiter.csv"}, verdict: inv, reason: "the header row has no comma, semicolon or tab between column names"},
		{name: "mixed delimiters in the header", files: []string{"mixed_delimiters_header.csv"}, verdict: inv, reason: "the header row mixes delimiters (2 commas, 2 semicolons, 0 tabs); set the delimiter explicitly"},
		{name: "mixed delimiters in the rows", files: []string{"mixed_delimiters_rows.csv"}, verdict: inv, reason: "line 125: row has 1 field but the header has 4; the row holds semicolon characters but the header is delimited by comma"},
		{name: "decimal comma the spec does not announce", files: []string{"decimal_comma.csv"}, verdict: inv, reason: `line 5, field 1: column "t": not a number: "0,000" (the file may use decimal commas: set log.decimal_comma: true)`},

		// The rows.
		{name: "text in a numeric field", files: []string{"text_in_number.csv"}, verdict: inv, reason: `line 85, field 3: column "pos": not a number: "n/a"`},
		{name: "NaN", files: []string{"nan.csv"}, verdict: inv, reason: `line 85, field 3: column "pos": NaN is not a measurement`},
		{name: "+Inf", files: []string{"plus_inf.csv"}, verdict: inv, reason: `column "pos": "+Inf" is not a measurement: values must be finite`},
		{name: "-Inf", files: []string{"minus_inf.csv"}, verdict: inv, reason: `column "pos": "-Inf" is not a measurement: values must be finite`},
		{name: "NaN in the effort column", files: []string{"nan_effort.csv"}, verdict: inv, reason: `line 85, field 4: column "effort": NaN is not a measurement`},
		{name: "empty cell", files: []string{"empty_cell.csv"}, verdict: inv, reason: `line 85, field 3: column "pos": empty value`},
		{name: "number out of range", files: []string{"out_of_range.csv"}, verdict: inv, reason: `"1e999" is out of range for a 64-bit float`},
		{name: "hexadecimal number", files: []string{"hex_number.csv"}, verdict: inv, reason: `line 85, field 2: column "cmd": not a number: "0xA"`},
		{name: "date in the time column", files: []string{"date_in_time.csv"}, verdict: inv, reason: `line 6, field 1: column "t": not a timestamp: "0.005"`},
		{name: "row with fewer fields", files: []string{"fewer_fields.csv"}, verdict: inv, reason: "line 105: row has 3 fields but the header has 4"},
		{name: "row with extra fields", files: []string{"extra_fields.csv"}, verdict: inv, reason: "line 105: row has 5 fields but the header has 4"},
		{name: "comment among the data", files: []string{"comment_in_data.csv"}, verdict: inv, reason: "comment lines are allowed only before the header"},
		{name: "conflicting metadata", files: []string{"conflicting_metadata.csv"}, verdict: inv, reason: `line 4: metadata "serial" is "BAD-META-2" here but "BAD-META" on line 1`},
		{name: "repeated time stamp", files: []string{"repeated_time.csv"}, verdict: inv, reason: `line 106, field 1: column "t": time 0.500 repeats the time 0.500 on line 105`},
		{name: "decreasing time stamp", files: []string{"decreasing_time.csv"}, verdict: inv, reason: `line 106, field 1: column "t": time 0.495 is before the time 0.500 on line 105`},
		{name: "truncated mid-line", files: []string{"truncated_mid_line.csv"}, verdict: inv, reason: "line 156: row has 3 fields but the header has 4; the file looks truncated"},
		{name: "truncated mid-number", files: []string{"truncated_mid_number.csv"}, verdict: inv, reason: `line 156, field 4: column "effort": empty value; the file may be truncated`},
	}
}

// badRecordCases are the cases of the sampling, the steps and the response.
func badRecordCases() []badCase {
	inv, fail, pass := acceptance.Invalid, acceptance.Fail, acceptance.Pass
	return []badCase{
		// Sampling. A gap of 51 sample periods inside the step would have
		// every crossing interpolated across 0.255 s with no data: the step
		// is not measured. Jitter of ±40 % of the period is a rig logging
		// from a non-real-time task: measured normally.
		{name: "large gap in time", files: []string{"time_gap.csv"}, verdict: inv,
			reason: "time gap of 0.255 s at 0.555 s (no sample between 0.3 s and 0.555 s), 51× the median sample period of 0.005 s",
			check: func(t *testing.T, _ *acceptance.Batch, u acceptance.UnitResult) {
				for _, n := range metrics.Names {
					if n != metrics.StepSize && u.Steps[0].Metrics.Get(n).OK {
						t.Errorf("%s measured across the gap: %v", n, u.Steps[0].Metrics.Get(n))
					}
				}
			}},
		{name: "irregular sampling", files: []string{"irregular_sampling.csv"}, verdict: pass,
			check: closeToClosedForm(0.003, 0.05)},
		{name: "time in ms read as seconds", files: []string{"time_in_ms.csv"}, verdict: inv, reason: "the mean sample period is 5 s (time read in s), outside the 1e-06 s to 0.5 s of a step test"},

		// Steps.
		{name: "no step", files: []string{"no_step.csv"}, verdict: inv, reason: "no step found: the command never changed by min_change 0.5 mm"},
		{name: "step on the last sample", files: []string{"step_on_last_sample.csv"}, verdict: inv, reason: "step has only 1 sample (0 s); 10 are needed to measure it"},
		{name: "steps too close to settle", files: []string{"steps_too_close.csv"}, verdict: inv, reason: "record ends 0.045 s after the step, before the response settles",
			check: func(t *testing.T, _ *acceptance.Batch, u acceptance.UnitResult) {
				if len(u.Steps) != 2 || u.Steps[0].Verdict != acceptance.Invalid || u.Steps[1].Verdict != acceptance.Invalid {
					t.Errorf("want two invalid steps, got %d: %+v", len(u.Steps), u.Steps)
				}
			}},
		{name: "record ends before settling", files: []string{"record_ends_early.csv"}, verdict: inv, reason: "record ends 0.12 s after the step, before the response settles"},

		// The response. A unit that does not reach its command fails on the
		// steady-state error; the timing metrics stay unmeasured with the
		// reason.
		{name: "response never moves", files: []string{"never_moves.csv"}, verdict: fail, reason: "steady_state_error 10 > 0.1 at step 1",
			check: unmeasured(metrics.RiseTime, "response moved only 0 (from 0 to 0), within the ±0.2 settling band: no transition to time")},
		{name: "response moves the wrong way", files: []string{"wrong_direction.csv"}, verdict: fail, reason: "steady_state_error 20 > 0.1 at step 1",
			check: unmeasured(metrics.Overshoot, "against the command change of 10")},
		{name: "response stuck at a rail", files: []string{"stuck_at_rail.csv"}, verdict: fail, reason: "steady_state_error 3.5 > 0.1 at step 1"},
		{name: "sensor saturated at its rail", files: []string{"rail_saturated.csv"}, verdict: fail, reason: "steady_state_error 90 > 0.1 at step 1"},
		// A single-sample spike that sets the peak is, in the record, an
		// overshoot: the data show it, so the unit fails.
		{name: "spike at the peak", files: []string{"spike_at_peak.csv"}, verdict: fail, reason: "overshoot_pct 60 > 12 at step 1"},
		// A single-sample spike in the final window is rejected by the MAD
		// filter (the final value stays 10), but the record leaves the
		// settling band there, 0.65 s after the step: the settling time the
		// data show exceeds the limit.
		{name: "spike in the final window", files: []string{"spike_in_final_window.csv"}, verdict: fail, reason: "settling_time_s 1.104 > 0.5 at step 1",
			check: func(t *testing.T, _ *acceptance.Batch, u acceptance.UnitResult) {
				if v := u.Steps[0].Metrics.Get(metrics.FinalValue); !v.OK || math.Abs(v.V-goodFinal) > 1e-3 {
					t.Errorf("final value %v: the spike was not rejected", v)
				}
			}},
		{name: "noise larger than the band", files: []string{"noisy.csv"}, verdict: fail, reason: "settling_time_s > 0.5 at step 1: still outside the ±2 % band 1.245 s after the step"},
		{name: "sustained oscillation", files: []string{"oscillating.csv"}, verdict: fail, reason: "settling_time_s > 0.5 at step 1: still outside the ±2 % band"},
	}
}

// goodInDisguiseCases are the cases of good data in another dress, traceability and the file system.
func goodInDisguiseCases() []badCase {
	inv, fail, pass := acceptance.Invalid, acceptance.Fail, acceptance.Pass
	return []badCase{
		// Good data in another dress: they pass, with the good log's metrics.
		{name: "CRLF line ends and a byte-order mark", files: []string{"crlf_bom.csv"}, verdict: pass, check: sameStepsAsGood},
		{name: "quoted header", files: []string{"quoted_header.csv"}, verdict: pass, check: sameStepsAsGood},
		{name: "impossible date in metadata", files: []string{"bad_started_at.csv"}, verdict: pass,
			check: func(t *testing.T, b *acceptance.Batch, u acceptance.UnitResult) {
				if b.ReportDate != "2026-11-30" {
					t.Errorf("report date %q, want the good log's 2026-11-30, not 2026-13-45", b.ReportDate)
				}
			}},

		// Traceability.
		{name: "one log filed twice", files: []string{"duplicate_serial_a.csv", "duplicate_serial_b.csv"}, verdict: inv,
			verdictOf: map[string]acceptance.Verdict{"duplicate_serial_a.csv": pass},
			reason:    `unit id "DUP-0001": this file is a copy of ` + filepath.Join(badDir, "duplicate_serial_a.csv"),
			check:     chainCheck(1, 2)},
		{name: "a retest", files: []string{"retest_1.csv", "retest_2.csv"}, verdict: fail,
			verdictOf: map[string]acceptance.Verdict{"retest_2.csv": pass},
			reason:    "settling_time_s > 0.5 at step 1", check: chainCheck(2, 1)},
		{name: "two logs of one serial with one start time", files: []string{"clash_a.csv", "clash_b.csv"}, verdict: fail,
			verdictOf: map[string]acceptance.Verdict{"clash_a.csv": inv},
			check: func(t *testing.T, b *acceptance.Batch, u acceptance.UnitResult) {
				if last(u.Reasons).Kind != acceptance.DuplicateUnit || !strings.Contains(last(u.Reasons).Text, `unit id "CLASH-0001" also appears in `) {
					t.Errorf("%s: last reason %q, want the clash", u.File, last(u.Reasons).Text)
				}
			}},

		// The file system.
		{name: "directory symlink loop", make: loopCase, verdict: inv, reason: "too many levels of symbolic links"},
		{name: "unreadable file", make: unreadableCase, verdict: inv},
		{name: "named pipe", make: fifoCase, verdict: inv, reason: "is a named pipe (FIFO), not a regular file"},
	}
}

// utf16Case encodes the good log as UTF-16 (RFC 2781 §3.2: byte-order
// mark FE FF big-endian, FF FE little-endian).
func utf16Case(bigEndian, bom bool) func(*testing.T, string) ([]string, string) {
	return func(t *testing.T, dir string) ([]string, string) {
		units := utf16.Encode([]rune(string(goodBytes(t))))
		if bom {
			units = append([]uint16{0xfeff}, units...)
		}
		var b []byte
		for _, u := range units {
			if bigEndian {
				b = append(b, byte(u>>8), byte(u))
			} else {
				b = append(b, byte(u), byte(u>>8))
			}
		}
		return []string{writeCase(t, filepath.Join(dir, "utf16.csv"), b)}, ""
	}
}

// gzipCase compresses the good log (gzip member header 1f 8b, RFC 1952
// §2.3.1) under a .csv name.
func gzipCase(t *testing.T, dir string) ([]string, string) {
	var b bytes.Buffer
	zw := gzip.NewWriter(&b)
	zw.Write(goodBytes(t))
	zw.Close()
	return []string{writeCase(t, filepath.Join(dir, "gzip.csv"), b.Bytes())}, ""
}

// binaryCase writes 4 KiB of seeded pseudo-random bytes.
func binaryCase(t *testing.T, dir string) ([]string, string) {
	r := rand.New(rand.NewPCG(5, 5))
	b := make([]byte, 4096)
	for i := range b {
		b[i] = byte(r.Uint32())
	}
	b[0], b[1] = 'x', 0 // no magic number of a known format; a NUL early
	return []string{writeCase(t, filepath.Join(dir, "binary.csv"), b)}, ""
}

// nulCase puts a NUL byte in the response of data row k of the good log,
// held at its final level for as many rows as needed. Within the first
// read (64 KiB) the reader sees a binary file; farther in, the NUL is
// caught in the field it spoils.
func nulCase(k int) func(*testing.T, string) ([]string, string) {
	return func(t *testing.T, dir string) ([]string, string) {
		var b strings.Builder
		// A serial of its own: the unit keeps its identity when its rows
		// cannot be read, and must not duplicate the good log's.
		b.Write(bytes.Replace(goodBytes(t), []byte("GOOD-0001"), []byte("NUL-0001"), 1))
		for i := 300; i <= k; i++ {
			fmt.Fprintf(&b, "%.3f,10,10.0000,0.000\n", float64(i)*sampleStep)
		}
		lines := strings.SplitAfter(b.String(), "\n")
		f := strings.SplitN(lines[k+4], ",", 3)
		lines[k+4] = f[0] + "," + f[1] + ",\x00" + f[2]
		return []string{writeCase(t, filepath.Join(dir, "nul.csv"), []byte(strings.Join(lines, "")))}, ""
	}
}

// longLineCase writes the good log's header followed by a 32 MiB line.
func longLineCase(t *testing.T, dir string) ([]string, string) {
	t.Helper()
	g := bytes.Replace(goodBytes(t), []byte("GOOD-0001"), []byte("LONG-0001"), 1)
	head := g[:bytes.Index(g, []byte("\n0.000"))+1]
	p := filepath.Join(dir, "long_line.csv")
	f, err := os.Create(p)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	f.Write(head)
	chunk := bytes.Repeat([]byte("0.1,"), 1<<16)
	for i := 0; i < 128; i++ {
		if _, err := f.Write(chunk); err != nil {
			t.Fatal(err)
		}
	}
	f.Write([]byte("0\n"))
	return []string{p}, ""
}

// largeFileCase makes a sparse file one byte over the reader's 1 GiB
// limit: it takes no disk space, and the reader refuses it from its size
// without reading it.
func largeFileCase(t *testing.T, dir string) ([]string, string) {
	p := writeCase(t, filepath.Join(dir, "large.csv"), goodBytes(t))
	if err := os.Truncate(p, logs.DefaultMaxBytes+1); err != nil {
		t.Skipf("cannot make a sparse file: %v", err)
	}
	return []string{p}, ""
}

// loopCase makes a directory with a link back to itself, a link to its
// parent and a file link to itself, next to one good log, and finds the
// logs with FindLogs as a run does: the directory loops end, the good log
// is found once (so it is not flagged as a duplicate serial), and the
// looping file link is a unit that cannot be read. The good copy passes;
// the table's verdict applies to the looping link, checked here.
func loopCase(t *testing.T, dir string) ([]string, string) {
	d := filepath.Join(dir, "logs")
	os.MkdirAll(d, 0o755)
	writeCase(t, filepath.Join(d, "inside.csv"), bytes.Replace(goodBytes(t), []byte(goodSerial), []byte("LOOP-0001"), 1))
	for name, target := range map[string]string{"again": ".", "up": "..", "self.csv": "self.csv"} {
		if err := os.Symlink(target, filepath.Join(d, name)); err != nil {
			t.Skipf("symbolic links unavailable: %v", err)
		}
	}
	files, err := logs.FindLogs([]string{d}, nil)
	if err != nil {
		t.Fatalf("FindLogs: %v", err)
	}
	want := []string{filepath.Join(d, "inside.csv"), filepath.Join(d, "self.csv")}
	if strings.Join(files, "\n") != strings.Join(want, "\n") {
		t.Fatalf("FindLogs = %q, want %q", files, want)
	}
	spec := loadCorpusSpec(t, corpusSpec)
	b := runBatch(t, spec, files)
	if b.Units[0].Unit != "LOOP-0001" || b.Units[0].Verdict != acceptance.Pass {
		t.Errorf("log inside the looping directory: %s %s %q", b.Units[0].Unit, b.Units[0].Verdict, b.Units[0].Reasons)
	}
	return files[1:], ""
}

// unreadableCase makes a file that cannot be read. Permission bits stop
// every user but root (POSIX.1-2017 §4.5, file access permissions, with
// appropriate privileges overriding them); when they do not stop this
// process, a link to a file that does not exist stands in.
func unreadableCase(t *testing.T, dir string) ([]string, string) {
	p := writeCase(t, filepath.Join(dir, "unreadable.csv"), goodBytes(t))
	if err := os.Chmod(p, 0); err != nil {
		t.Fatal(err)
	}
	if f, err := os.Open(p); err != nil {
		return []string{p}, "unreadable.csv: permission denied"
	} else {
		f.Close()
	}
	t.Logf("permission bits do not stop this process (root); using a dangling link instead")
	os.Remove(p)
	if err := os.Symlink(filepath.Join(dir, "gone.csv"), p); err != nil {
		t.Skipf("symbolic links unavailable: %v", err)
	}
	return []string{p}, "unreadable.csv: no such file or directory"
}

// fifoCase makes a named pipe with a log name, which the reader must refuse
// without opening it (an open would wait for a writer for ever).
func fifoCase(t *testing.T, dir string) ([]string, string) {
	p := filepath.Join(dir, "pipe.csv")
	if err := exec.Command("mkfifo", p).Run(); err != nil {
		t.Skipf("mkfifo unavailable: %v", err)
	}
	return []string{p}, ""
}

// goodBytes returns the good log's bytes.
func goodBytes(t *testing.T) []byte {
	t.Helper()
	data, err := os.ReadFile(filepath.Join(badDir, goodFile))
	if err != nil {
		t.Fatal(err)
	}
	return data
}

// writeCase writes one run-time case file.
func writeCase(t *testing.T, path string, data []byte) string {
	t.Helper()
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// last returns the last of rs, or the zero Reason.
func last(rs []acceptance.Reason) acceptance.Reason {
	if len(rs) == 0 {
		return acceptance.Reason{}
	}
	return rs[len(rs)-1]
}

// chainCheck checks a case whose files are one serial: it has attempts
// attempts, and with the good log (one serial passing at its first
// attempt) the batch has 2 serials, one retested when attempts > 1, and
// firstPass of them passing at the first attempt. The yields are the
// common-practice definitions (common practice, no source): first-pass
// yield counts serials whose first attempt passed, final yield serials
// whose latest attempt passed; both of the batch's serials end passing.
func chainCheck(attempts, firstPass int) func(t *testing.T, b *acceptance.Batch, u acceptance.UnitResult) {
	return func(t *testing.T, b *acceptance.Batch, u acceptance.UnitResult) {
		t.Helper()
		s := b.Summary
		if u.Attempts != attempts || u.Attempt < 1 || u.Attempt > attempts {
			t.Errorf("%s: attempt %d of %d, want one of %d", u.File, u.Attempt, u.Attempts, attempts)
		}
		if s.Serials != 2 || s.Retested != min(attempts-1, 1) {
			t.Errorf("serials %d, retested %d; want 2 and %d", s.Serials, s.Retested, min(attempts-1, 1))
		}
		fp, fy := 100*float64(firstPass)/2, 100.0
		if s.FirstPassYieldPct == nil || *s.FirstPassYieldPct != fp || s.FinalYieldPct == nil || *s.FinalYieldPct != fy {
			t.Errorf("yields %v, %v; want %v %%, %v %%", deref(s.FirstPassYieldPct), deref(s.FinalYieldPct), fp, fy)
		}
	}
}

// deref is *p, or NaN for nil.
func deref(p *float64) float64 {
	if p == nil {
		return math.NaN()
	}
	return *p
}
