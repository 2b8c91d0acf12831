package logs

import (
	"bytes"
	"fmt"
	"strings"
	"time"
)

// lookaheadLines bounds the lines read after a refused row while looking
// for a repeated header (metadata of a second recording comes first).
const lookaheadLines = 200

// rowSlow looks again at a row the byte-level path refused with err: a
// units row under the header, a repeat of the header, quoted fields with
// delimiters inside (RFC 4180), a trailing delimiter, or timestamps in the
// time column. Anything else keeps err, unless a repeated header follows
// within the next lines (two recordings appended), which is then the
// reason.
func (rd *Reader) rowSlow(line []byte, last bool, err error) error {
	rows := len(rd.cols[roleTime])
	if rows == 0 && rd.unitsRow(line) {
		return rd.readUnitsRow(line)
	}
	if rd.namesColumns(line) {
		return rd.repeatedHeader()
	}
	fields := rd.splitFields(line)
	quoted := bytes.IndexByte(line, '"') >= 0
	trailing := len(fields) == len(rd.roles)+1 && len(trimSpace(fields[len(fields)-1])) == 0
	if rows == 0 && !quoted {
		if tf := rd.column(roleTime) - 1; tf >= 0 && tf < len(fields) {
			if _, ok := parseStamp(trimField(fields[tf])); ok {
				rd.stamp.on = true
				return rd.rowFields(line, last)
			}
		}
	}
	if quoted || trailing {
		return rd.rowFields(line, last)
	}
	if !looksNumeric(trimSpace(line)) {
		rd.pend, rd.pendLeft = err, lookaheadLines
		return nil
	}
	return err
}

// lookahead reads a line after a refused row: a repeat of the header makes
// that the reason; a data row, or the end of the lines looked at, keeps
// the refused row's error.
func (rd *Reader) lookahead(line []byte) error {
	if rd.namesColumns(line) {
		return rd.repeatedHeader()
	}
	rd.pendLeft--
	if rd.pendLeft <= 0 || looksNumeric(trimSpace(line)) && len(trimSpace(line)) > 0 {
		return rd.pend
	}
	return nil
}

// repeatedHeader is the error for a header row met again among the data.
func (rd *Reader) repeatedHeader() error {
	return &ParseError{File: rd.name, Line: rd.lineNo, Err: because(ErrRepeatedHeader, fmt.Sprintf(
		"the header row of line %d appears again after %d data rows: the file holds two recordings appended; export or split them into one file per recording",
		rd.headerAt, len(rd.cols[roleTime])))}
}

// emptyRowError refuses a row of empty values followed by data rows: only
// the rows at the end of a log may be empty.
func (rd *Reader) emptyRowError() error {
	return &ParseError{File: rd.name, Line: rd.emptyAt, Column: rd.column(roleTime), Field: rd.f.Time, Err: because(ErrBadNumber,
		fmt.Sprintf("empty value: the row holds no values but data rows follow on line %d; only rows at the end of a log may be empty", rd.lineNo))}
}

// splitFields splits a row at delimiters outside double quotes (RFC 4180
// §2: a quoted field may hold the delimiter, a doubled quote is a quote).
// The fields alias the line except where quotes are undone.
func (rd *Reader) splitFields(line []byte) [][]byte {
	fs := rd.fields[:0]
	from, quoted, escaped := 0, false, false
	for i := 0; i <= len(line); i++ {
		if i < len(line) {
			c := line[i]
			if c == '"' {
				quoted = !quoted
				escaped = true
			}
			if c != rd.delim || quoted {
				continue
			}
		}
		f := line[from:i]
		if escaped {
			f = unquote(f)
		}
		fs = append(fs, f)
		from, escaped = i+1, false
	}
	rd.fields = fs
	return fs
}

// unquote undoes RFC 4180 quoting of one field: the surrounding quotes go
// and a doubled quote becomes one.
func unquote(f []byte) []byte {
	t := trimSpace(f)
	if len(t) >= 2 && t[0] == '"' && t[len(t)-1] == '"' {
		return bytes.ReplaceAll(t[1:len(t)-1], []byte(`""`), []byte(`"`))
	}
	return f
}

// rowFields parses a row field by field: quoted fields, a trailing
// delimiter and timestamps.
func (rd *Reader) rowFields(line []byte, last bool) error {
	fields := rd.splitFields(line)
	nf := len(rd.roles)
	if len(fields) == nf+1 && len(trimSpace(fields[nf])) == 0 {
		fields = fields[:nf]
	}
	if len(fields) != nf {
		if rd.namesColumns(line) {
			return rd.repeatedHeader()
		}
		return rd.fieldCountError(line, len(fields), last)
	}
	var vals [4]float64
	var tText []byte
	for i, f := range fields {
		role := rd.roles[i]
		if role < 0 {
			continue
		}
		fb := trimField(f)
		if role == roleTime && rd.stamp.on {
			tText = fb
			v, err := rd.stampValue(fb, i)
			if err != nil {
				return err
			}
			vals[role] = v
			continue
		}
		shift := 0
		if role == roleTime {
			shift, tText = rd.shift, fb
		}
		v, st := parseNumber(fb, rd.dec, shift, &rd.scratch)
		if st != numOK {
			return rd.numberError(i, st, fb, last && i == nf-1)
		}
		vals[role] = v
	}
	return rd.push(&vals, tText)
}

// unitsRow reports a row right under the header that holds no number in
// the columns read: the units of the columns.
func (rd *Reader) unitsRow(line []byte) bool {
	if rd.unitsAt != 0 || len(rd.cols[roleTime]) != 0 {
		return false
	}
	fields := rd.splitFields(line)
	any := false
	for i, f := range fields {
		if i >= len(rd.roles) || rd.roles[i] < 0 {
			continue
		}
		fb := trimField(f)
		if _, st := parseNumber(fb, rd.dec, 0, &rd.scratch); st == numOK || st == numNaN || st == numInf {
			return false
		}
		if len(fb) > 24 {
			return false
		}
		if len(fb) > 0 {
			any = true
		}
	}
	return any
}

// readUnitsRow checks the units row's units against the spec's.
func (rd *Reader) readUnitsRow(line []byte) error {
	rd.unitsAt = rd.lineNo
	fields := rd.splitFields(line)
	for i, f := range fields {
		if i >= len(rd.roles) || rd.roles[i] < 0 {
			continue
		}
		u := string(trimField(f))
		if n := len(u); n >= 2 && (u[0] == '[' && u[n-1] == ']' || u[0] == '(' && u[n-1] == ')') {
			u = strings.TrimSpace(u[1 : n-1])
		}
		if u == "" {
			continue
		}
		if err := rd.checkUnit(int(rd.roles[i]), i, u, "units row"); err != nil {
			return err
		}
	}
	return nil
}

// stampState is how a time column of absolute timestamps is read.
type stampState struct {
	on   bool
	t0   int64 // nanoseconds of the first sample
	day  bool  // times of day without a date
	wrap int64 // days added after midnight, in nanoseconds
	last int64
}

// stampLayouts are the timestamp layouts read: ISO 8601 date and time
// with or without a zone and fractions, with 'T' or a space, and a time of
// day alone.
var stampLayouts = []string{
	"2006-01-02T15:04:05.999999999Z07:00",
	"2006-01-02T15:04:05.999999999",
	"2006-01-02 15:04:05.999999999Z07:00",
	"2006-01-02 15:04:05.999999999",
	"15:04:05.999999999",
}

// parseStamp reads a timestamp as nanoseconds since the Unix epoch (UTC
// when the zone is not written), or since midnight for a time of day.
func parseStamp(b []byte) (stamp, bool) {
	if len(b) < 8 || b[2] != ':' && (len(b) < 19 || b[4] != '-') {
		return stamp{}, false
	}
	s := string(b)
	for i, l := range stampLayouts {
		if t, err := time.Parse(l, s); err == nil {
			if i == len(stampLayouts)-1 {
				return stamp{ns: int64(t.Hour())*int64(time.Hour) + int64(t.Minute())*int64(time.Minute) +
					int64(t.Second())*int64(time.Second) + int64(t.Nanosecond()), day: true}, true
			}
			return stamp{ns: t.UnixNano()}, true
		}
	}
	return stamp{}, false
}

// stamp is one timestamp read.
type stamp struct {
	ns  int64
	day bool // a time of day without a date
}

// stampValue converts a timestamp to seconds from the first sample. Times
// of day that pass midnight go on into the next day.
func (rd *Reader) stampValue(b []byte, field int) (float64, error) {
	st, ok := parseStamp(b)
	if !ok {
		return 0, &ParseError{File: rd.name, Line: rd.lineNo, Column: field + 1, Field: rd.names[field], Err: because(ErrBadNumber,
			fmt.Sprintf("not a timestamp: %q; the time column holds timestamps from the first row on (ISO 8601 such as 2026-11-30T06:00:00.125Z, or a time of day such as 06:00:00.125)", b))}
	}
	s := &rd.stamp
	if len(rd.cols[roleTime]) == 0 {
		s.t0, s.day, s.last = st.ns, st.day, st.ns
	}
	if st.day != s.day {
		return 0, &ParseError{File: rd.name, Line: rd.lineNo, Column: field + 1, Field: rd.names[field], Err: because(ErrBadNumber,
			fmt.Sprintf("timestamp %q is written differently from the first row's: a time column mixes dates with times of day", b))}
	}
	ns := st.ns + s.wrap
	if s.day && ns < s.last-12*int64(time.Hour) {
		s.wrap += 24 * int64(time.Hour)
		ns += 24 * int64(time.Hour)
	}
	s.last = ns
	return float64(ns-s.t0) / 1e9, nil
}
