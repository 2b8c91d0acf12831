package main

import (
	"fmt"
	"io"
	"os"
	"time"
)

// progress prints a one-line batch progress report (files done of total,
// MB/s, time left) to a terminal, rewriting the line in place at most a few
// times a second. It prints nothing when its writer is not a terminal.
type progress struct {
	w       io.Writer
	enabled bool
	start   time.Time
	last    time.Time
	now     func() time.Time
	printed bool
}

// newProgress returns a progress line on w, enabled only when w is a
// terminal (a character device) and quiet is false.
func newProgress(w io.Writer, quiet bool) *progress {
	p := &progress{w: w, now: time.Now}
	if f, ok := w.(*os.File); ok && !quiet {
		if fi, err := f.Stat(); err == nil && fi.Mode()&os.ModeCharDevice != 0 {
			p.enabled = true
		}
	}
	p.start = p.now()
	return p
}

// update is called after each file; it is safe to call from one goroutine
// at a time (the batch runner serialises the calls).
func (p *progress) update(done, total int, bytes int64) {
	if !p.enabled {
		return
	}
	now := p.now()
	if done < total && now.Sub(p.last) < 200*time.Millisecond {
		return
	}
	p.last = now
	fmt.Fprint(p.w, "\r"+progressLine(done, total, bytes, now.Sub(p.start))+"\x1b[K")
	p.printed = true
}

// phase shows what the run is doing once the files are judged, e.g.
// "writing reports", on the progress line.
func (p *progress) phase(what string) {
	if !p.enabled {
		return
	}
	fmt.Fprint(p.w, "\r"+what+" …\x1b[K")
	p.printed = true
}

// finish ends the progress line so that the next output starts on a clean
// line.
func (p *progress) finish() {
	if p.enabled && p.printed {
		fmt.Fprint(p.w, "\r\x1b[K")
	}
}

// progressLine formats the progress figures.
func progressLine(done, total int, bytes int64, elapsed time.Duration) string {
	s := elapsed.Seconds()
	mbs := 0.0
	if s > 0 {
		mbs = float64(bytes) / 1e6 / s
	}
	left := "?"
	if done > 0 && done < total {
		rest := time.Duration(float64(elapsed) * float64(total-done) / float64(done))
		left = rest.Round(time.Second).String()
	} else if done >= total {
		left = "0s"
	}
	return fmt.Sprintf("%d of %d files, %.1f MB/s, %s left", done, total, mbs, left)
}
