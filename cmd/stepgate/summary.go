package main

import (
	"fmt"
	"io"
	"strings"
	"unicode/utf8"

	"github.com/stepgate/stepgate/acceptance"
)

// summaryAllUpTo is the batch size up to which the summary lists every
// unit; a larger batch lists the units that did not pass (--verbose lists
// all).
const summaryAllUpTo = 100

// printSummary writes the verdict table to w.
func printSummary(w io.Writer, b *acceptance.Batch, verbose bool) {
	fmt.Fprintf(w, "%s rev %s: %s\n", b.Spec.SpecID, b.Spec.Revision, b.Spec.Title)
	listAll := verbose || len(b.Units) <= summaryAllUpTo
	// Unit ids come from file names and log metadata: control characters
	// in them must not reach the terminal.
	ids := make([]string, len(b.Units))
	width := len("unit")
	for i, u := range b.Units {
		ids[i] = oneLine(u.Unit, 64)
		width = max(width, utf8.RuneCountInString(ids[i]))
	}
	head := "first reason"
	if verbose {
		head = "reasons"
	}
	fmt.Fprintf(w, "%-*s  %-7s  %s\n", width, "unit", "verdict", head)
	for i, u := range b.Units {
		if !listAll && u.Verdict == acceptance.Pass {
			continue
		}
		reason := ""
		if len(u.Reasons) > 0 {
			reason = u.Reasons[0].Text
		}
		pad := strings.Repeat(" ", width-utf8.RuneCountInString(ids[i]))
		if !verbose {
			fmt.Fprintf(w, "%s%s  %-7s  %s\n", ids[i], pad, u.Verdict, oneLine(reason, reasonWidth))
			continue
		}
		// --verbose wraps every reason in full under the reasons column.
		indent := strings.Repeat(" ", width) + "  " + strings.Repeat(" ", 7) + "  "
		first := true
		for _, r := range u.Reasons {
			for _, line := range wrap(oneLine(r.Text, len(r.Text)+1), reasonWidth) {
				if first {
					fmt.Fprintf(w, "%s%s  %-7s  %s\n", ids[i], pad, u.Verdict, line)
					first = false
					continue
				}
				fmt.Fprintf(w, "%s%s\n", indent, line)
			}
		}
		if first {
			fmt.Fprintf(w, "%s%s  %s\n", ids[i], pad, u.Verdict)
		}
	}
	if !listAll {
		fmt.Fprintf(w, "(%d passing units not listed; --verbose lists every unit)\n", b.Summary.Pass)
	}
	s := b.Summary
	yield := 0.0
	if s.Units > 0 {
		yield = 100 * float64(s.Pass) / float64(s.Units)
	}
	fmt.Fprintf(w, "units %d: pass %d, fail %d, invalid %d; yield %.1f %%\n", s.Units, s.Pass, s.Fail, s.Invalid, yield)
}

// reasonWidth is the most characters of a reason a summary line shows.
const reasonWidth = 100

// wrap breaks s into lines of at most n runes at spaces; a word longer
// than a line is cut. Continuation lines begin with two spaces, so that a
// wrapped reason reads apart from the next.
func wrap(s string, n int) []string {
	n -= 2 // room for the continuation's indent
	var lines []string
	line := ""
	for _, word := range strings.Fields(s) {
		for utf8.RuneCountInString(word) > n {
			rs := []rune(word)
			if line != "" {
				lines = append(lines, line)
				line = ""
			}
			lines = append(lines, string(rs[:n]))
			word = string(rs[n:])
		}
		switch {
		case line == "":
			line = word
		case utf8.RuneCountInString(line)+1+utf8.RuneCountInString(word) <= n:
			line += " " + word
		default:
			lines = append(lines, line)
			line = word
		}
	}
	if line != "" || len(lines) == 0 {
		lines = append(lines, line)
	}
	for i := 1; i < len(lines); i++ {
		lines[i] = "  " + lines[i]
	}
	return lines
}

// oneLine replaces control characters (C0, DEL and C1, which terminals
// act on) and invalid UTF-8 by spaces and shortens s to at most n runes.
func oneLine(s string, n int) string {
	s = strings.Map(func(r rune) rune {
		if r < 0x20 || (r >= 0x7f && r < 0xa0) || r == utf8.RuneError {
			return ' '
		}
		return r
	}, s)
	rs := []rune(s)
	if len(rs) > n {
		return string(rs[:n-1]) + "…"
	}
	return s
}
