package xlsxenc

import (
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"
)

// TestRowWriterRoundTrip writes the awkward texts and numbers a log can
// carry through the long sheets' row writer and reads them back with
// excelize, an independent SpreadsheetML reader.
func TestRowWriterRoundTrip(t *testing.T) {
	texts := []string{
		"SN-1001",
		"a & b < c > d",
		`quote " and apostrophe '`,
		"line\nbreak", "carriage\rreturn", "tab\there",
		" leading space", "trailing space ",
		// ST_Xstring (ECMA-376 Part 1, §22.9.2.19): a literal _xHHHH_ is
		// not a character escape.
		"_x0041_", "pre_x00e9_post", "_x005F_", "_x12_", "__x0041__",
		"ünïcödé 温度 🙂",
	}
	long := strings.Repeat("é", maxCellChars+10)
	nums := []float64{0, -0.0, 1, -2.5, 0.1 + 0.2, 1.5e-05, 6.02214076e23, -1e-300, 123456789.123456789, math.MaxFloat64}
	// Exercise the writer directly on a sheet frame made by excelize.
	rows := len(texts) + len(nums) + 1
	var out strings.Builder
	body := &Body{Rows: rows, Cols: 2, Write: func(rw *RowWriter) error {
		for i, s := range texts {
			rw.Start()
			rw.Str(1, s)
			rw.Int(2, i)
			if err := rw.End(); err != nil {
				return err
			}
		}
		for _, v := range nums {
			rw.Start()
			rw.Str(1, "n")
			rw.Num(2, v)
			if err := rw.End(); err != nil {
				return err
			}
		}
		rw.Start()
		rw.Str(1, long)
		return rw.End()
	}}
	if err := Pack(&out, frame(t), map[string]*Body{"Sheet1": body}); err != nil {
		t.Fatal(err)
	}
	checkRoundTrip(t, out.String(), texts, nums, long)
}

// checkRoundTrip reads the package back with excelize and compares the
// texts, numbers and long text written to Sheet1 in that order, each in
// column A with its index or value in column B.
func checkRoundTrip(t *testing.T, pkg string, texts []string, nums []float64, long string) {
	t.Helper()
	rows := len(texts) + len(nums) + 1
	g, err := excelize.OpenReader(strings.NewReader(pkg))
	if err != nil {
		t.Fatal(err)
	}
	defer g.Close()
	got, err := g.GetRows("Sheet1", excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != rows+1 {
		t.Fatalf("read %d rows, wrote %d", len(got), rows+1)
	}
	for i, s := range texts {
		if got[i+1][0] != s {
			t.Errorf("text %d: read %q, wrote %q", i, got[i+1][0], s)
		}
		if got[i+1][1] != strconv.Itoa(i) {
			t.Errorf("text %d: number read %q", i, got[i+1][1])
		}
	}
	for i, v := range nums {
		r := got[len(texts)+1+i]
		x, err := strconv.ParseFloat(r[1], 64)
		if err != nil {
			t.Errorf("number %g: read %q: %v", v, r[1], err)
			continue
		}
		// 15 significant digits, as a spreadsheet keeps them.
		if d := math.Abs(x - v); d > 5e-15*math.Abs(v) {
			t.Errorf("number %g: read %q (off by %g)", v, r[1], d)
		}
	}
	last := got[rows][0]
	if n := len([]rune(last)); n != maxCellChars || !strings.HasPrefix(long, last) {
		t.Errorf("long text read back as %d characters, want it cut to %d", n, maxCellChars)
	}
	dim, err := g.GetSheetDimension("Sheet1")
	if err != nil || dim != "A1:B"+strconv.Itoa(rows+1) {
		t.Errorf("dimension %q (%v), want A1:B%d", dim, err, rows+1)
	}
}

func TestAppendCellText(t *testing.T) {
	tests := []struct{ in, want string }{
		{"plain", "plain"},
		{"a&b<c>d", "a&amp;b&lt;c&gt;d"},
		{"x\ry", "x&#xD;y"},
		{"_x0041_", "_x005F_x0041_"},
		{"_x004g_", "_x004g_"},
		{"_x0041", "_x0041"},
		{"", ""},
	}
	for _, tc := range tests {
		if got := string(appendCellText(nil, tc.in)); got != tc.want {
			t.Errorf("appendCellText(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}

func TestRowWriterColumnOrder(t *testing.T) {
	defer func() {
		if recover() == nil {
			t.Error("writing column 1 after column 2 did not panic")
		}
	}()
	rw := newRowWriter(&strings.Builder{}, 3)
	rw.Start()
	rw.Int(2, 1)
	rw.Int(1, 1)
}

// frame returns a workbook made by excelize with a header row on Sheet1,
// as the long sheets' frames are.
func frame(t *testing.T) []byte {
	t.Helper()
	f := excelize.NewFile()
	defer f.Close()
	sw, err := f.NewStreamWriter("Sheet1")
	if err != nil {
		t.Fatal(err)
	}
	if err := sw.SetRow("A1", []interface{}{"a", "b"}); err != nil {
		t.Fatal(err)
	}
	if err := sw.Flush(); err != nil {
		t.Fatal(err)
	}
	buf, err := f.WriteToBuffer()
	if err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// TestPackingFailuresCleanUp: a sheet body that breaks (here by writing
// its columns out of order, a programming error that panics) fails the
// workbook with an error rather than ending the program, and a body for a
// sheet the workbook lacks is refused; neither leaves a temporary file.
func TestPackingFailuresCleanUp(t *testing.T) {
	tmp := t.TempDir()
	t.Setenv("TMPDIR", tmp)
	good := &Body{Rows: 1, Cols: 2, Write: func(rw *RowWriter) error {
		rw.Start()
		rw.Int(1, 1)
		return rw.End()
	}}
	backwards := &Body{Rows: 1, Cols: 2, Write: func(rw *RowWriter) error {
		rw.Start()
		rw.Int(2, 1)
		rw.Int(1, 1)
		return rw.End()
	}}
	tests := []struct {
		name   string
		bodies map[string]*Body
		want   string
	}{
		{"columns out of order", map[string]*Body{"Sheet1": backwards}, "internal error packing the sheet"},
		{"sheet not in the workbook", map[string]*Body{"Sheet1": good, "Missing": good}, "sheet Missing is not in the workbook"},
	}
	for _, tc := range tests {
		for range 5 { // map order varies: the missing sheet may come first or last
			err := Pack(io.Discard, frame(t), tc.bodies)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("%s: error %v, want %q", tc.name, err, tc.want)
			}
		}
		if ents, _ := os.ReadDir(tmp); len(ents) != 0 {
			t.Errorf("%s: %d files left in the temporary directory", tc.name, len(ents))
		}
	}
}
