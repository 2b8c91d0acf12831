package logs

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"hash"
	"io"
	"io/fs"
	"os"

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

	// preamble and layout state (layout.go)
	meta      map[string]string // metadata read so far
	metaLine  map[string]int    // the line each key was first given on
	sawText   bool              // a line other than a blank one was met
	sep       byte              // delimiter named by a "sep=" first line
	cand      []byte            // the last header-like line before the data
	candLine  int
	first     []byte // the first header-like line, for a file without data
	firstLine int
	headerAt  int       // line of the header row
	header    []byte    // the header row as written
	skipUntil int       // lines up to this one are not data (log.skip_rows)
	emptyAt   int       // first row of empty values after the data began
	units     [4]string // units written in the header or a units row
	stamp     stampState
	pend      error // a row error held while looking for a repeated header
	pendLeft  int   // lines still looked at
	fields    [][]byte
	unitsAt   int // line of the units row, 0 when none
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
	err := rd.parse()
	if err != nil {
		lg := rd.partial()
		rd.src = nil
		return lg, err
	}
	lg := rd.result(rd.meta)
	rd.src = nil
	if err := rd.check(lg); err != nil {
		return rd.identity(lg), err
	}
	return lg, nil
}

// partial returns what a file that cannot be used still tells: its
// metadata (serial, start time), size and digest, the rest of the file
// being read for the digest. The trace is empty.
func (rd *Reader) partial() *Log {
	if rd.src != nil && rd.h != nil {
		n, _ := io.Copy(rd.h, io.LimitReader(rd.src, max(rd.maxSize-rd.total, 0)))
		rd.total += n
	}
	lg := &Log{Path: rd.name, Size: rd.total, Metadata: rd.meta, Delimiter: rd.delim}
	if rd.h != nil {
		rd.h.Sum(rd.sum[:0])
		lg.SHA256 = hex.EncodeToString(rd.sum[:])
	}
	return lg
}

// identity is lg without its trace: a log read whole but refused.
func (rd *Reader) identity(lg *Log) *Log {
	return &Log{Path: lg.Path, SHA256: lg.SHA256, Size: lg.Size, Metadata: lg.Metadata, Delimiter: lg.Delimiter, Rows: lg.Rows}
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
	rd.meta, rd.metaLine = map[string]string{}, nil
	rd.sawText, rd.sep = false, 0
	rd.cand, rd.candLine, rd.first, rd.firstLine = rd.cand[:0], 0, rd.first[:0], 0
	rd.headerAt, rd.header, rd.skipUntil, rd.emptyAt = 0, rd.header[:0], 0, 0
	rd.units = [4]string{}
	rd.stamp = stampState{}
	rd.pend, rd.pendLeft = nil, 0
	rd.unitsAt = 0
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
