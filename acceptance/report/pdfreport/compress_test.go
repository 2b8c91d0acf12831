package pdfreport

import (
	"bytes"
	"compress/zlib"
	"image"
	"image/color"
	"image/png"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/digest"
)

// TestWriteCompressedAsGofpdf: the report with its pages compressed after
// gofpdf wrote them is byte for byte the report gofpdf writes when it
// compresses the pages itself, with and without a logo image.
func TestWriteCompressedAsGofpdf(t *testing.T) {
	dir := t.TempDir()
	img := image.NewRGBA(image.Rect(0, 0, 30, 10))
	for x := 0; x < 30; x++ {
		for y := 0; y < 10; y++ {
			img.Set(x, y, color.RGBA{R: uint8(8 * x), G: 80, B: 160, A: 255})
		}
	}
	var buf bytes.Buffer
	if err := png.Encode(&buf, img); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "logo.png"), buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	withLogo := testBatch()
	withLogo.SpecDoc.Source = filepath.Join(dir, "spec.yaml")
	withLogo.SpecDoc.Report.Logo = "logo.png"

	for _, tc := range []struct {
		name     string
		d        *digest.Digest
		o        Options
		minPages int
	}{
		{"units that did not pass", mustDigest(t, testBatch()), Options{}, 1},
		{"every unit", mustDigest(t, testBatch()), Options{AllUnits: true}, 1},
		{"logo", mustDigest(t, withLogo), Options{}, 1},
		// More pages than the compressors take at a time.
		{"40 demo units, every unit", benchDigest(t, 40), Options{AllUnits: true}, 3 * 8},
	} {
		t.Run(tc.name, func(t *testing.T) {
			pdf, err := layOut(tc.d, keptTraces{}, tc.o, true)
			if err != nil {
				t.Fatal(err)
			}
			var want bytes.Buffer
			if err := pdf.Output(&want); err != nil {
				t.Fatal(err)
			}
			var got bytes.Buffer
			if err := Write(&got, tc.d, keptTraces{}, tc.o); err != nil {
				t.Fatal(err)
			}
			if n := bytes.Count(want.Bytes(), []byte("/Type /Page\n")); n < tc.minPages {
				t.Fatalf("%d pages, want at least %d", n, tc.minPages)
			}
			if !bytes.Equal(got.Bytes(), want.Bytes()) {
				a, b := got.Bytes(), want.Bytes()
				i := 0
				for i < len(a) && i < len(b) && a[i] == b[i] {
					i++
				}
				t.Fatalf("%d bytes, gofpdf's own compression %d; they differ from byte %d", len(a), len(b), i)
			}
		})
	}
}

func mustDigest(t *testing.T, b *acceptance.Batch) *digest.Digest {
	t.Helper()
	d, err := digest.New(b)
	if err != nil {
		t.Fatal(err)
	}
	return d
}

// TestWriteCompressedUnknownLayout: a document that is not laid out as
// gofpdf writes it is written as it is.
func TestWriteCompressedUnknownLayout(t *testing.T) {
	pdf, err := layOut(mustDigest(t, testBatch()), keptTraces{}, Options{}, false)
	if err != nil {
		t.Fatal(err)
	}
	var doc bytes.Buffer
	if err := pdf.Output(&doc); err != nil {
		t.Fatal(err)
	}
	good := doc.Bytes()
	for name, bad := range map[string][]byte{
		"no trailer":        good[:len(good)-20],
		"length off by one": regexp.MustCompile(`(/Contents \d+ 0 R>>[\s\S]*?<</Length )(\d)`).ReplaceAll(append([]byte(nil), good...), []byte("${1}9${2}")),
		"not a PDF":         []byte("hello"),
	} {
		var out bytes.Buffer
		if err := writeCompressed(&out, bad); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if !bytes.Equal(out.Bytes(), bad) {
			t.Errorf("%s: the document was changed", name)
		}
	}
}

// TestWriteCompressedStreams: every page's content stream inflates to the
// uncompressed document's, and the cross-reference table points at every
// object (ISO 32000-1:2008, §7.5.4).
func TestWriteCompressedStreams(t *testing.T) {
	d := mustDigest(t, testBatch())
	var plain, packed bytes.Buffer
	if err := Write(&plain, d, keptTraces{}, Options{Uncompressed: true}); err != nil {
		t.Fatal(err)
	}
	if err := Write(&packed, d, keptTraces{}, Options{}); err != nil {
		t.Fatal(err)
	}
	objs, _, ok := pageContents(plain.Bytes())
	if !ok || len(objs) == 0 {
		t.Fatalf("uncompressed report: %d page contents found (ok %v)", len(objs), ok)
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
