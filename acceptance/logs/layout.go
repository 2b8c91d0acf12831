package logs

import (
	"bytes"
	"fmt"
	"strings"
)

// beforeHeader reads one line before the header: a blank line, a comment,
// a metadata line ("# key: value", or without '#': "key,value",
// "key;value", "key=value", "key: value"), a "sep=" first line, a section
// line ("[Data]"), or the header row itself, which it parses and reports.
// The header is the first line that names the time and command columns;
// when the data begin without such a line, the last header-like line
// before them is taken as the header, so that its columns are named in the
// error. A first data row met here is parsed too.
func (rd *Reader) beforeHeader(line []byte, last bool) (isHeader bool, err error) {
	t := trimSpace(line)
	if len(t) == 0 {
		return false, nil
	}
	first := !rd.sawText
	rd.sawText = true
	if err := rd.checkControl(line); err != nil {
		return false, err
	}
	if hl := rd.f.HeaderLine; hl > 0 {
		return rd.atHeaderLine(t, hl)
	}
	if t[0] == '#' {
		return false, rd.hashLine(t)
	}
	if first {
		if d, ok := sepLine(t); ok {
			rd.sep = d
			return false, nil
		}
	}
	if isSection(t) {
		return false, nil
	}
	if rd.namesColumns(line) {
		return true, rd.parseHeader(line, rd.lineNo)
	}
	if looksNumeric(t) {
		if len(rd.cand) == 0 {
			return false, rd.parseHeader(line, rd.lineNo)
		}
		if err := rd.parseHeader(rd.cand, rd.candLine); err != nil {
			return false, err
		}
		return true, rd.row(line, last)
	}
	if k, v, ok := plainMetadata(t); ok {
		return false, rd.addMeta(k, v)
	}
	rd.cand, rd.candLine = append(rd.cand[:0], line...), rd.lineNo
	if len(rd.first) == 0 {
		rd.first, rd.firstLine = append(rd.first[:0], line...), rd.lineNo
	}
	return false, nil
}

// atHeaderLine handles a line before or at the header line the Format
// names: lines before it are metadata or comments, whatever they hold.
func (rd *Reader) atHeaderLine(t []byte, hl int) (bool, error) {
	switch {
	case rd.lineNo == hl:
		if t[0] == '#' {
			t = trimSpace(t[1:])
		}
		return true, rd.parseHeader(t, rd.lineNo)
	case rd.lineNo > hl:
		return false, &ParseError{File: rd.name, Line: hl, Err: because(ErrNoHeader,
			fmt.Sprintf("line %d, the header line the spec names (log.header_line), is blank", hl))}
	case t[0] == '#':
		return false, rd.hashLine(t)
	}
	if k, v, ok := plainMetadata(t); ok {
		return false, rd.addMeta(k, v)
	}
	return false, nil
}

// hashLine reads a line that starts with '#': "# key: value" metadata or a
// comment.
func (rd *Reader) hashLine(t []byte) error {
	k, v, isMeta := metadata(t[1:])
	if !isMeta {
		if bytes.ContainsAny(t, ",;\t") {
			rd.commentLine, rd.comment = rd.lineNo, string(t)
		}
		return nil
	}
	return rd.addMeta(k, v)
}

// addMeta records a metadata key; a key given twice must have one value.
func (rd *Reader) addMeta(k, v string) error {
	if old, dup := rd.meta[k]; dup {
		if old != v {
			return &ParseError{File: rd.name, Line: rd.lineNo, Err: because(ErrMetadata,
				fmt.Sprintf("metadata %q is %q here but %q on line %d", k, v, old, rd.metaLine[k]))}
		}
		return nil
	}
	if rd.metaLine == nil {
		rd.metaLine = map[string]int{}
	}
	rd.meta[k], rd.metaLine[k] = v, rd.lineNo
	return nil
}

// namesColumns reports whether a line names the time column and the
// command or response column, as written or with a unit in brackets: the
// header row.
func (rd *Reader) namesColumns(line []byte) bool {
	d, err := rd.lineDelimiter(line)
	if err != nil {
		return false
	}
	names := splitHeader(line, d)
	return len(matchColumn(names, rd.f.Time)) > 0 &&
		(len(matchColumn(names, rd.f.Command)) > 0 || len(matchColumn(names, rd.f.Response)) > 0)
}

// sepLine reads a "sep=;" line, which spreadsheet programs write first to
// name the delimiter.
func sepLine(t []byte) (byte, bool) {
	if len(t) < 5 || !bytes.EqualFold(t[:4], []byte("sep=")) {
		return 0, false
	}
	switch rest := trimSpace(t[4:]); {
	case len(rest) == 1 && (rest[0] == ',' || rest[0] == ';'):
		return rest[0], true
	case len(rest) == 0 && t[4] == '\t':
		return '\t', true
	case bytes.EqualFold(rest, []byte(`\t`)):
		return '\t', true
	}
	return 0, false
}

// isSection reports a section line such as "[Header]" or "[Data]", alone
// on its line (a trailing delimiter or two allowed).
func isSection(t []byte) bool {
	t = bytes.TrimRight(t, ",;\t ")
	return len(t) >= 3 && t[0] == '[' && t[len(t)-1] == ']' && bytes.IndexByte(t[1:len(t)-1], ']') < 0
}

// plainMetadata reads a metadata line written without '#': a key of words
// (letters, digits, spaces, '_', '-', '.'; starting with a letter), then
// ':', '=', ',', ';' or a tab, then the value. The key is lower-cased with
// spaces as '_' ("Serial Number" is serial_number); trailing delimiters
// that spreadsheet exports pad rows with are dropped from the value.
func plainMetadata(t []byte) (key, value string, ok bool) {
	if len(t) == 0 || !isLetter(t[0]) {
		return "", "", false
	}
	i := 0
	for i < len(t) && (isKeyByte(t[i]) || t[i] == ' ') {
		i++
	}
	if i == len(t) {
		return "", "", false
	}
	sep := t[i]
	v := bytes.TrimRight(t[i+1:], ",;\t ")
	switch sep {
	case ':', '=':
	case ',', ';', '\t':
		if bytes.ContainsAny(v, ",;\t") {
			return "", "", false // a row of several fields: a header, not key and value
		}
	default:
		return "", "", false
	}
	k := strings.ToLower(string(trimSpace(t[:i])))
	k = strings.Join(strings.Fields(k), "_")
	v = trimField(v)
	return k, string(v), k != ""
}

func isLetter(c byte) bool { return 'a' <= c && c <= 'z' || 'A' <= c && c <= 'Z' }

// isEmptyRow reports a row of delimiters and spaces only: a row without
// values, which spreadsheet exports leave at the end.
func isEmptyRow(b []byte, delim byte) bool {
	for _, c := range b {
		if c != delim && c != ' ' && c != '\t' {
			return false
		}
	}
	return true
}

// checkUnit compares a unit written in the file for a column of role with
// the unit the spec declares, and refuses a contradiction.
func (rd *Reader) checkUnit(role, field int, unit, where string) error {
	rd.units[role] = unit
	declared, what, key := "", "", ""
	switch role {
	case roleTime:
		declared, what, key = rd.f.TimeUnit, "time", "time_unit"
		if declared == "" {
			declared = "s"
		}
		if rd.stampOnly() {
			return nil
		}
		got, known := timeUnitName(unit)
		if !known || got == timeUnitCanon(declared) {
			return nil
		}
		unit = got
	case roleCommand, roleResponse:
		declared, what, key = rd.f.ValueUnit, roleKeys[role], "response_unit"
		if declared == "" || !rd.f.Scale[role-1].IsIdentity() || sameUnit(unit, declared) {
			return nil
		}
	default:
		return nil
	}
	return &ParseError{File: rd.name, Line: rd.lineNo, Column: field + 1, Field: rd.names[field], Err: because(ErrUnit,
		fmt.Sprintf("the %s says the %s column is in %s but the spec's %s is %s: correct %s in the spec, or give log.scale for a column written in other units; stepgate never rescales on its own",
			where, what, unit, key, declared, key))}
}

// stampOnly is false: time units are checked for numeric time columns;
// absolute timestamps carry their own.
func (rd *Reader) stampOnly() bool { return rd.stamp.on }

// timeUnitName reads a time unit as written in a header.
func timeUnitName(u string) (canon string, known bool) {
	switch strings.ToLower(strings.TrimSpace(u)) {
	case "s", "sec", "secs", "second", "seconds":
		return "s", true
	case "ms", "msec", "millisecond", "milliseconds":
		return "ms", true
	case "us", "µs", "μs", "usec", "microsecond", "microseconds":
		return "us", true
	}
	return "", false
}

func timeUnitCanon(u string) string {
	if c, ok := timeUnitName(u); ok {
		return c
	}
	return u
}

// sameUnit compares two units as written, without regard to case and
// spaces ("mm" and "MM", "deg" and "°" are not the same).
func sameUnit(a, b string) bool {
	norm := func(s string) string { return strings.ToLower(strings.Join(strings.Fields(s), "")) }
	return norm(a) == norm(b)
}
