package pdfenc

import (
	"bytes"
	"compress/zlib"
	"fmt"
	"io"
	"regexp"
	"strconv"
	"testing"
	"time"

	"github.com/jung-kurt/gofpdf"
)

// document lays out a document of the given pages, each with text in the
// embedded font and a few lines, as gofpdf writes it with or without
// compression. The same arguments give the same bytes.
func document(t *testing.T, pages int, compress bool) []byte {
	t.Helper()
	pdf := gofpdf.New("P", "mm", "A4", "")
	pdf.SetCompression(compress)
	pdf.SetCatalogSort(true)
	date := time.Date(2026, 5, 17, 0, 0, 0, 0, time.UTC)
	pdf.SetCreationDate(date)
	pdf.SetModificationDate(date)
	pdf.AliasNbPages("{nb}")
	AddFonts(pdf)
	for p := 1; p <= pages; p++ {
		pdf.AddPage()
		pdf.SetFont(FontFamily, "B", 12)
		pdf.Text(20, 20, fmt.Sprintf("Page %d of {nb}: ζ ± µ → Ω", p))
		pdf.SetFont(FontFamily, "", 9)
		for k := 0; k < 40; k++ {
			y := 30 + float64(k)*5
			pdf.Text(20, y, fmt.Sprintf("line %d of page %d, value %.3f", k, p, float64(k*p)/7))
			pdf.Line(120, y, 120+float64((k*p)%60), y+2)
		}
	}
	var buf bytes.Buffer
	if err := pdf.Output(&buf); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// TestCompressAsGofpdf: a document compressed after gofpdf wrote it is
// byte for byte the document gofpdf writes when it compresses the pages
// itself, with more pages than the compressors take at a time.
func TestCompressAsGofpdf(t *testing.T) {
	for _, pages := range []int{1, 3, 100} {
		want := document(t, pages, true)
		var got bytes.Buffer
		if err := Compress(&got, document(t, pages, false)); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got.Bytes(), want) {
			a, b := got.Bytes(), want
			i := 0
			for i < len(a) && i < len(b) && a[i] == b[i] {
				i++
			}
			t.Fatalf("%d pages: %d bytes, gofpdf's own compression %d; they differ from byte %d", pages, len(a), len(b), i)
		}
	}
}

// TestCompressUnknownLayout: a document that is not laid out as
// gofpdf writes it is written as it is.
func TestCompressUnknownLayout(t *testing.T) {
	good := document(t, 3, false)
	for name, bad := range map[string][]byte{
		"no trailer":        good[:len(good)-20],
		"length off by one": regexp.MustCompile(`(/Contents \d+ 0 R>>[\s\S]*?<</Length )(\d)`).ReplaceAll(append([]byte(nil), good...), []byte("${1}9${2}")),
		"not a PDF":         []byte("hello"),
	} {
		var out bytes.Buffer
		if err := Compress(&out, bad); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if !bytes.Equal(out.Bytes(), bad) {
			t.Errorf("%s: the document was changed", name)
		}
	}
}

// TestCompressStreams: every page's content stream inflates to the
// uncompressed document's, and the cross-reference table points at every
// object (ISO 32000-1:2008, §7.5.4).
func TestCompressStreams(t *testing.T) {
	plain := bytes.NewBuffer(document(t, 5, false))
	var packed bytes.Buffer
	if err := Compress(&packed, plain.Bytes()); err != nil {
		t.Fatal(err)
	}
	objs, _, ok := pageContents(plain.Bytes())
	if !ok || len(objs) == 0 {
		t.Fatalf("uncompressed document: %d page contents found (ok %v)", len(objs), ok)
	}
	out := packed.Bytes()
	xref := regexp.MustCompile(`startxref\n(\d+)\n%%EOF\n$`).FindSubmatch(out)
	if xref == nil {
		t.Fatal("no startxref")
	}
	at, _ := strconv.Atoi(string(xref[1]))
	if !bytes.HasPrefix(out[at:], []byte("xref\n0 ")) {
		t.Fatalf("startxref %d does not point at the xref table", at)
	}
	entries := regexp.MustCompile(`(\d{10}) 00000 n \n`).FindAllSubmatch(out[at:], -1)
	for k, e := range entries {
		off, _ := strconv.Atoi(string(e[1]))
		if want := strconv.Itoa(k+1) + " 0 obj\n"; !bytes.HasPrefix(out[off:], []byte(want)) {
			t.Fatalf("xref entry of object %d points at %q", k+1, out[off:min(off+20, len(out))])
		}
	}
	for _, o := range objs {
		head := regexp.MustCompile(`\A` + strconv.Itoa(o.num) + ` 0 obj\n<</Filter /FlateDecode /Length (\d+)>>\nstream\n`)
		off, _ := strconv.Atoi(string(entries[o.num-1][1]))
		m := head.FindSubmatch(out[off:])
		if m == nil {
			t.Fatalf("page content %d: %q", o.num, out[off:off+60])
		}
		n, _ := strconv.Atoi(string(m[1]))
		zr, err := zlib.NewReader(bytes.NewReader(out[off+len(m[0]) : off+len(m[0])+n]))
		if err != nil {
			t.Fatal(err)
		}
		data, err := io.ReadAll(zr)
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(data, plain.Bytes()[o.data:o.data+o.length]) {
			t.Errorf("page content %d does not inflate to the uncompressed one", o.num)
		}
	}
}
