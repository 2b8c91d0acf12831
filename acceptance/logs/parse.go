package logs

import (
	"bytes"
	"encoding/hex"
	"fmt"
	"strings"

	"github.com/stepgate/stepgate/metrics"
)

// parse reads the whole log: the lines before the header (blank,
// comment and metadata lines), the header row, then the data rows.
func (rd *Reader) parse() (*Log, error) {
	if err := rd.sniff(); err != nil {
		return nil, err
	}
	pre := preamble{meta: map[string]string{}}
	header := false
	for {
		line, last, ok, err := rd.next()
		if err != nil {
			return nil, err
		}
		if !ok {
			break
		}
		switch {
		case header && isBlankRow(line, rd.delim):
		case header:
			err = rd.row(line, last)
		default:
			header, err = rd.beforeHeader(line, &pre)
		}
		if err != nil {
			return nil, err
		}
	}
	if err := rd.complete(header, pre.sawText); err != nil {
		return nil, err
	}
	return rd.result(pre.meta), nil
}

// preamble is what the lines before the header have given.
type preamble struct {
	meta     map[string]string // metadata, keys lower-cased
	metaLine map[string]int    // the line each key was first given on
	sawText  bool              // a line other than a blank one was met
}

// beforeHeader reads one line before the header: a blank line, a comment,
// a metadata line, or the header row itself, which it parses and reports.
func (rd *Reader) beforeHeader(line []byte, pre *preamble) (isHeader bool, err error) {
	t := trimSpace(line)
	if len(t) == 0 {
		return false, nil
	}
	pre.sawText = true
	if err := rd.checkControl(line); err != nil {
		return false, err
	}
	if t[0] != '#' {
		return true, rd.header(line)
	}
	k, v, isMeta := metadata(t[1:])
	if !isMeta {
		if bytes.ContainsAny(t, ",;\t") {
			rd.commentLine, rd.comment = rd.lineNo, string(t)
		}
		return false, nil
	}
	if old, dup := pre.meta[k]; dup {
		if old != v {
			return false, &ParseError{File: rd.name, Line: rd.lineNo, Err: because(ErrMetadata,
				fmt.Sprintf("metadata %q is %q here but %q on line %d", k, v, old, pre.metaLine[k]))}
		}
		return false, nil
	}
	if pre.metaLine == nil {
		pre.metaLine = map[string]int{}
	}
	pre.meta[k], pre.metaLine[k] = v, rd.lineNo
	return false, nil
}

// complete checks, at the end of the file, that it had a header and at
// least two data rows.
func (rd *Reader) complete(header, sawText bool) error {
	switch {
	case !header && sawText:
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
