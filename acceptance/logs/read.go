package logs

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"hash"
	"io"
	"io/fs"
	"math"
	"os"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/stepgate/stepgate/metrics"
)

// Log is one parsed file.
type Log struct {
	Path      string            // file path or name, as given to the reader
	SHA256    string            // hex digest of the file's bytes (computed in the same pass)
	Size      int64             // bytes read
	Metadata  map[string]string // "# key: value" lines; keys lower-cased, values trimmed
	Delimiter byte              // field delimiter used
	Rows      int               // data rows read
	Trace     metrics.Trace     // the columns read; time in seconds
}

// Column roles, as indexes into a row's values.
const (
	roleTime = iota
	roleCommand
	roleResponse
	roleEffort
	roleNone = -1
)

// roleKeys names the roles in messages.
var roleKeys = [...]string{"time", "command", "response", "effort"}

const (
	initialBuffer = 64 << 10 // first read buffer size
	sniffBytes    = 512      // bytes examined for compressed, UTF-16 and binary data
	maxZeroReads  = 100      // reads returning nothing before giving up
)

// Reader reads logs of one Format, reusing its buffers across files. A
// Reader is not safe for concurrent use; give each worker its own.
type Reader struct {
	f       Format
	shared  bool  // traces alias the reader's buffers (see Shared)
	err     error // Format validation result
	shift   int   // power of ten applied to time while parsing
	mul     float64
	dec     byte // decimal mark
	maxLine int
	maxSize int64

	// per-file state
	src         io.Reader
	name        string
	h           hash.Hash
	buf         []byte
	start       int // first unconsumed byte of buf
	end         int // one past the last byte read into buf
	scan        int // bytes before this (from start) hold no newline
	eof         bool
	total       int64
	lineNo      int
	delim       byte
	noEffort    bool     // the Format names an effort column this file lacks
	roles       []int8   // role of each header field
	names       []string // header field names
	cols        [4][]float64
	scratch     []byte // number rewriting
	prevT       []byte // text of the previous row's time
	prevTL      int    // line of the previous row
	comment     string // last comment line before the header that holds a delimiter
	commentLine int    // its line number, 0 when none
	sum         [sha256.Size]byte
}

// Shared makes rd return traces that alias its own column buffers instead
// of a fresh copy per file: a batch worker that measures each log before it
// reads the next saves one allocation and copy of every trace. A trace read
// this way is valid only until rd's next read. Shared returns rd.
func (rd *Reader) Shared() *Reader {
	rd.shared = true
	return rd
}

// WithoutDigest makes rd skip the SHA-256 of the bytes it reads, leaving
// Log.SHA256 empty: for measuring the bare cost of reading and parsing (the
// floor a batch's throughput is compared with), never for a judged log,
// whose digest the reports carry. WithoutDigest returns rd.
func (rd *Reader) WithoutDigest() *Reader {
	rd.h = nil
	return rd
}

// NewReader returns a Reader for logs of Format f. An invalid Format is
// reported by every read.
func NewReader(f Format) *Reader {
	rd := &Reader{f: f, err: f.Validate(), h: sha256.New(), dec: '.'}
	rd.shift, rd.mul = timeConversion(f.TimeScale)
	if f.DecimalComma {
		rd.dec = ','
	}
	rd.maxLine = f.MaxLineBytes
	if rd.maxLine == 0 {
		rd.maxLine = DefaultMaxLineBytes
	}
	rd.maxSize = f.MaxBytes
	if rd.maxSize == 0 {
		rd.maxSize = DefaultMaxBytes
	}
	return rd
}

// ReadFile reads the log at path with Format f.
func ReadFile(path string, f Format) (*Log, error) { return NewReader(f).ReadFile(path) }

// Read reads a log from r with Format f; name is used in errors and as the
// Log's Path.
func Read(r io.Reader, name string, f Format) (*Log, error) { return NewReader(f).Read(r, name) }

// ReadFile reads the log at path. A file larger than the Format's MaxBytes
// is refused before it is read, and so is anything but a regular file (a
// directory, a named pipe, a socket, a device), which is never opened: a
// named pipe without a writer would block the read for ever.
func (rd *Reader) ReadFile(path string) (*Log, error) {
	if rd.err != nil {
		return nil, fmt.Errorf("read log %s: %w", path, rd.err)
	}
	if st, err := os.Stat(path); err != nil {
		return nil, fmt.Errorf("read log: %w", err)
	} else if !st.Mode().IsRegular() && !st.IsDir() {
		return nil, &ParseError{File: path, Err: because(ErrNotText,
			fmt.Sprintf("is %s, not a regular file: a log must be a file", fileKind(st.Mode())))}
	}
	fh, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("read log: %w", err)
	}
	defer fh.Close()
	st, err := fh.Stat()
	if err != nil {
		return nil, fmt.Errorf("read log: %w", err)
	}
	if st.IsDir() {
		return nil, &ParseError{File: path, Err: because(ErrNotText, "is a directory, not a log file")}
	}
	if st.Mode().IsRegular() && st.Size() > rd.maxSize {
		return nil, rd.tooLarge(path, st.Size())
	}
	return rd.Read(fh, path)
}

// Read reads a log from r; name is used in errors and as the Log's Path.
func (rd *Reader) Read(r io.Reader, name string) (*Log, error) {
	if rd.err != nil {
		return nil, fmt.Errorf("read log %s: %w", name, rd.err)
	}
	rd.reset(r, name)
	lg, err := rd.parse()
	rd.src = nil
	return lg, err
}

func (rd *Reader) reset(r io.Reader, name string) {
	rd.src, rd.name = r, name
	if rd.h != nil {
		rd.h.Reset()
	}
	if rd.buf == nil {
		rd.buf = make([]byte, initialBuffer)
	}
	rd.start, rd.end, rd.scan = 0, 0, 0
	rd.eof = false
	rd.total = 0
	rd.lineNo = 0
	rd.delim = 0
	rd.noEffort = false
	rd.roles = rd.roles[:0]
	rd.names = nil
	for i := range rd.cols {
		rd.cols[i] = rd.cols[i][:0]
	}
	rd.prevT = rd.prevT[:0]
	rd.prevTL = 0
	rd.comment, rd.commentLine = "", 0
}

// fileKind names the type of a file that is not a regular file.
func fileKind(m fs.FileMode) string {
	switch {
	case m&fs.ModeNamedPipe != 0:
		return "a named pipe (FIFO)"
	case m&fs.ModeSocket != 0:
		return "a socket"
	case m&fs.ModeCharDevice != 0:
		return "a character device"
	case m&fs.ModeDevice != 0:
		return "a device"
	case m&fs.ModeIrregular != 0:
		return "an irregular file"
	}
	return "a special file (" + m.Type().String() + ")"
}

func (rd *Reader) tooLarge(name string, size int64) error {
	return &ParseError{File: name, Err: because(ErrTooLarge,
		fmt.Sprintf("file is larger than the %d-byte limit (%d bytes or more)", rd.maxSize, size))}
}

// fill reads more bytes into the buffer, growing it when it is full.
func (rd *Reader) fill() error {
	if rd.start > 0 {
		copy(rd.buf, rd.buf[rd.start:rd.end])
		rd.end -= rd.start
		rd.scan -= rd.start
		rd.start = 0
	}
	if rd.end == len(rd.buf) {
		nb := make([]byte, 2*len(rd.buf))
		copy(nb, rd.buf[:rd.end])
		rd.buf = nb
	}
	for range maxZeroReads {
		n, err := rd.src.Read(rd.buf[rd.end:])
		if n > 0 {
			if rd.h != nil {
				rd.h.Write(rd.buf[rd.end : rd.end+n])
			}
			rd.end += n
			rd.total += int64(n)
			if rd.total > rd.maxSize {
				return rd.tooLarge(rd.name, rd.total)
			}
		}
		if err == io.EOF {
			rd.eof = true
			return nil
		}
		if err != nil {
			return fmt.Errorf("read log %s after line %d: %w", rd.name, rd.lineNo, err)
		}
		if n > 0 {
			return nil
		}
	}
	return fmt.Errorf("read log %s after line %d: %w", rd.name, rd.lineNo, io.ErrNoProgress)
}

// next returns the next line without its line end. last reports a final
// line that does not end in a newline; ok is false after the last line.
func (rd *Reader) next() (line []byte, last, ok bool, err error) {
	for {
		if i := bytes.IndexByte(rd.buf[rd.scan:rd.end], '\n'); i >= 0 {
			e := rd.scan + i
			line = rd.buf[rd.start:e]
			rd.start, rd.scan = e+1, e+1
			rd.lineNo++
			line = dropCR(line)
			if len(line) > rd.maxLine {
				return nil, false, false, rd.lineTooLong()
			}
			return line, false, true, nil
		}
		rd.scan = rd.end
		if rd.end-rd.start > rd.maxLine+1 {
			rd.lineNo++
			return nil, false, false, rd.lineTooLong()
		}
		if rd.eof {
			if rd.start == rd.end {
				return nil, false, false, nil
			}
			line = dropCR(rd.buf[rd.start:rd.end])
			rd.start = rd.end
			rd.lineNo++
			if len(line) > rd.maxLine {
				return nil, false, false, rd.lineTooLong()
			}
			return line, true, true, nil
		}
		if err := rd.fill(); err != nil {
			return nil, false, false, err
		}
	}
}

func dropCR(b []byte) []byte {
	if n := len(b); n > 0 && b[n-1] == '\r' {
		return b[:n-1]
	}
	return b
}

func (rd *Reader) lineTooLong() error {
	return &ParseError{File: rd.name, Line: rd.lineNo, Err: because(ErrLineTooLong,
		fmt.Sprintf("line is longer than the %d-byte limit", rd.maxLine))}
}

// sniff refuses compressed, UTF-16 and binary data and skips a UTF-8
// byte-order mark. It reads until sniffBytes are buffered or the file ends.
func (rd *Reader) sniff() error {
	for rd.end < sniffBytes && !rd.eof {
		if err := rd.fill(); err != nil {
			return err
		}
	}
	b := rd.buf[:rd.end]
	notText := func(what string) error {
		return &ParseError{File: rd.name, Err: because(ErrNotText, what)}
	}
	switch {
	case len(b) == 0:
		return &ParseError{File: rd.name, Err: because(ErrEmpty, "file is empty")}
	case bytes.HasPrefix(b, []byte{0x1f, 0x8b}):
		return notText("file is gzip-compressed, not a text log: decompress it first")
	case bytes.HasPrefix(b, []byte{0xff, 0xfe}), bytes.HasPrefix(b, []byte{0xfe, 0xff}):
		return notText("file is UTF-16 text (byte-order mark " + fmt.Sprintf("% x", b[:2]) + "): save the log as UTF-8")
	case bytes.HasPrefix(b, []byte("PK\x03\x04")):
		return notText("file is a ZIP archive (perhaps a spreadsheet workbook), not a delimited text log: export it as CSV")
	case bytes.HasPrefix(b, []byte("%PDF-")):
		return notText("file is a PDF document, not a delimited text log")
	case bytes.HasPrefix(b, []byte{0xef, 0xbb, 0xbf}):
		rd.start, rd.scan = 3, 3
	}
	if nul := bytes.Count(b, []byte{0}); nul > 0 {
		even, odd := 0, 0
		for i, c := range b {
			if c == 0 {
				if i%2 == 0 {
					even++
				} else {
					odd++
				}
			}
		}
		if 4*max(even, odd) >= len(b) && min(even, odd)*8 < max(even, odd) {
			return notText("file looks like UTF-16 text without a byte-order mark (every other byte is NUL): save the log as UTF-8")
		}
		noun := "NUL bytes"
		if nul == 1 {
			noun = "NUL byte"
		}
		return notText(fmt.Sprintf("file holds binary data (%d %s in the first %d bytes), not a text log", nul, noun, len(b)))
	}
	return nil
}

// parse reads the whole log.
func (rd *Reader) parse() (*Log, error) {
	if err := rd.sniff(); err != nil {
		return nil, err
	}
	meta := map[string]string{}
	var metaLine map[string]int
	sawText := false
	header := false
	for {
		line, last, ok, err := rd.next()
		if err != nil {
			return nil, err
		}
		if !ok {
			break
		}
		if header {
			if isBlankRow(line, rd.delim) {
				continue
			}
			if err := rd.row(line, last); err != nil {
				return nil, err
			}
			continue
		}
		t := trimSpace(line)
		if len(t) == 0 {
			continue
		}
		sawText = true
		if err := rd.checkControl(line); err != nil {
			return nil, err
		}
		if t[0] == '#' {
			k, v, isMeta := metadata(t[1:])
			if !isMeta {
				if bytes.ContainsAny(t, ",;\t") {
					rd.commentLine, rd.comment = rd.lineNo, string(t)
				}
				continue
			}
			if old, dup := meta[k]; dup && old != v {
				return nil, &ParseError{File: rd.name, Line: rd.lineNo, Err: because(ErrMetadata,
					fmt.Sprintf("metadata %q is %q here but %q on line %d", k, v, old, metaLine[k]))}
			}
			if metaLine == nil {
				metaLine = map[string]int{}
			}
			if _, dup := meta[k]; !dup {
				meta[k] = v
				metaLine[k] = rd.lineNo
			}
			continue
		}
		if err := rd.header(line); err != nil {
			return nil, err
		}
		header = true
	}
	switch {
	case !header && sawText:
		return nil, &ParseError{File: rd.name, Err: because(ErrNoHeader,
			"no header row: the file holds only comment and metadata lines")}
	case !header:
		return nil, &ParseError{File: rd.name, Err: because(ErrEmpty, "file holds only blank lines")}
	}
	rows := len(rd.cols[roleTime])
	if rows < 2 {
		msg := "the header is not followed by any data rows; at least 2 are needed"
		if rows == 1 {
			msg = "only 1 data row; at least 2 are needed"
		}
		return nil, &ParseError{File: rd.name, Err: because(ErrNoData, msg)}
	}
	lg := &Log{
		Path:      rd.name,
		Size:      rd.total,
		Metadata:  meta,
		Delimiter: rd.delim,
		Rows:      rows,
	}
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
	return lg, nil
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

// header parses the header row: detects the delimiter and maps the columns.
func (rd *Reader) header(line []byte) error {
	if looksNumeric(line) {
		msg := fmt.Sprintf("no header row: the first row %s holds numbers; the log needs a header row naming its columns before the data",
			quoteShort(line))
		if rd.commentLine > 0 {
			msg += fmt.Sprintf(" (line %d %s is a comment: a header row must not start with '#')", rd.commentLine, quoteShort([]byte(rd.comment)))
		}
		return &ParseError{File: rd.name, Line: rd.lineNo, Err: because(ErrNoHeader, msg)}
	}
	rd.delim = rd.f.Delimiter
	if rd.delim == 0 {
		d, err := detectDelimiter(line, rd.f.DecimalComma)
		if err != nil {
			return &ParseError{File: rd.name, Line: rd.lineNo, Err: err}
		}
		rd.delim = d
	}
	rd.names = splitHeader(line, rd.delim)
	for range rd.names {
		rd.roles = append(rd.roles, roleNone)
	}
	want := []string{rd.f.Time, rd.f.Command, rd.f.Response, rd.f.Effort}
	for role, name := range want {
		if name == "" {
			continue
		}
		var at []int
		for i, h := range rd.names {
			if h == name {
				at = append(at, i)
			}
		}
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
	}
	return nil
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

// trimField trims a data field of spaces and one pair of double quotes.
func trimField(b []byte) []byte {
	b = trimSpace(b)
	if len(b) >= 2 && b[0] == '"' && b[len(b)-1] == '"' {
		b = trimSpace(b[1 : len(b)-1])
	}
	return b
}

// quoteShort quotes a line for a message, shortened when long.
func quoteShort(b []byte) string {
	const maxShown = 60
	if len(b) > maxShown {
		return strconv.Quote(string(b[:maxShown])) + "…"
	}
	return strconv.Quote(string(b))
}

// row parses one data row and appends its values.
func (rd *Reader) row(line []byte, last bool) error {
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
	t := vals[roleTime]
	if rd.mul != 1 {
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
