package logs

import (
	"errors"
	"strconv"
	"strings"
)

// Sentinel errors. Every error returned for the content of a log is a
// *ParseError whose Err matches one of these with errors.Is; an invalid
// Format gives a plain error matching ErrFormat, and a file that cannot be
// opened or read gives the wrapped os or io error.
var (
	// ErrEmpty: the file has no bytes, or only blank lines.
	ErrEmpty = errors.New("empty log")
	// ErrNoHeader: no header row naming the columns was found.
	ErrNoHeader = errors.New("no header row")
	// ErrNoData: the header is there but fewer than two data rows follow.
	ErrNoData = errors.New("too few data rows")
	// ErrDelimiter: the delimiter cannot be detected from the header row.
	ErrDelimiter = errors.New("delimiter not detected")
	// ErrMissingColumn: a column named in the Format is not in the header.
	ErrMissingColumn = errors.New("missing column")
	// ErrDuplicateColumn: a column named in the Format appears more than once.
	ErrDuplicateColumn = errors.New("duplicate column")
	// ErrFieldCount: a data row has fewer or more fields than the header.
	ErrFieldCount = errors.New("wrong number of fields")
	// ErrBadNumber: a value is empty, not a number, or not finite.
	ErrBadNumber = errors.New("not a number")
	// ErrTimeOrder: time does not increase strictly from one row to the next.
	ErrTimeOrder = errors.New("time not increasing")
	// ErrTooLarge: the file is larger than Format.MaxBytes.
	ErrTooLarge = errors.New("log too large")
	// ErrLineTooLong: a line is longer than Format.MaxLineBytes.
	ErrLineTooLong = errors.New("line too long")
	// ErrNotText: the file is compressed, UTF-16 or binary, not UTF-8 text.
	ErrNotText = errors.New("not a text log")
	// ErrMetadata: two metadata lines give the same key different values.
	ErrMetadata = errors.New("conflicting metadata")
	// ErrNotLog: a file found beside the logs is not a step-test log (its
	// extension is not a log's and it does not read as one), or an archive
	// member or container cannot be opened.
	ErrNotLog = errors.New("not a step-test log")
	// ErrRepeatedHeader: the header row appears again among the data: two
	// recordings appended in one file.
	ErrRepeatedHeader = errors.New("header repeated")
	// ErrUnit: a unit written in the header or a units row contradicts the
	// unit the spec declares.
	ErrUnit = errors.New("unit contradicts the spec")
	// ErrSamplePeriod: the sample period is implausible for a step test in
	// the declared time unit (time in ms read as s, sample numbers read as
	// seconds).
	ErrSamplePeriod = errors.New("implausible sample period")
	// ErrScale: the response lies far from the command's scale (a factor
	// of ten or more): counts, or another length unit, not converted.
	ErrScale = errors.New("response scale")
	// ErrFormat: the Format itself is invalid.
	ErrFormat = errors.New("invalid log format")
)

// ParseError reports a problem at a place in a log file. Line and Column
// are 1-based; Column counts delimited fields, not bytes. Line is 0 when the
// problem concerns the whole file, Column 0 when it concerns a whole line.
// Field is the name of the column involved, when there is one.
type ParseError struct {
	File   string // file name or path, as given to the reader
	Line   int    // 1-based line number, 0 for the whole file
	Column int    // 1-based field number, 0 for the whole line
	Field  string // column name, "" when not about one column
	Err    error  // what is wrong; matches a sentinel with errors.Is
}

// Error formats the error as file:line:column: column "name": message,
// leaving out the parts that are not known.
func (e *ParseError) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		b.WriteByte(':')
		b.WriteString(strconv.Itoa(e.Line))
		if e.Column > 0 {
			b.WriteByte(':')
			b.WriteString(strconv.Itoa(e.Column))
		}
	}
	b.WriteString(": ")
	if e.Field != "" {
		b.WriteString("column ")
		b.WriteString(strconv.Quote(e.Field))
		b.WriteString(": ")
	}
	if e.Err != nil {
		b.WriteString(e.Err.Error())
	}
	return b.String()
}

// Unwrap returns the underlying error.
func (e *ParseError) Unwrap() error { return e.Err }

// reason is a message of its own that still matches a sentinel.
type reason struct {
	kind error
	text string
}

func (r *reason) Error() string { return r.text }
func (r *reason) Unwrap() error { return r.kind }

func because(kind error, text string) error { return &reason{kind: kind, text: text} }
