package logs

import (
	"encoding/hex"
	"fmt"
	"strings"

	"github.com/stepgate/stepgate/metrics"
)

// parse reads the whole log: the lines before the header (blank,
// comment, metadata and section lines), the header row, then the data rows.
func (rd *Reader) parse() error {
	if err := rd.sniff(); err != nil {
		return err
	}
	header := false
	for {
		line, last, ok, err := rd.next()
		if err != nil {
			return err
		}
		if !ok {
			break
		}
		switch {
		case rd.pend != nil:
			err = rd.lookahead(line)
		case header && rd.lineNo <= rd.skipUntil:
		case header && isBlankRow(line, rd.delim):
		case header && isEmptyRow(line, rd.delim):
			if rd.emptyAt == 0 {
				rd.emptyAt = rd.lineNo
			}
		case header:
			err = rd.row(line, last)
		default:
			header, err = rd.beforeHeader(line, last)
		}
		if err != nil {
			return err
		}
	}
	if rd.pend != nil {
		return rd.pend
	}
	return rd.complete(header)
}

// complete checks, at the end of the file, that it had a header and at
// least two data rows.
func (rd *Reader) complete(header bool) error {
	if !header && len(rd.first) > 0 {
		// Header-like lines but no data row: judge the first as the header,
		// so that a header without the spec's columns says which are there.
		if err := rd.parseHeader(rd.first, rd.firstLine); err != nil {
			return err
		}
		header = true
	}
	switch {
	case !header && rd.sawText:
		return &ParseError{File: rd.name, Err: because(ErrNoHeader,
			"no header row: the file holds only comment and metadata lines")}
	case !header:
		return &ParseError{File: rd.name, Err: because(ErrEmpty, "file holds only blank lines")}
	}
	switch len(rd.cols[roleTime]) {
	case 0:
		return &ParseError{File: rd.name, Err: because(ErrNoData, "the header is not followed by any data rows; at least 2 are needed")}
	case 1:
		return &ParseError{File: rd.name, Err: because(ErrNoData, "only 1 data row; at least 2 are needed")}
	}
	return nil
}

// result returns the Log of the file read: its columns as a trace (the
// reader's own buffers when shared, else a copy), metadata and digest.
func (rd *Reader) result(meta map[string]string) *Log {
	rows := len(rd.cols[roleTime])
	lg := &Log{Path: rd.name, Size: rd.total, Metadata: meta, Delimiter: rd.delim, Rows: rows}
	if rd.h != nil {
		rd.h.Sum(rd.sum[:0])
		lg.SHA256 = hex.EncodeToString(rd.sum[:])
	}
	ncol := 3
	if rd.hasEffort() {
		ncol = 4
	}
	out := make([][]float64, ncol)
	if rd.shared {
		for c := range ncol {
			out[c] = rd.cols[c][:rows:rows]
		}
	} else {
		back := make([]float64, rows*ncol)
		for c := range ncol {
			out[c] = back[c*rows : (c+1)*rows : (c+1)*rows]
			copy(out[c], rd.cols[c])
		}
	}
	lg.Trace = metrics.Trace{Time: out[roleTime], Command: out[roleCommand], Response: out[roleResponse]}
	if ncol == 4 {
		lg.Trace.Effort = out[roleEffort]
	}
	return lg
}

// checkControl refuses a line before the data that holds control
// characters other than tab, which text logs never contain.
func (rd *Reader) checkControl(line []byte) error {
	for i, c := range line {
		if (c < 0x20 && c != '\t') || c == 0x7f {
			return &ParseError{File: rd.name, Line: rd.lineNo, Err: because(ErrNotText,
				fmt.Sprintf("control byte 0x%02x at byte %d: the file looks binary, not a text log", c, i+1))}
		}
	}
	return nil
}

// metadata parses the text after '#' as "key: value"; the key starts with
// a letter.
func metadata(t []byte) (key, value string, ok bool) {
	t = trimSpace(t)
	if len(t) == 0 || !('a' <= t[0] && t[0] <= 'z' || 'A' <= t[0] && t[0] <= 'Z') {
		return "", "", false
	}
	i := 0
	for i < len(t) && isKeyByte(t[i]) {
		i++
	}
	if i == 0 {
		return "", "", false
	}
	rest := trimSpace(t[i:])
	if len(rest) == 0 || rest[0] != ':' {
		return "", "", false
	}
	return strings.ToLower(string(t[:i])), string(trimSpace(rest[1:])), true
}

func isKeyByte(c byte) bool {
	return 'a' <= c && c <= 'z' || 'A' <= c && c <= 'Z' || '0' <= c && c <= '9' ||
		c == '_' || c == '-' || c == '.'
}

func isSpace(c byte) bool { return c == ' ' || c == '\t' }

func trimSpace(b []byte) []byte {
	for len(b) > 0 && isSpace(b[0]) {
		b = b[1:]
	}
	for len(b) > 0 && isSpace(b[len(b)-1]) {
		b = b[:len(b)-1]
	}
	return b
}

// isBlankRow reports a data line of spaces only (and tabs, unless tabs
// delimit the fields: then it is a row of empty values).
func isBlankRow(b []byte, delim byte) bool {
	for _, c := range b {
		if c != ' ' && (c != '\t' || delim == '\t') {
			return false
		}
	}
	return true
}

// looksNumeric reports whether a row holds only characters of numbers and
// delimiters, with at least one digit: a data row, not a header.
func looksNumeric(b []byte) bool {
	digit := false
	for _, c := range b {
		switch {
		case '0' <= c && c <= '9':
			digit = true
		case c == '+' || c == '-' || c == '.' || c == ',' || c == ';' || c == 'e' || c == 'E' || isSpace(c):
		default:
			return false
		}
	}
	return digit
}
