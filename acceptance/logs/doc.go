// Package logs owns the ingest of step-test logs: finding the log files of
// a batch in the directories a user names (FindLogs), and reading each into
// a metrics.Trace, together with the file's metadata lines, size and
// SHA-256 digest.
//
// Reading goes through the Source interface. Each log format is one Layout
// in a registry keyed by file name extension (source.go); Open returns a
// Source that reads every registered layout, and LogExtensions, IsLogName
// and FindLogs read the same registry, so the extensions are written once.
// A new format, or a container such as a compressed file or an archive, is
// one Layout and its Source. Today's one layout is delimited text, read by
// Reader.
//
// # Log format
//
// A log is delimited text, UTF-8 (a byte-order mark is accepted):
//
//	# serial: VD25-000123        metadata line: "# key: value"
//	# station: EOL-2             (keys are lower-cased, values trimmed)
//	# any other text             comment line (before the header only)
//	time,command,position,effort header row: one name per column
//	0.000,0.0,0.00,0.00          data rows, one number per column
//	0.001,1.0,0.02,0.85
//
// The delimiter is a comma, semicolon or tab, detected from the header row
// (the most frequent of the three outside double quotes) unless the caller
// sets it. Numbers may use a decimal comma when the caller says so; the
// delimiter then cannot be a comma. Blank lines are skipped and CRLF line
// ends accepted. Column names are matched exactly after trimming spaces and
// one pair of surrounding double quotes. Only the columns named in the
// Format are parsed; other columns are counted but may hold any text.
//
// A metadata key is one word that starts with a letter and holds letters,
// digits, '_', '-' or '.'; a '#' line that does not start with such a word
// and a colon is a comment.
//
// Time is converted to seconds with the Format's time scale. For the scales
// that are powers of ten (ms, µs) the conversion is folded into the decimal
// exponent, so a time of "12.5" ms becomes the float64 nearest to 0.0125,
// with no second rounding.
//
// # Strictness
//
// Every value read must be a finite decimal number (optional sign, digits,
// optional fraction, optional exponent); time must increase strictly from
// row to row; every row must have as many fields as the header; at least two
// data rows are required. Anything else is an error that names the file, the
// line, the field number and the column, in the style of encoding/csv's
// ParseError, and can be tested with errors.Is against the package's
// sentinel errors. Compressed, UTF-16 and binary files are refused with a
// message saying what they look like. Nothing is skipped silently.
//
// # Speed
//
// A Reader reads a file in one pass through a reused buffer, hashing the
// bytes as they arrive, and parses numbers straight from the buffer without
// allocating per field. Numbers are converted exactly: the result is the
// correctly rounded float64, the same as strconv.ParseFloat gives. One
// Reader serves one goroutine; a batch uses one per worker.
package logs
