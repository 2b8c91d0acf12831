package logs

import (
	"errors"
	"strings"
	"testing"
)

func TestReadRejects(t *testing.T) {
	for _, c := range readRejectCases() {
		t.Run(c.name, func(t *testing.T) { checkReadReject(t, c) })
	}
}

// checkReadReject checks one case of TestReadRejects.
func checkReadReject(t *testing.T, c readRejectCase) {
	t.Helper()
	lg, err := Read(strings.NewReader(c.in), "vd25.csv", c.f)
	if err == nil {
		t.Fatalf("Read succeeded with %d rows, want an error", lg.Rows)
	}
	if !errors.Is(err, c.kind) {
		t.Errorf("error %q does not match %v", err, c.kind)
	}
	var pe *ParseError
	if !errors.As(err, &pe) {
		t.Fatalf("error %q is not a *ParseError", err)
	}
	if pe.File != "vd25.csv" || pe.Line != c.line || pe.Column != c.col || pe.Field != c.field {
		t.Errorf("at %s:%d:%d field %q, want vd25.csv:%d:%d field %q (%v)",
			pe.File, pe.Line, pe.Column, pe.Field, c.line, c.col, c.field, err)
	}
	if !strings.Contains(err.Error(), c.phrase) {
		t.Errorf("message %q lacks %q", err, c.phrase)
	}
}

// readRejectCase is one case of TestReadRejects.
type readRejectCase struct {
	name   string
	in     string
	f      Format
	kind   error
	line   int
	col    int
	field  string
	phrase string // must appear in the message
}

// readRejectCases are the cases of TestReadRejects.
func readRejectCases() []readRejectCase {
	const head = "time,command,position\n"
	return []readRejectCase{
		{"empty file", "", base, ErrEmpty, 0, 0, "", "file is empty"},
		{"only blank lines", "\n \r\n\t\n", base, ErrEmpty, 0, 0, "", "only blank lines"},
		{"only comments", "# serial: X\n# note\n", base, ErrNoHeader, 0, 0, "", "only comment and metadata lines"},
		{"numeric first row", "# serial: X\n0,0,0\n0.001,1,0.25\n", base, ErrNoHeader, 2, 0, "", `the first row "0,0,0" holds numbers`},
		{"header written as a comment", "# time,command,position\n0,0,0\n0.001,1,0.25\n", base, ErrNoHeader, 2, 0, "",
			`line 1 "# time,command,position" is a comment: a header row must not start with '#'`},
		{"row of empty values among the data, tab-delimited", "time\tcommand\tposition\n0\t0\t0\n\t\t\n1\t1\t1\n", base, ErrBadNumber, 3, 1, "time", "empty value"},
		{"header only", head, base, ErrNoData, 0, 0, "", "not followed by any data rows"},
		{"header and blank lines", head + "\n\n", base, ErrNoData, 0, 0, "", "not followed by any data rows"},
		{"one row", head + "0,0,0\n", base, ErrNoData, 0, 0, "", "only 1 data row"},
		{"missing column", "time,cmd,pos\n0,0,0\n1,1,1\n", base, ErrMissingColumn, 1, 0, "command",
			`the command column is not in the header, which has 3 columns: "time", "cmd", "pos"`},
		{"missing column, letter case", "Time,command,position\n0,0,0\n1,1,1\n", base, ErrMissingColumn, 1, 0, "time",
			`"Time" differs only in letter case`},
		{"header in a legacy code page", "time,command,position \xb0\n0,0,0\n1,1,1\n",
			Format{Time: "time", Command: "command", Response: "position °"}, ErrMissingColumn, 1, 0, "position °", "not valid UTF-8"},
		{"forced delimiter not in the header", head + "0,0,0\n1,1,1\n", func() Format { f := base; f.Delimiter = '\t'; return f }(),
			ErrMissingColumn, 1, 0, "time", "the header is not delimited by tab"},
		{"duplicate needed column", "time,command,position,time\n0,0,0,0\n1,1,1,1\n", base, ErrDuplicateColumn, 1, 4, "time",
			"appears 2 times in the header (fields 1, 4)"},
		{"NaN value", head + "0,0,0\n0.001,1,NaN\n", base, ErrBadNumber, 3, 3, "position", "NaN is not a measurement"},
		{"Inf value", head + "0,0,0\n0.001,-Inf,0.1\n", base, ErrBadNumber, 3, 2, "command", `"-Inf" is not a measurement`},
		{"Infinity value", head + "0,0,0\n0.001,1,+infinity\n", base, ErrBadNumber, 3, 3, "position", "is not a measurement"},
		{"empty value", head + "0,0,0\n0.001,,0.1\n", base, ErrBadNumber, 3, 2, "command", "empty value"},
		{"blank value", head + "0,0,0\n0.001,1,  \n", base, ErrBadNumber, 3, 3, "position", "empty value"},
		{"text value", head + "0,0,0\n0.001,1,abc\n", base, ErrBadNumber, 3, 3, "position", `not a number: "abc"`},
		{"text time", head + "t0,0,0\n0.001,1,1\n", base, ErrBadNumber, 2, 1, "time", `not a number: "t0"`},
		{"overflowing value", head + "0,0,0\n0.001,1,1e400\n", base, ErrBadNumber, 3, 3, "position", "out of range"},
		{"NaN effort", "time,command,position,effort\n0,0,0,0\n0.001,1,0.1,nan\n", withEffort(base), ErrBadNumber, 3, 4, "effort", "NaN is not a measurement"},
		{"empty effort", "time,command,position,effort\n0,0,0,0\n0.001,1,0.1,\n", withEffort(base), ErrBadNumber, 3, 4, "effort", "empty value"},
		{"repeated time", head + "0,0,0\n0.001,1,0.1\n0.001,1,0.2\n", base, ErrTimeOrder, 4, 1, "time",
			"time 0.001 repeats the time 0.001 on line 3"},
		{"decreasing time", head + "0,0,0\n0.002,1,0.1\n0.0015,1,0.2\n", base, ErrTimeOrder, 4, 1, "time",
			"time 0.0015 is before the time 0.002 on line 3"},
		{"equal after the time scale", head + "1,0,0\n1.0,1,0.1\n", withScale(base, 1e-3), ErrTimeOrder, 3, 1, "time",
			"time 1.0 repeats the time 1 on line 2"},
		{"short row", head + "0,0,0\n0.001,1\n0.002,1,0.5\n", base, ErrFieldCount, 3, 0, "", "row has 2 fields but the header has 3"},
		{"long row", head + "0,0,0\n0.001,1,0.5,7\n", base, ErrFieldCount, 3, 0, "", "row has 4 fields but the header has 3"},
		{"truncated last line", head + "0,0,0\n0.001,1,0.5\n0.002,1", base, ErrFieldCount, 4, 0, "", "the file looks truncated"},
		{"truncated last value", head + "0,0,0\n0.001,1,0.5\n0.002,1,", base, ErrBadNumber, 4, 3, "position", "the file may be truncated"},
		{"decimal comma not announced", "time;command;position\n0,000;0;0\n0,001;12,5;1\n", base, ErrBadNumber, 2, 1, "time",
			`not a number: "0,000" (the file may use decimal commas: set log.decimal_comma: true)`},
		{"decimal comma announced, points used", "time;command;position\n0.000;0;0\n0.001;12.5;1\n", withComma(base), ErrBadNumber, 2, 1, "time",
			"set log.decimal_comma: false"},
		{"mixed delimiters in a row", head + "0,0,0\n0.001;1;0.5\n", base, ErrFieldCount, 3, 0, "",
			"the row holds semicolon characters but the header is delimited by comma"},
		{"mixed delimiters in a field", "time;command;position\n0;0;0\n0.001;1,2,3;0.5\n", base, ErrBadNumber, 3, 2, "command",
			"the row mixes delimiters"},
		{"comment after the header", head + "0,0,0\n# pause\n0.001,1,0.5\n", base, ErrFieldCount, 3, 0, "",
			"comment lines are allowed only before the header"},
		{"conflicting metadata", "# serial: A\n# Serial: B\n" + head + "0,0,0\n1,1,1\n", base, ErrMetadata, 2, 0, "",
			`metadata "serial" is "B" here but "A" on line 1`},
		{"no delimiter in the header", "time command position\n0 0 0\n1 1 1\n", base, ErrDelimiter, 1, 0, "",
			"no comma, semicolon or tab"},
		{"no delimiter with decimal comma", "time,command,position\n0,0,0\n", withComma(base), ErrDelimiter, 1, 0, "",
			"cannot be a comma"},
		{"delimiters tie in the header", "time,command;position\n", base, ErrDelimiter, 1, 0, "", "mixes delimiters"},
		{"gzip", "\x1f\x8b\x08\x00\x00\x00\x00\x00\x00\x03+I\xcd-", base, ErrNotText, 0, 0, "", "gzip-compressed"},
		{"UTF-16 little-endian", utf16Bytes(head+"0,0,0\n1,1,1\n", false, true), base, ErrNotText, 0, 0, "", "UTF-16"},
		{"UTF-16 big-endian", utf16Bytes(head+"0,0,0\n1,1,1\n", true, true), base, ErrNotText, 0, 0, "", "UTF-16"},
		{"UTF-16 without byte-order mark", utf16Bytes(head+"0,0,0\n1,1,1\n", false, false), base, ErrNotText, 0, 0, "",
			"UTF-16 text without a byte-order mark"},
		{"binary with NUL bytes", "\x00\x01\x02\x03\xff\xfa\x10\x00\x00\x00\x07abc", base, ErrNotText, 0, 0, "", "binary data"},
		{"control characters in the header", "time,com\x01mand,position\n0,0,0\n1,1,1\n", base, ErrNotText, 1, 0, "", "control byte 0x01"},
		{"ZIP archive", "PK\x03\x04\x14\x00\x06\x00", base, ErrNotText, 0, 0, "", "ZIP archive"},
		{"line too long", head + "0,0,0\n0.001,1," + strings.Repeat("1", 40) + "\n",
			func() Format { f := base; f.MaxLineBytes = 30; return f }(), ErrLineTooLong, 3, 0, "", "longer than the 30-byte limit"},
		{"last line too long", head + "0,0,0\n0.001,1," + strings.Repeat("1", 40),
			func() Format { f := base; f.MaxLineBytes = 30; return f }(), ErrLineTooLong, 3, 0, "", "longer than the 30-byte limit"},
		{"file too large", head + strings.Repeat("0.001,1,1\n", 10),
			func() Format { f := base; f.MaxBytes = 50; return f }(), ErrTooLarge, 0, 0, "", "larger than the 50-byte limit"},
	}
}

func TestParseErrorText(t *testing.T) {
	// The message leads with file:line:column, as compilers and
	// encoding/csv do, so editors can jump to the place.
	cases := []struct {
		e    ParseError
		want string
	}{
		{ParseError{File: "vd25.csv", Line: 14, Column: 3, Field: "position", Err: because(ErrBadNumber, `not a number: "abc"`)},
			`vd25.csv:14:3: column "position": not a number: "abc"`},
		{ParseError{File: "vd25.csv", Line: 14, Err: because(ErrFieldCount, "row has 2 fields but the header has 3")},
			`vd25.csv:14: row has 2 fields but the header has 3`},
		{ParseError{File: "vd25.csv", Err: because(ErrEmpty, "file is empty")}, `vd25.csv: file is empty`},
	}
	for _, c := range cases {
		if got := c.e.Error(); got != c.want {
			t.Errorf("Error() = %q, want %q", got, c.want)
		}
	}
	if err := error(&cases[0].e); !errors.Is(err, ErrBadNumber) {
		t.Error("errors.Is does not reach the sentinel through ParseError")
	}
}
