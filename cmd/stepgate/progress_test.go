package main

import (
	"bytes"
	"testing"
	"time"
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
