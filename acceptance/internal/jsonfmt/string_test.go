package jsonfmt

import (
	"bytes"
	"encoding/json"
	"math/rand/v2"
	"strings"
	"testing"
	"unicode/utf8"
)

// Strings that encoding/json escapes: HTML characters, U+2028 and U+2029,
// invalid UTF-8, control characters, quotes and backslashes.
var awkward = []string{
	"<script>alert('&')</script>",
	"line\u2028sep\u2029para",
	"bad \xff\xfe utf-8 \xe2\x80 cut \xed\xa0\x80 surrogate \xc0\xaf overlong",
	"ctl \x00\x01\x07\x08\x0b\x0e\x1b\x1f\x7f \b\f\n\r\t",
	`"quoted" back\slash /slash`,
	"é ü 日本 🎉 \u00a0 \ufeff \U0010ffff",
	"",
	"=1+1",
}

// AppendString quotes as encoding/json does: every byte alone, every rune
// class, the awkward strings and random byte strings.
func TestAppendString(t *testing.T) {
	check := func(s string) {
		t.Helper()
		want, err := json.Marshal(s)
		if err != nil {
			t.Fatal(err)
		}
		if got := AppendString(nil, s); !bytes.Equal(got, want) {
			t.Fatalf("AppendString(%q) = %s, want %s", s, got, want)
		}
	}
	for c := range 256 {
		check(string([]byte{byte(c)}))
		check("a" + string([]byte{byte(c)}) + "z")
	}
	for _, r := range []rune{0x7f, 0x80, 0x7ff, 0x800, 0x2027, 0x2028, 0x2029, 0x202a, 0xd7ff, 0xe000, 0xfffd, 0xffff, 0x10000, 0x10ffff} {
		check(string(r))
		check("<" + string(r) + ">")
	}
	for _, s := range awkward {
		check(s)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	alphabet := []string{"a", "<", "&", "\"", "\\", "\n", "\x01", "\x7f", "\xff", "\xe2\x80", "\u2028", "\u2029", "é", "日", "🎉", "\xf0\x9f"}
	for range 2000 {
		var sb strings.Builder
		for range rng.IntN(12) {
			if rng.IntN(4) == 0 {
				sb.WriteByte(byte(rng.IntN(256)))
			} else {
				sb.WriteString(alphabet[rng.IntN(len(alphabet))])
			}
		}
		check(sb.String())
	}
}

// FuzzAppendString compares AppendString with encoding/json.
func FuzzAppendString(f *testing.F) {
	for _, s := range awkward {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		want, _ := json.Marshal(s)
		if got := AppendString(nil, s); !bytes.Equal(got, want) {
			t.Fatalf("AppendString(%q) = %s, want %s (valid UTF-8: %v)", s, got, want, utf8.ValidString(s))
		}
	})
}
