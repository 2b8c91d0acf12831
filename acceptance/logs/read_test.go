package logs

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"
	"testing/iotest"
	"unicode/utf16"
)

// Sources for the byte-level facts these tests rely on:
//   - CSV layout, CRLF line ends and double-quoted names: RFC 4180 §2.
//   - UTF-8 byte-order mark EF BB BF: RFC 3629 §6.
//   - UTF-16 byte-order marks FE FF (big-endian) and FF FE (little-endian):
//     RFC 2781 §3.2.
//   - gzip member header ID1 = 0x1f, ID2 = 0x8b: RFC 1952 §2.3.1.
//   - ZIP local file header signature "PK\x03\x04" (0x04034b50): PKWARE
//     APPNOTE.TXT §4.3.7.
//   - SHA-256: FIPS 180-4; the reference implementation is Go's
//     crypto/sha256.
//   - Number conversion: strconv.ParseFloat (see number_test.go).
// Inputs without a source are layouts this package defines (doc.go).

// base is the Format most cases read with.
var base = Format{Time: "time", Command: "command", Response: "position"}

func withEffort(f Format) Format { f.Effort = "effort"; return f }

func withComma(f Format) Format { f.DecimalComma = true; return f }

func withScale(f Format, s float64) Format { f.TimeScale = s; return f }

// utf16Bytes encodes s as UTF-16 in the given byte order, with or without
// a byte-order mark (RFC 2781 §3.2: BOM FE FF big-endian, FF FE little-endian).
func utf16Bytes(s string, bigEndian, bom bool) string {
	var b []byte
	units := utf16.Encode([]rune(s))
	if bom {
		units = append([]uint16{0xfeff}, units...)
	}
	for _, u := range units {
		if bigEndian {
			b = append(b, byte(u>>8), byte(u))
		} else {
			b = append(b, byte(u), byte(u>>8))
		}
	}
	return string(b)
}

// parsed is the expected result of a successful read.
type parsed struct {
	meta  map[string]string
	delim byte
	time  []float64
	cmd   []float64
	resp  []float64
	eff   []float64 // nil when the Format reads no effort
}

// ref converts the decimal texts with strconv.ParseFloat, the reference.
func ref(texts ...string) []float64 {
	out := make([]float64, len(texts))
	for i, s := range texts {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			panic(err)
		}
		out[i] = v
	}
	return out
}

func TestReadAccepts(t *testing.T) {
	for _, c := range readAcceptCases() {
		t.Run(c.name, func(t *testing.T) { checkReadAccept(t, c) })
	}
}

// checkReadAccept checks one case of TestReadAccepts.
func checkReadAccept(t *testing.T, c readAcceptCase) {
	t.Helper()
	lg, err := Read(strings.NewReader(c.in), "log.csv", c.f)
	if err != nil {
		t.Fatalf("Read: %v", err)
	}
	w := c.want
	if lg.Path != "log.csv" || lg.Delimiter != w.delim || lg.Rows != len(w.time) || lg.Size != int64(len(c.in)) {
		t.Errorf("Path %q, Delimiter %q, Rows %d, Size %d; want log.csv, %q, %d, %d",
			lg.Path, lg.Delimiter, lg.Rows, lg.Size, w.delim, len(w.time), len(c.in))
	}
	if !reflect.DeepEqual(lg.Metadata, w.meta) {
		t.Errorf("Metadata %v, want %v", lg.Metadata, w.meta)
	}
	sum := sha256.Sum256([]byte(c.in))
	if lg.SHA256 != hex.EncodeToString(sum[:]) {
		t.Errorf("SHA256 %s, crypto/sha256 gives %x", lg.SHA256, sum)
	}
	checkColumn(t, "time", lg.Trace.Time, w.time)
	checkColumn(t, "command", lg.Trace.Command, w.cmd)
	checkColumn(t, "response", lg.Trace.Response, w.resp)
	if w.eff == nil && lg.Trace.Effort != nil {
		t.Errorf("Effort %v, want nil", lg.Trace.Effort)
	}
	if w.eff != nil {
		checkColumn(t, "effort", lg.Trace.Effort, w.eff)
	}
}

// readAcceptCase is one case of TestReadAccepts.
type readAcceptCase struct {
	name string
	in   string
	f    Format
	want parsed
}

// readAcceptCases are the cases of TestReadAccepts.
func readAcceptCases() []readAcceptCase {
	simple := parsed{
		meta: map[string]string{}, delim: ',',
		time: ref("0", "0.001", "0.002"), cmd: ref("0", "1", "1"), resp: ref("0", "0.25", "0.5"),
	}
	return []readAcceptCase{
		{"comma", "time,command,position\n0,0,0\n0.001,1,0.25\n0.002,1,0.5\n", base, simple},
		{"semicolon", "time;command;position\n0;0;0\n0.001;1;0.25\n0.002;1;0.5\n", base,
			func() parsed { p := simple; p.delim = ';'; return p }()},
		{"tab", "time\tcommand\tposition\n0\t0\t0\n0.001\t1\t0.25\n0.002\t1\t0.5\n", base,
			func() parsed { p := simple; p.delim = '\t'; return p }()},
		{"forced semicolon", "time;command;position\n0;0;0\n0.001;1;0.25\n0.002;1;0.5\n",
			func() Format { f := base; f.Delimiter = ';'; return f }(),
			func() parsed { p := simple; p.delim = ';'; return p }()},
		{"decimal comma", "time;command;position\n0,000;0,0;0,00\n0,001;1,0;0,25\n0,002;1;0,5\n", withComma(base),
			func() parsed { p := simple; p.delim = ';'; return p }()},
		{"decimal comma, tab", "time\tcommand\tposition\n0\t0\t0\n0,001\t1\t0,25\n0,002\t1\t0,5\n", withComma(base),
			func() parsed { p := simple; p.delim = '\t'; return p }()},
		{"CRLF and byte-order mark", "\xef\xbb\xbftime,command,position\r\n0,0,0\r\n0.001,1,0.25\r\n0.002,1,0.5\r\n", base, simple},
		{"no newline at end", "time,command,position\n0,0,0\n0.001,1,0.25\n0.002,1,0.5", base, simple},
		{"blank lines", "\n\ntime,command,position\n\n0,0,0\n   \n0.001,1,0.25\r\n\r\n \t \n0.002,1,0.5\n\n\n", base, simple},
		{"quoted and padded names, padded values", ` "time" ; "command";position ` + "\n 0 ; 0 ;0\n0.001; 1 ; 0.25\n0.002;\"1\";0.5\n", base,
			func() parsed { p := simple; p.delim = ';'; return p }()},
		{"metadata and comments",
			"# serial: VD25-000123\n#Station : EOL-2 \n# operator:  A. Tester\n# started_at: 2025-03-04T09:12:00Z\n" +
				"# free comment without a key\n# 12:00 is not a key either\n#\n# serial: VD25-000123\n" +
				"time,command,position\n0,0,0\n0.001,1,0.25\n0.002,1,0.5\n", base,
			parsed{meta: map[string]string{"serial": "VD25-000123", "station": "EOL-2", "operator": "A. Tester",
				"started_at": "2025-03-04T09:12:00Z"}, delim: ',',
				time: simple.time, cmd: simple.cmd, resp: simple.resp}},
		{"effort present", "time,command,position,effort\n0,0,0,0\n0.001,1,0.25,3.5\n0.002,1,0.5,-1e-2\n", withEffort(base),
			func() parsed { p := simple; p.eff = ref("0", "3.5", "-1e-2"); return p }()},
		{"effort in the file, not read", "time,command,position,effort\n0,0,0,x\n0.001,1,0.25,\n0.002,1,0.5,n/a\n", base, simple},
		{"other columns hold text and repeat", "status,time,status,command,position\nOK,0,,0,0\nOK,0.001,a b,1,0.25\nFAIL,0.002,x,1,0.5\n", base, simple},
		{"columns in another order", "position,time,command\n0,0,0\n0.25,0.001,1\n0.5,0.002,1\n", base, simple},
		{"time in ms", "time,command,position\n0,0,0\n1,1,0.25\n2,1,0.5\n", withScale(base, 1e-3), simple},
		{"time in ms with fractions", "time,command,position\n12.5,0,0\n13.7,1,0.25\n1e2,1,0.5\n", withScale(base, 1e-3),
			parsed{meta: map[string]string{}, delim: ',', time: ref("12.5e-3", "13.7e-3", "1e-1"), cmd: simple.cmd, resp: simple.resp}},
		{"time in us", "time,command,position\n0,0,0\n1000,1,0.25\n2000.0,1,0.5\n", withScale(base, 1e-6), simple},
		{"time in us, decimal comma", "time;command;position\n0;0;0\n1000;1;0,25\n2000,0;1;0,5\n", withComma(withScale(base, 1e-6)),
			func() parsed { p := simple; p.delim = ';'; return p }()},
		{"time scale not a power of ten", "time,command,position\n0,0,0\n1,1,0.25\n2,1,0.5\n", withScale(base, 1.0/60),
			parsed{meta: map[string]string{}, delim: ',', time: []float64{0, 1.0 / 60, 2 * (1.0 / 60)}, cmd: simple.cmd, resp: simple.resp}},
		{"negative start time, exponents, signs", "time,command,position\n-1e-3,+0,-0.0\n0E0,1.0e0,2.5E-1\n.001,1.,.5\n", base,
			parsed{meta: map[string]string{}, delim: ',', time: ref("-0.001", "0", "0.001"), cmd: simple.cmd, resp: ref("-0", "0.25", "0.5")}},
		{"trailing delimiter on every line", "time,command,position,\n0,0,0,\n0.001,1,0.25,\n0.002,1,0.5,\n", base, simple},
		{"two rows", "time,command,position\n0,0,0\n0.001,1,0.25\n", base,
			parsed{meta: map[string]string{}, delim: ',', time: ref("0", "0.001"), cmd: ref("0", "1"), resp: ref("0", "0.25")}},
	}
}

func checkColumn(t *testing.T, name string, got, want []float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Errorf("%s has %d values, want %d", name, len(got), len(want))
		return
	}
	for i := range got {
		if !sameFloat(got[i], want[i]) {
			t.Errorf("%s[%d] = %v, want %v", name, i, got[i], want[i])
		}
	}
}

func TestFormatValidate(t *testing.T) {
	cases := []struct {
		name   string
		f      Format
		phrase string // "" = valid
	}{
		{"minimal", base, ""},
		{"full", Format{Time: "t", Command: "c", Response: "r", Effort: "e", TimeScale: 1e-3, DecimalComma: true, Delimiter: ';', MaxLineBytes: 10, MaxBytes: 100}, ""},
		{"no time", Format{Command: "c", Response: "r"}, "time column name is empty"},
		{"no response", Format{Time: "t", Command: "c"}, "response column name is empty"},
		{"same names", Format{Time: "t", Command: "x", Response: "x"}, `command and response columns are both named "x"`},
		{"effort named like time", Format{Time: "t", Command: "c", Response: "r", Effort: "t"}, "time and effort"},
		{"negative scale", withScale(base, -1), "not a positive finite number"},
		{"NaN scale", withScale(base, math.NaN()), "not a positive finite number"},
		{"comma delimiter with decimal comma", func() Format { f := withComma(base); f.Delimiter = ','; return f }(), "cannot be delimited by commas"},
		{"unknown delimiter", func() Format { f := base; f.Delimiter = '|'; return f }(), "not a comma, semicolon or tab"},
		{"negative line limit", func() Format { f := base; f.MaxLineBytes = -1; return f }(), "negative"},
		{"negative size limit", func() Format { f := base; f.MaxBytes = -1; return f }(), "negative"},
	}
	for _, c := range cases {
		err := c.f.Validate()
		switch {
		case c.phrase == "" && err != nil:
			t.Errorf("%s: %v", c.name, err)
		case c.phrase != "" && (err == nil || !errors.Is(err, ErrFormat) || !strings.Contains(err.Error(), c.phrase)):
			t.Errorf("%s: error %v, want ErrFormat with %q", c.name, err, c.phrase)
		}
	}
	if _, err := Read(strings.NewReader("x"), "x.csv", Format{}); !errors.Is(err, ErrFormat) || !strings.Contains(err.Error(), "x.csv") {
		t.Errorf("Read with an invalid Format: %v", err)
	}
}

// genLog writes a log of n rows with a 4-column layout and optional padding
// columns, for stream and size tests.
func genLog(n int, pad int) []byte {
	var b bytes.Buffer
	b.WriteString("# serial: GEN-1\ntime,command,position,effort")
	for i := range pad {
		fmt.Fprintf(&b, ",pad%d", i)
	}
	b.WriteByte('\n')
	for i := range n {
		cmd := 0.0
		if i >= n/4 {
			cmd = 10
		}
		fmt.Fprintf(&b, "%.4f,%.1f,%.6f,%.3f", float64(i)*0.001, cmd, cmd*(1-math.Exp(-float64(i)/50)), 0.5*cmd)
		for range pad {
			b.WriteString(",0.123456789")
		}
		b.WriteByte('\n')
	}
	return b.Bytes()
}

func TestReadStreams(t *testing.T) {
	// The result must not depend on how the bytes arrive: one byte per
	// read, reads that end with io.EOF alongside data, and lines longer
	// than the first buffer.
	f := withEffort(base)
	inputs := map[string][]byte{
		"short":      genLog(300, 0),
		"long lines": genLog(40, 20000), // ~220 KB lines, past the 64 KiB first buffer
	}
	for name, data := range inputs {
		want, err := Read(bytes.NewReader(data), "x.csv", f)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		sum := sha256.Sum256(data)
		if want.SHA256 != hex.EncodeToString(sum[:]) || want.Size != int64(len(data)) {
			t.Errorf("%s: SHA256 %s size %d, crypto/sha256 gives %x over %d bytes", name, want.SHA256, want.Size, sum, len(data))
		}
		readers := map[string]io.Reader{
			"one byte": iotest.OneByteReader(bytes.NewReader(data)),
			"data+EOF": iotest.DataErrReader(bytes.NewReader(data)),
			"half":     iotest.HalfReader(bytes.NewReader(data)),
		}
		for rname, r := range readers {
			got, err := Read(r, "x.csv", f)
			if err != nil {
				t.Fatalf("%s, %s: %v", name, rname, err)
			}
			if !reflect.DeepEqual(got, want) {
				t.Errorf("%s, %s: result differs from a plain read", name, rname)
			}
		}
		// Without the digest the log is the same but for its SHA256.
		bare, err := NewReader(f).WithoutDigest().Read(bytes.NewReader(data), "x.csv")
		if err != nil {
			t.Fatalf("%s, without digest: %v", name, err)
		}
		if bare.SHA256 != "" {
			t.Errorf("%s, without digest: SHA256 %q, want none", name, bare.SHA256)
		}
		bare.SHA256 = want.SHA256
		if !reflect.DeepEqual(bare, want) {
			t.Errorf("%s, without digest: result differs from a plain read", name)
		}
	}
	// A failing reader's error is passed on, wrapped with the file name.
	boom := errors.New("device unplugged")
	r := io.MultiReader(bytes.NewReader(genLog(10, 0)), iotest.ErrReader(boom))
	if _, err := Read(r, "x.csv", f); !errors.Is(err, boom) || !strings.Contains(err.Error(), "x.csv") {
		t.Errorf("reader failure: %v", err)
	}
}

func TestReaderReuse(t *testing.T) {
	// One Reader over many files gives the same results as fresh ones,
	// and a failed file leaves no trace in the next.
	f := withEffort(base)
	rd := NewReader(f)
	files := [][]byte{genLog(500, 0), []byte("time,command,position,effort\n0,0,0,0\n0,1,1,1\n"), genLog(20, 3), genLog(1000, 0)}
	for i, data := range files {
		got, gotErr := rd.Read(bytes.NewReader(data), "x.csv")
		want, wantErr := Read(bytes.NewReader(data), "x.csv", f)
		if fmt.Sprint(gotErr) != fmt.Sprint(wantErr) || !reflect.DeepEqual(got, want) {
			t.Errorf("file %d: reused Reader gives %v, %v; a fresh one %v, %v", i, got != nil, gotErr, want != nil, wantErr)
		}
	}
	// Columns are separate slices: appending to one leaves the others alone.
	lg, err := rd.Read(bytes.NewReader(genLog(10, 0)), "x.csv")
	if err != nil {
		t.Fatal(err)
	}
	cmd0 := lg.Trace.Command[0]
	_ = append(lg.Trace.Time, 99)
	if lg.Trace.Command[0] != cmd0 {
		t.Error("appending to Time overwrote Command")
	}
}

func TestReadAllocations(t *testing.T) {
	// The numeric path allocates nothing per row: a file of 20 times the
	// rows costs the same number of allocations.
	rd := NewReader(withEffort(base))
	count := func(data []byte) float64 {
		r := bytes.NewReader(data)
		return testing.AllocsPerRun(5, func() {
			r.Reset(data)
			if _, err := rd.Read(r, "x.csv"); err != nil {
				t.Fatal(err)
			}
		})
	}
	small, large := count(genLog(500, 0)), count(genLog(10000, 0))
	if small != large {
		t.Errorf("allocations: %v for 500 rows, %v for 10000 rows; want equal", small, large)
	}
}

func TestReadFile(t *testing.T) {
	// Sample logs shipped in testdata/logs (demo data, see its README).
	cases := []struct {
		file  string
		f     Format
		rows  int
		delim byte
		meta  map[string]string
		t1    string // second time value, in the file's units
	}{
		{"vd25-000123.csv", withEffort(base), 1000, ',', map[string]string{
			"serial": "VD25-000123", "station": "EOL-2", "operator": "demo", "started_at": "2025-03-04T09:12:00Z"}, "0.002"},
		{"vd25-000124.csv", Format{Time: "Zeit_ms", Command: "Sollwert", Response: "Istwert", TimeScale: 1e-3, DecimalComma: true},
			400, ';', map[string]string{"serial": "VD25-000124", "station": "EOL-3"}, "5e-3"},
	}
	for _, c := range cases {
		path := filepath.Join("..", "..", "testdata", "logs", c.file)
		data, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		lg, err := ReadFile(path, c.f)
		if err != nil {
			t.Fatalf("%s: %v", c.file, err)
		}
		sum := sha256.Sum256(data)
		if lg.Path != path || lg.Rows != c.rows || lg.Delimiter != c.delim || lg.Size != int64(len(data)) ||
			lg.SHA256 != hex.EncodeToString(sum[:]) || !reflect.DeepEqual(lg.Metadata, c.meta) {
			t.Errorf("%s: got path %q rows %d delim %q size %d sha %s meta %v", c.file, lg.Path, lg.Rows, lg.Delimiter, lg.Size, lg.SHA256, lg.Metadata)
		}
		if want := ref(c.t1)[0]; lg.Trace.Time[1] != want {
			t.Errorf("%s: second time %v s, want %v s", c.file, lg.Trace.Time[1], want)
		}
		if (c.f.Effort != "") != (lg.Trace.Effort != nil) {
			t.Errorf("%s: effort column presence %v", c.file, lg.Trace.Effort != nil)
		}
	}
}

func TestReadFileErrors(t *testing.T) {
	dir := t.TempDir()
	missing := filepath.Join(dir, "nope.csv")
	if _, err := ReadFile(missing, base); !errors.Is(err, fs.ErrNotExist) || !strings.Contains(err.Error(), missing) {
		t.Errorf("missing file: %v", err)
	}
	if _, err := ReadFile(dir, base); !errors.Is(err, ErrNotText) || !strings.Contains(err.Error(), "is a directory") {
		t.Errorf("directory: %v", err)
	}
	// A file past the size limit is refused from its size alone: this
	// sparse file is never read (reading it would take seconds).
	big := filepath.Join(dir, "big.csv")
	if err := os.WriteFile(big, []byte("time,command,position\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Truncate(big, DefaultMaxBytes+1); err != nil {
		t.Skipf("cannot make a sparse file: %v", err)
	}
	if _, err := ReadFile(big, base); !errors.Is(err, ErrTooLarge) || !strings.Contains(err.Error(), big) {
		t.Errorf("large file: %v", err)
	}
}

func TestSpecNames(t *testing.T) {
	delims := map[string]byte{"": 0, "auto": 0, "comma": ',', "Semicolon": ';', " tab ": '\t'}
	for name, want := range delims {
		if got, err := DelimiterByName(name); err != nil || got != want {
			t.Errorf("DelimiterByName(%q) = %q, %v; want %q", name, got, err, want)
		}
	}
	if _, err := DelimiterByName("pipe"); !errors.Is(err, ErrFormat) || !strings.Contains(err.Error(), `"pipe"`) {
		t.Errorf("DelimiterByName(pipe): %v", err)
	}
	// SI prefixes milli = 1e-3, micro = 1e-6 (BIPM, The International
	// System of Units, 9th ed., 2019, Table 7).
	units := map[string]float64{"": 1, "s": 1, "ms": 1e-3, "us": 1e-6, "µs": 1e-6}
	for unit, want := range units {
		if got, err := TimeScaleFor(unit); err != nil || got != want {
			t.Errorf("TimeScaleFor(%q) = %v, %v; want %v", unit, got, err, want)
		}
	}
	if _, err := TimeScaleFor("min"); !errors.Is(err, ErrFormat) || !strings.Contains(err.Error(), `"min"`) {
		t.Errorf("TimeScaleFor(min): %v", err)
	}
}

// An effort column named by the spec but absent from a log is optional: the
// log is read without effort (the spec documents signals.effort as optional).
func TestReadOptionalEffortMissing(t *testing.T) {
	lg, err := Read(strings.NewReader("time,command,position\n0,0,0\n1,1,1\n"), "no-effort.csv",
		Format{Time: "time", Command: "command", Response: "position", Effort: "effort"})
	if err != nil {
		t.Fatalf("Read: %v", err)
	}
	if lg.Trace.Effort != nil || len(lg.Trace.Response) != 2 {
		t.Fatalf("got effort %v, response %v; want no effort and 2 samples", lg.Trace.Effort, lg.Trace.Response)
	}
}

// A shared reader returns the same values as a copying one; its trace is
// reused by the next read.
func TestReaderShared(t *testing.T) {
	f := Format{Time: "time", Command: "command", Response: "position"}
	a := "time,command,position\n0,0,0\n1,1,0.5\n2,1,1\n"
	b := "time,command,position\n0,5,5\n1,6,5.5\n2,6,6\n"
	want, err := Read(strings.NewReader(a), "a.csv", f)
	if err != nil {
		t.Fatal(err)
	}
	rd := NewReader(f).Shared()
	got, err := rd.Read(strings.NewReader(a), "a.csv")
	if err != nil {
		t.Fatal(err)
	}
	for i := range want.Trace.Time {
		if got.Trace.Time[i] != want.Trace.Time[i] || got.Trace.Command[i] != want.Trace.Command[i] || got.Trace.Response[i] != want.Trace.Response[i] {
			t.Fatalf("sample %d: shared %v/%v/%v, copied %v/%v/%v", i, got.Trace.Time[i], got.Trace.Command[i], got.Trace.Response[i],
				want.Trace.Time[i], want.Trace.Command[i], want.Trace.Response[i])
		}
	}
	first := got.Trace.Command
	if _, err := rd.Read(strings.NewReader(b), "b.csv"); err != nil {
		t.Fatal(err)
	}
	if first[0] != 5 {
		t.Errorf("a shared trace should be overwritten by the next read; command[0] = %v", first[0])
	}
}
