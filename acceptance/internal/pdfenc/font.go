package pdfenc

import (
	"strings"
	"sync"
	"unicode"
	"unicode/utf8"

	"codeberg.org/go-fonts/liberation/liberationsansbold"
	"codeberg.org/go-fonts/liberation/liberationsansregular"
	"github.com/jung-kurt/gofpdf"
	"golang.org/x/image/font/sfnt"
)

// FontFamily is the name under which AddFonts adds the embedded font to a
// document. Liberation Sans (SIL Open Font License) covers Latin, Greek and
// Cyrillic, the arrows and the mathematical signs the report prints.
const FontFamily = "LiberationSans"

// AddFonts embeds the regular and bold faces of the report font in pdf
// under FontFamily; pdf.Error reports a failure.
func AddFonts(pdf *gofpdf.Fpdf) {
	pdf.AddUTF8FontFromBytes(FontFamily, "", liberationsansregular.TTF)
	pdf.AddUTF8FontFromBytes(FontFamily, "B", liberationsansbold.TTF)
}

var (
	glyphsOnce sync.Once
	glyphs     []uint64 // bit r set: both faces draw rune r (r ≤ U+FFFF)
)

// HasGlyph reports whether the embedded report font can draw r in both its
// regular and bold faces. The faces are looked up once for the whole Basic
// Multilingual Plane and the answer kept as a bit set.
func HasGlyph(r rune) bool {
	glyphsOnce.Do(func() {
		// The fonts ship inside a Go package; they always parse.
		reg, err1 := sfnt.Parse(liberationsansregular.TTF)
		bold, err2 := sfnt.Parse(liberationsansbold.TTF)
		glyphs = make([]uint64, 0x10000/64)
		if err1 != nil || err2 != nil {
			return
		}
		var buf sfnt.Buffer
		for c := rune(0); c <= 0xFFFF; c++ {
			i, err := reg.GlyphIndex(&buf, c)
			if err != nil || i == 0 {
				continue
			}
			if i, err = bold.GlyphIndex(&buf, c); err == nil && i != 0 {
				glyphs[c/64] |= 1 << (c % 64)
			}
		}
	})
	if r < 0 || r > 0xFFFF {
		return false
	}
	return glyphs[r/64]&(1<<(r%64)) != 0
}

// Clean makes text from a log or a spec safe to print: it removes control
// and invisible format characters (including the bidirectional overrides
// that could make a serial read differently from what it is), turns tabs and
// line breaks into spaces, and replaces bytes that are not UTF-8 and
// characters the embedded font cannot draw with '?', so that what is printed
// is never silently different from what was read.
func Clean(s string) string {
	clean := true
	for _, r := range s {
		if r < 0x20 || r == utf8.RuneError || r >= 0x7F {
			clean = false
			break
		}
	}
	if clean {
		return s
	}
	var b strings.Builder
	for _, r := range s {
		switch {
		case r == '\t' || r == '\n' || r == '\r' || r == '\v' || r == '\f':
			b.WriteByte(' ')
		case unicode.IsControl(r) || unicode.Is(unicode.Cf, r):
			// dropped
		case r == utf8.RuneError || !HasGlyph(r):
			b.WriteByte('?')
		default:
			b.WriteRune(r)
		}
	}
	return b.String()
}
