package xlsxreport

import (
	"archive/zip"
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// failAfter accepts n bytes and then fails, as a full disk does.
type failAfter struct{ n int }

func (f *failAfter) Write(b []byte) (int, error) {
	if len(b) > f.n {
		n := f.n
		f.n = 0
		return n, errors.New("no space left on device")
	}
	f.n -= len(b)
	return len(b), nil
}

// TestPackedSheetsCleanedUp checks that the long sheets' temporary files
// are gone after a workbook is written, and after a write that fails.
func TestPackedSheetsCleanedUp(t *testing.T) {
	tmp := t.TempDir()
	t.Setenv("TMPDIR", tmp)
	left := func() []string {
		ents, err := os.ReadDir(tmp)
		if err != nil {
			t.Fatal(err)
		}
		var names []string
		for _, e := range ents {
			names = append(names, e.Name())
		}
		return names
	}
	var full bytes.Buffer
	if err := writeBatch(&full, testBatch()); err != nil {
		t.Fatal(err)
	}
	if l := left(); len(l) != 0 {
		t.Errorf("after a write: %v left in the temporary directory", l)
	}
	for _, n := range []int{0, 100, full.Len() / 2, full.Len() - 10} {
		if err := writeBatch(&failAfter{n: n}, testBatch()); err == nil || !strings.Contains(err.Error(), "no space left") {
			t.Errorf("writer failing after %d bytes: error %v", n, err)
		}
		if l := left(); len(l) != 0 {
			t.Errorf("after a write failing at byte %d: %v left in the temporary directory", n, l)
		}
	}
}

// TestPackedSheetsWithoutTemporaryDirectory writes a workbook when the
// temporary directory cannot be used: the same bytes, from memory.
func TestPackedSheetsWithoutTemporaryDirectory(t *testing.T) {
	var want bytes.Buffer
	if err := writeBatch(&want, testBatch()); err != nil {
		t.Fatal(err)
	}
	t.Setenv("TMPDIR", filepath.Join(t.TempDir(), "missing"))
	var got bytes.Buffer
	if err := writeBatch(&got, testBatch()); err != nil {
		t.Fatalf("no temporary directory: %v", err)
	}
	if !bytes.Equal(got.Bytes(), want.Bytes()) {
		t.Errorf("workbook written from memory differs from the one written through temporary files")
	}
}

// TestZipVersions: every entry of the package says it needs version 2.0
// to extract, the least for deflate (PKWARE APPNOTE.TXT 4.4.3), the packed
// sheets included.
func TestZipVersions(t *testing.T) {
	var buf bytes.Buffer
	if err := writeBatch(&buf, testBatch()); err != nil {
		t.Fatal(err)
	}
	zr, err := zip.NewReader(bytes.NewReader(buf.Bytes()), int64(buf.Len()))
	if err != nil {
		t.Fatal(err)
	}
	for _, zf := range zr.File {
		if zf.Method == zip.Deflate && (zf.ReaderVersion < 20 || zf.CreatorVersion&0xff < 20) {
			t.Errorf("%s: versions needed %d, made by %d; want at least 20", zf.Name, zf.ReaderVersion, zf.CreatorVersion&0xff)
		}
	}
}
