package rigsim

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
)

// MetaStyle is how metadata lines before the header are written.
type MetaStyle uint8

// The metadata styles rigs and loggers use.
const (
	MetaComment MetaStyle = iota // # key: value
	MetaPair                     // key<delimiter>value
	MetaEquals                   // key=value
)

// Meta is one metadata line, written in order.
type Meta struct{ Key, Value string }

// CSVLayout is the shape of a written log. The zero value writes
// comma-separated columns time, command, position, effort with a header
// and the shortest decimal that reads back exactly.
type CSVLayout struct {
	Delimiter  rune      // field separator; zero means ','
	Columns    [4]string // header names of time, command, position, effort; empty keeps the default name
	OmitEffort bool      // leave the effort column out
	Metadata   []Meta
	MetaStyle  MetaStyle
	// DecimalComma writes 0,5 for 0.5; it needs a delimiter other than ','.
	DecimalComma bool
	// Digits is the number of significant digits; zero means the shortest
	// representation that reads back exactly.
	Digits int
	// Decimals, when positive, writes fixed-point numbers with this many
	// decimals (0.012500) instead, as many loggers do.
	Decimals int
	// TimeScale multiplies the times written (1000 for milliseconds);
	// zero means 1.
	TimeScale float64
	CRLF      bool // end lines with CR LF
}

var defaultColumns = [4]string{"time", "command", "position", "effort"}

func (l CSVLayout) check() error {
	d := l.delim()
	switch {
	case d == '"' || d == '\r' || d == '\n' || d == '.' || d == '-' || d == '+' || (d >= '0' && d <= '9'):
		return fmt.Errorf("csv layout: %q cannot be a delimiter", d)
	case l.DecimalComma && d == ',':
		return errors.New("csv layout: a decimal comma needs a delimiter other than ','")
	case l.Digits < 0 || l.Digits > 17:
		return fmt.Errorf("csv layout: %d significant digits; need 0 (shortest) to 17", l.Digits)
	case l.Decimals < 0 || l.Decimals > 30:
		return fmt.Errorf("csv layout: %d decimals; need 0 (not fixed) to 30", l.Decimals)
	case l.MetaStyle > MetaEquals:
		return fmt.Errorf("csv layout: unknown metadata style %d", l.MetaStyle)
	}
	return nil
}

func (l CSVLayout) delim() rune {
	if l.Delimiter == 0 {
		return ','
	}
	return l.Delimiter
}

// WriteCSV writes the record as a delimited log: metadata lines, a header
// row, then one row per sample. Names and metadata holding the delimiter,
// a quote or a line break are quoted as RFC 4180 says.
func WriteCSV(w io.Writer, rec Record, layout CSVLayout) error {
	if err := layout.check(); err != nil {
		return err
	}
	n := rec.Len()
	if len(rec.Command) != n || len(rec.Position) != n || (!layout.OmitEffort && len(rec.Effort) != n) {
		return fmt.Errorf("csv: record columns differ in length: time %d, command %d, position %d, effort %d",
			n, len(rec.Command), len(rec.Position), len(rec.Effort))
	}
	bw := bufio.NewWriter(w)
	eol := "\n"
	if layout.CRLF {
		eol = "\r\n"
	}
	cols := 4
	if layout.OmitEffort {
		cols = 3
	}
	d := string(layout.delim())
	layout.writeHead(bw, cols, eol)
	scale := layout.TimeScale
	if scale == 0 {
		scale = 1
	}
	var buf []byte
	for i := 0; i < n; i++ {
		buf = buf[:0]
		vals := [4]float64{rec.T[i] * scale, rec.Command[i], rec.Position[i], 0}
		if !layout.OmitEffort {
			vals[3] = rec.Effort[i]
		}
		for c := 0; c < cols; c++ {
			if c > 0 {
				buf = append(buf, d...)
			}
			buf = layout.appendNumber(buf, vals[c])
		}
		buf = append(buf, eol...)
		if _, err := bw.Write(buf); err != nil {
			return fmt.Errorf("csv: writing row %d: %w", i+1, err)
		}
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("csv: %w", err)
	}
	return nil
}

// writeHead writes the metadata lines and the header row; a write error
// sticks in the bufio.Writer and is returned by its Flush.
func (l CSVLayout) writeHead(bw *bufio.Writer, cols int, eol string) {
	d := string(l.delim())
	for _, m := range l.Metadata {
		switch l.MetaStyle {
		case MetaComment:
			bw.WriteString("# " + m.Key + ": " + m.Value + eol)
		case MetaPair:
			bw.WriteString(l.quote(m.Key) + d + l.quote(m.Value) + eol)
		case MetaEquals:
			bw.WriteString(m.Key + "=" + m.Value + eol)
		}
	}
	for c := 0; c < cols; c++ {
		name := l.Columns[c]
		if name == "" {
			name = defaultColumns[c]
		}
		if c > 0 {
			bw.WriteString(d)
		}
		bw.WriteString(l.quote(name))
	}
	bw.WriteString(eol)
}

// quote quotes a field that holds the delimiter, a quote or a line break.
func (l CSVLayout) quote(s string) string {
	if !strings.ContainsAny(s, string(l.delim())+"\"\r\n") {
		return s
	}
	return `"` + strings.ReplaceAll(s, `"`, `""`) + `"`
}

func (l CSVLayout) appendNumber(b []byte, v float64) []byte {
	start := len(b)
	switch {
	case l.Decimals > 0:
		b = strconv.AppendFloat(b, v, 'f', l.Decimals, 64)
	case l.Digits > 0:
		b = strconv.AppendFloat(b, v, 'g', l.Digits, 64)
	default:
		b = strconv.AppendFloat(b, v, 'g', -1, 64)
	}
	if l.DecimalComma {
		for i := start; i < len(b); i++ {
			if b[i] == '.' {
				b[i] = ','
			}
		}
	}
	return b
}
