package logs

import (
	"fmt"
	"strconv"
	"strings"
	"unicode/utf8"
)

// parseHeader parses the header row, line at of the file: detects the
// delimiter, maps the columns and checks the units written in the names.
func (rd *Reader) parseHeader(line []byte, at int) error {
	keep := rd.lineNo
	rd.lineNo = at
	err := rd.mapHeader(line)
	rd.lineNo = keep
	rd.headerAt = at
	rd.header = append(rd.header[:0], line...)
	rd.skipUntil = at + rd.f.SkipRows
	return err
}

// mapHeader detects the delimiter and maps the columns of the header row.
func (rd *Reader) mapHeader(line []byte) error {
	if looksNumeric(line) {
		msg := fmt.Sprintf("no header row: the first row %s holds numbers; the log needs a header row naming its columns before the data",
			quoteShort(line))
		if rd.commentLine > 0 {
			msg += fmt.Sprintf(" (line %d %s is a comment: a header row must not start with '#')", rd.commentLine, quoteShort([]byte(rd.comment)))
		}
		return &ParseError{File: rd.name, Line: rd.lineNo, Err: because(ErrNoHeader, msg)}
	}
	d, err := rd.lineDelimiter(line)
	if err != nil {
		return &ParseError{File: rd.name, Line: rd.lineNo, Err: err}
	}
	rd.delim = d
	rd.names = splitHeader(line, rd.delim)
	rd.roles = rd.roles[:0]
	for range rd.names {
		rd.roles = append(rd.roles, roleNone)
	}
	want := []string{rd.f.Time, rd.f.Command, rd.f.Response, rd.f.Effort}
	for role, name := range want {
		if name == "" {
			continue
		}
		at := matchColumn(rd.names, name)
		switch {
		case len(at) == 0 && role == roleEffort:
			// Effort is optional: a log without it is read without it.
			rd.noEffort = true
			continue
		case len(at) == 0:
			return &ParseError{File: rd.name, Line: rd.lineNo, Field: name,
				Err: because(ErrMissingColumn, rd.missingText(line, name, roleKeys[role]))}
		case len(at) > 1:
			fields := make([]string, len(at))
			for i, a := range at {
				fields[i] = strconv.Itoa(a + 1)
			}
			return &ParseError{File: rd.name, Line: rd.lineNo, Column: at[1] + 1, Field: name,
				Err: because(ErrDuplicateColumn, fmt.Sprintf("appears %d times in the header (fields %s); the %s column must be named once",
					len(at), strings.Join(fields, ", "), roleKeys[role]))}
		}
		rd.roles[at[0]] = int8(role)
		if _, unit := splitUnit(rd.names[at[0]]); unit != "" {
			if err := rd.checkUnit(role, at[0], unit, "header"); err != nil {
				return err
			}
		}
	}
	return nil
}

// lineDelimiter is the delimiter of the header row: the Format's, the one
// a "sep=" first line names, or the one detected from the row.
func (rd *Reader) lineDelimiter(line []byte) (byte, error) {
	switch {
	case rd.f.Delimiter != 0:
		return rd.f.Delimiter, nil
	case rd.sep != 0:
		return rd.sep, nil
	}
	return detectDelimiter(line, rd.f.DecimalComma)
}

// matchColumn returns the fields of the header named name: exactly, or,
// when no field is, by the name before a unit written in brackets
// ("position [mm]", "t (s)").
func matchColumn(names []string, name string) []int {
	var at []int
	for i, h := range names {
		if h == name {
			at = append(at, i)
		}
	}
	if len(at) > 0 {
		return at
	}
	for i, h := range names {
		if base, unit := splitUnit(h); unit != "" && base == name {
			at = append(at, i)
		}
	}
	return at
}

// splitUnit splits a column name written with its unit, "t [s]" or
// "position (mm)", into the name and the unit; a name without one is
// returned whole with an empty unit.
func splitUnit(h string) (base, unit string) {
	n := len(h)
	if n < 3 {
		return h, ""
	}
	var open byte
	switch h[n-1] {
	case ']':
		open = '['
	case ')':
		open = '('
	default:
		return h, ""
	}
	i := strings.LastIndexByte(h, open)
	if i <= 0 {
		return h, ""
	}
	return strings.TrimSpace(h[:i]), strings.TrimSpace(h[i+1 : n-1])
}

// hasEffort reports whether the current file's effort column is read.
func (rd *Reader) hasEffort() bool { return rd.f.Effort != "" && !rd.noEffort }

// missingText explains a column missing from the header.
func (rd *Reader) missingText(line []byte, name, role string) string {
	var b strings.Builder
	fmt.Fprintf(&b, "the %s column is not in the header, which has %d column", role, len(rd.names))
	if len(rd.names) != 1 {
		b.WriteByte('s')
	}
	b.WriteString(": ")
	for i, h := range rd.names {
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteString(strconv.Quote(h))
	}
	for _, h := range rd.names {
		if h != name && strings.EqualFold(h, name) {
			fmt.Fprintf(&b, " (%q differs only in letter case)", h)
			break
		}
	}
	if len(rd.names) == 1 {
		fmt.Fprintf(&b, " (the header is not delimited by %s)", delimiterName(rd.delim))
	}
	if !utf8.Valid(line) {
		b.WriteString(" (the header is not valid UTF-8: the file may be saved in a legacy code page such as Windows-1252; save it as UTF-8)")
	}
	return b.String()
}

// detectDelimiter picks the most frequent of comma, semicolon and tab
// outside double quotes; commas do not count when they are decimal marks.
func detectDelimiter(line []byte, decimalComma bool) (byte, error) {
	var comma, semi, tab int
	quoted := false
	for _, c := range line {
		switch c {
		case '"':
			quoted = !quoted
		case ',':
			if !quoted && !decimalComma {
				comma++
			}
		case ';':
			if !quoted {
				semi++
			}
		case '\t':
			if !quoted {
				tab++
			}
		}
	}
	best, n := byte(0), 0
	tie := false
	for _, c := range [...]struct {
		d byte
		n int
	}{{',', comma}, {';', semi}, {'\t', tab}} {
		switch {
		case c.n > n:
			best, n, tie = c.d, c.n, false
		case c.n == n && n > 0:
			tie = true
		}
	}
	switch {
	case n == 0 && decimalComma:
		return 0, because(ErrDelimiter, "the header row has no semicolon or tab between column names (with decimal commas the delimiter cannot be a comma)")
	case n == 0:
		return 0, because(ErrDelimiter, "the header row has no comma, semicolon or tab between column names")
	case tie:
		return 0, because(ErrDelimiter, fmt.Sprintf(
			"the header row mixes delimiters (%d commas, %d semicolons, %d tabs); set the delimiter explicitly", comma, semi, tab))
	}
	return best, nil
}

// splitHeader splits the header row at delimiters outside double quotes
// and trims each name of spaces and one pair of surrounding quotes.
func splitHeader(line []byte, delim byte) []string {
	var names []string
	quoted := false
	from := 0
	for i := 0; i <= len(line); i++ {
		if i < len(line) {
			c := line[i]
			if c == '"' {
				quoted = !quoted
			}
			if c != delim || quoted {
				continue
			}
		}
		names = append(names, headerName(line[from:i]))
		from = i + 1
	}
	return names
}

func headerName(b []byte) string {
	b = trimSpace(b)
	if len(b) >= 2 && b[0] == '"' && b[len(b)-1] == '"' {
		return strings.ReplaceAll(string(b[1:len(b)-1]), `""`, `"`)
	}
	return string(b)
}

// quoteShort quotes a line for a message, shortened when long.
func quoteShort(b []byte) string {
	const maxShown = 60
	if len(b) > maxShown {
		return strconv.Quote(string(b[:maxShown])) + "…"
	}
	return strconv.Quote(string(b))
}
