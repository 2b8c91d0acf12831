package pdfenc

import "testing"

func TestClean(t *testing.T) {
	tests := []struct {
		name, in, want string
	}{
		{"plain ASCII kept", "SN-1001", "SN-1001"},
		{"Greek, signs and arrows kept", "ζ ωn ± µ → Ω", "ζ ωn ± µ → Ω"},
		{"Latin accents kept", "Prüfstand Müller-Øre", "Prüfstand Müller-Øre"},
		{"bell and escape removed", "SN\x07-10\x1b05", "SN-1005"},
		{"tab and line breaks become spaces", "a\tb\r\nc", "a b  c"},
		{"DEL and C1 controls removed", "a\x7fb\u0085c", "abc"},
		{"bidirectional override removed", "SN-\u202e1001", "SN-1001"},
		{"zero-width space removed", "SN\u200b-1001", "SN-1001"},
		{"invalid UTF-8 marked", "SN-\xff1001", "SN-?1001"},
		{"outside the BMP marked", "SN-\U0001F600", "SN-?"},
		{"not in the font marked", "SN-\u4e2d", "SN-?"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if got := Clean(tc.in); got != tc.want {
				t.Errorf("Clean(%q) = %q, want %q", tc.in, got, tc.want)
			}
		})
	}
}

// TestGlyphs checks that the embedded font draws every non-ASCII character
// the report's own wording uses.
func TestGlyphs(t *testing.T) {
	for _, r := range "ζωσ±µμ→…—–•·“”²√≤≥−ΩÄÖÜäöüß" {
		if !HasGlyph(r) {
			t.Errorf("font lacks %q (U+%04X)", r, r)
		}
	}
	for _, r := range "\U0001F600\u4e2d" {
		if HasGlyph(r) {
			t.Errorf("HasGlyph(%q) = true for a character Liberation Sans does not cover", r)
		}
	}
}
