package pdfreport

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"os"
	"path/filepath"
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
