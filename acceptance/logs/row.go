package logs

import (
	"bytes"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// trimField trims a data field of spaces and one pair of double quotes.
func trimField(b []byte) []byte {
	b = trimSpace(b)
	if len(b) >= 2 && b[0] == '"' && b[len(b)-1] == '"' {
		b = trimSpace(b[1 : len(b)-1])
	}
	return b
}

// row parses one data row and appends its values. Ordinary rows take the
// byte-level path (rowFast); a row it refuses is looked at again
// (rowSlow) for the layouts that need more: a units row, quoted fields, a
// trailing delimiter, timestamps, a repeated header.
func (rd *Reader) row(line []byte, last bool) error {
	if rd.emptyAt > 0 {
		return rd.emptyRowError()
	}
	if rd.stamp.on {
		return rd.rowFields(line, last)
	}
	if err := rd.rowFast(line, last); err != nil {
		return rd.rowSlow(line, last, err)
	}
	return nil
}

// rowFast parses one data row of plain fields and appends its values.
func (rd *Reader) rowFast(line []byte, last bool) error {
	nf := len(rd.roles)
	delim := rd.delim
	var vals [4]float64
	var tText []byte
	bad, badStatus := -1, numOK
	var badText []byte
	field, pos := 0, 0
	for {
		// Fields are short: a plain loop beats a call to bytes.IndexByte.
		e := pos
		for e < len(line) && line[e] != delim {
			e++
		}
		if field < nf {
			if role := rd.roles[field]; role >= 0 {
				fb := trimField(line[pos:e])
				shift := 0
				if role == roleTime {
					shift = rd.shift
					tText = fb
				}
				v, st := parseNumber(fb, rd.dec, shift, &rd.scratch)
				if st != numOK && bad < 0 {
					bad, badStatus, badText = field, st, fb
				}
				vals[role] = v
			}
		}
		field++
		if e == len(line) {
			break
		}
		pos = e + 1
	}
	if field != nf {
		return rd.fieldCountError(line, field, last)
	}
	if bad >= 0 {
		return rd.numberError(bad, badStatus, badText, last && bad == nf-1)
	}
	return rd.push(&vals, tText)
}

// push checks the time of a parsed row against the previous row's and
// appends the row's values.
func (rd *Reader) push(vals *[4]float64, tText []byte) error {
	t := vals[roleTime]
	if rd.mul != 1 && !rd.stamp.on {
		t *= rd.mul
		if math.IsInf(t, 0) {
			return &ParseError{File: rd.name, Line: rd.lineNo, Column: rd.column(roleTime), Field: rd.f.Time,
				Err: because(ErrBadNumber, fmt.Sprintf("%q times the time scale %v is out of range for a 64-bit float", tText, rd.mul))}
		}
		vals[roleTime] = t
	}
	if n := len(rd.cols[roleTime]); n > 0 && !(t > rd.cols[roleTime][n-1]) {
		how := "repeats"
		if t < rd.cols[roleTime][n-1] {
			how = "is before"
		}
		return &ParseError{File: rd.name, Line: rd.lineNo, Column: rd.column(roleTime), Field: rd.f.Time,
			Err: because(ErrTimeOrder, fmt.Sprintf("time %s %s the time %s on line %d; time must increase strictly from row to row",
				tText, how, rd.prevT, rd.prevTL))}
	}
	rd.prevT = append(rd.prevT[:0], tText...)
	rd.prevTL = rd.lineNo
	n := 3
	if rd.hasEffort() {
		n = 4
	}
	for c := range n {
		rd.cols[c] = append(rd.cols[c], vals[c])
	}
	return nil
}

// column returns the 1-based field number of a role.
func (rd *Reader) column(role int) int {
	for i, r := range rd.roles {
		if int(r) == role {
			return i + 1
		}
	}
	return 0
}

func (rd *Reader) fieldCountError(line []byte, got int, last bool) error {
	var b strings.Builder
	fmt.Fprintf(&b, "row has %d field", got)
	if got != 1 {
		b.WriteByte('s')
	}
	fmt.Fprintf(&b, " but the header has %d", len(rd.roles))
	switch t := trimSpace(line); {
	case last && got < len(rd.roles):
		b.WriteString("; the file looks truncated: its last line is short and does not end with a newline")
	case len(t) > 0 && t[0] == '#':
		b.WriteString("; comment lines are allowed only before the header")
	default:
		if other := rd.otherDelimiter(line); other != 0 {
			fmt.Fprintf(&b, "; the row holds %s characters but the header is delimited by %s", delimiterName(other), delimiterName(rd.delim))
		}
	}
	return &ParseError{File: rd.name, Line: rd.lineNo, Err: because(ErrFieldCount, b.String())}
}

// otherDelimiter returns a delimiter other than the file's that the line
// holds, or 0.
func (rd *Reader) otherDelimiter(b []byte) byte {
	for _, d := range [...]byte{',', ';', '\t'} {
		if d == rd.delim || (d == ',' && rd.f.DecimalComma) {
			continue
		}
		if bytes.IndexByte(b, d) >= 0 {
			return d
		}
	}
	return 0
}

func (rd *Reader) numberError(field int, st numStatus, text []byte, lastField bool) error {
	var msg string
	switch st {
	case numEmpty:
		msg = "empty value"
	case numNaN:
		msg = "NaN is not a measurement"
	case numInf:
		msg = fmt.Sprintf("%q is not a measurement: values must be finite", text)
	case numRange:
		msg = fmt.Sprintf("%q is out of range for a 64-bit float", text)
	default:
		msg = "not a number: " + strconv.Quote(string(text))
		var scratch []byte
		switch {
		case !rd.f.DecimalComma && bytes.IndexByte(text, ',') >= 0:
			if _, s := parseNumber(text, ',', 0, &scratch); s == numOK {
				msg += " (the file may use decimal commas: set log.decimal_comma: true)"
			} else {
				msg += " (the row mixes delimiters: the header is delimited by " + delimiterName(rd.delim) + ")"
			}
		case rd.f.DecimalComma && bytes.IndexByte(text, '.') >= 0:
			if _, s := parseNumber(text, '.', 0, &scratch); s == numOK {
				msg += " (the file uses decimal points: set log.decimal_comma: false)"
			}
		case rd.otherDelimiter(text) != 0:
			msg += " (the row mixes delimiters: the header is delimited by " + delimiterName(rd.delim) + ")"
		case len(text) > 0 && text[0] == '#':
			msg += " (comment lines are allowed only before the header)"
		}
	}
	if lastField && st != numOK {
		msg += "; the file may be truncated: its last line does not end with a newline"
	}
	name := ""
	if field < len(rd.names) {
		name = rd.names[field]
	}
	return &ParseError{File: rd.name, Line: rd.lineNo, Column: field + 1, Field: name, Err: because(ErrBadNumber, msg)}
}
