package main

import (
	"bytes"
	"strings"
	"testing"
	"time"
	"unicode/utf8"
)

func TestProgressLine(t *testing.T) {
	cases := []struct {
		done, total int
		bytes       int64
		elapsed     time.Duration
		want        string
	}{
		{0, 10, 0, 0, "0 of 10 files, 0.0 MB/s, ? left"},
		{5, 10, 50e6, 2 * time.Second, "5 of 10 files, 25.0 MB/s, 2s left"},
		{10, 10, 100e6, 4 * time.Second, "10 of 10 files, 25.0 MB/s, 0s left"},
	}
	for _, c := range cases {
		if got := progressLine(c.done, c.total, c.bytes, c.elapsed); got != c.want {
			t.Errorf("progressLine(%d, %d, %d, %v) = %q, want %q", c.done, c.total, c.bytes, c.elapsed, got, c.want)
		}
	}
}

// A writer that is not a terminal gets no progress output at all.
func TestProgressSilentWhenNotTerminal(t *testing.T) {
	var buf bytes.Buffer
	p := newProgress(&buf, false)
	p.update(1, 2, 10)
	p.update(2, 2, 20)
	p.finish()
	if buf.Len() != 0 {
		t.Errorf("progress wrote %q to a non-terminal", buf.String())
	}
}

// --verbose wraps a long reason at spaces instead of cutting it: every
// word is kept, in order, and no line is longer than the width.
func TestWrapKeepsEveryWord(t *testing.T) {
	long := strings.Repeat("settling_time_s 0.61 > 0.5 at step 2 ", 8) + strings.Repeat("x", 130)
	for _, n := range []int{20, 60, 100} {
		lines := wrap(long, n)
		if len(lines) < 2 {
			t.Fatalf("width %d: %d line(s)", n, len(lines))
		}
		var words []string
		for i, l := range lines {
			if utf8.RuneCountInString(l) > n {
				t.Errorf("width %d: line %d has %d runes: %q", n, i, utf8.RuneCountInString(l), l)
			}
			if i > 0 && !strings.HasPrefix(l, "  ") {
				t.Errorf("width %d: continuation %q is not indented", n, l)
			}
			words = append(words, strings.Fields(l)...)
		}
		if got := strings.ReplaceAll(strings.Join(words, " "), " ", ""); got != strings.ReplaceAll(long, " ", "") {
			t.Errorf("width %d: words lost or reordered:\n%s", n, strings.Join(lines, "\n"))
		}
	}
	if got := wrap("short", 100); len(got) != 1 || got[0] != "short" {
		t.Errorf("wrap(short) = %q", got)
	}
}

// Once the files are judged the progress line says the reports are being
// written, and finish clears it.
func TestProgressWritingPhase(t *testing.T) {
	var b bytes.Buffer
	p := &progress{w: &b, enabled: true, now: time.Now}
	p.phase("writing reports")
	p.finish()
	if got := b.String(); !strings.HasPrefix(got, "\rwriting reports") || !strings.HasSuffix(got, "\r\x1b[K") {
		t.Errorf("progress wrote %q", got)
	}
}
