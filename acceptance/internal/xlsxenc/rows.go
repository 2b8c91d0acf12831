package xlsxenc

import (
	"fmt"
	"io"
	"math"
	"strconv"

	"github.com/xuri/excelize/v2"
)

// The three long sheets (Units, Checks, Gaps) hold a row per step or per
// check: hundreds of thousands of rows in a large batch. excelize builds each
// streamed cell through an interface value, a reference string and an XML
// escaper, and holds the whole packed sheet in memory; for these sheets
// that was most of the workbook's cost. So excelize writes only their frame
// (columns, frozen header, header row, autofilter and conditional formats)
// and the data rows are written here as SpreadsheetML straight into the
// zip entry as it is compressed (ECMA-376 Part 1, §18.3.1.73 row,
// §18.3.1.4 c, §18.3.1.53 is). The cells are the ones excelize would write:
// numbers as numbers, text as inline strings, empty cells left out.

// Body is the data rows of a long sheet, below the header row that
// excelize writes.
type Body struct {
	Rows  int                    // data rows
	Cols  int                    // columns of the widest row
	Write func(*RowWriter) error // writes the rows, in order
}

// RowWriter writes worksheet rows, buffering them in its own slice. Cells
// are written in ascending column order within a row; a cell written out
// of order is a programming error and panics.
type RowWriter struct {
	w    io.Writer
	buf  []byte
	row  int      // current row number (1-based); the header is row 1
	col  int      // last column written in the current row (1-based)
	refs []string // column letters by column number
	err  error
}

func newRowWriter(w io.Writer, cols int) *RowWriter {
	rw := &RowWriter{w: w, buf: make([]byte, 0, 1<<16), row: 1, refs: make([]string, cols+1)}
	for i := 1; i <= cols; i++ {
		rw.refs[i] = colName(i)
	}
	return rw
}

// Start begins the next row.
func (rw *RowWriter) Start() {
	rw.row++
	rw.col = 0
	rw.buf = append(rw.buf, `<row r="`...)
	rw.buf = strconv.AppendInt(rw.buf, int64(rw.row), 10)
	rw.buf = append(rw.buf, `">`...)
}

// Row returns the number of the current row; the header is row 1.
func (rw *RowWriter) Row() int { return rw.row }

// End finishes the row and passes the buffer on when it is full.
func (rw *RowWriter) End() error {
	rw.buf = append(rw.buf, `</row>`...)
	if len(rw.buf) >= 1<<15 {
		return rw.flush()
	}
	return rw.err
}

func (rw *RowWriter) flush() error {
	if rw.err == nil && len(rw.buf) > 0 {
		_, rw.err = rw.w.Write(rw.buf)
	}
	rw.buf = rw.buf[:0]
	return rw.err
}

// cell opens cell col of the current row with type t ("" for a number).
func (rw *RowWriter) cell(col int, t string) {
	if col <= rw.col || col >= len(rw.refs) {
		// A programming error in a sheet's column order, never the data's.
		panic(fmt.Sprintf("xlsxenc: column %d written after %d (of %d)", col, rw.col, len(rw.refs)-1))
	}
	rw.col = col
	rw.buf = append(rw.buf, `<c r="`...)
	rw.buf = append(rw.buf, rw.refs[col]...)
	rw.buf = strconv.AppendInt(rw.buf, int64(rw.row), 10)
	if t != "" {
		rw.buf = append(rw.buf, `" t="`...)
		rw.buf = append(rw.buf, t...)
	}
	rw.buf = append(rw.buf, `">`...)
}

// Num writes a number in column col; a value that is not finite is written as text, as
// excelize does, since a cell cannot hold it as a number.
func (rw *RowWriter) Num(col int, v float64) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		rw.Str(col, strconv.FormatFloat(v, 'g', -1, 64))
		return
	}
	rw.cell(col, "")
	rw.buf = append(rw.buf, `<v>`...)
	rw.buf = appendCellFloat(rw.buf, v)
	rw.buf = append(rw.buf, `</v></c>`...)
}

// Int writes a whole number in column col.
func (rw *RowWriter) Int(col, v int) {
	rw.cell(col, "")
	rw.buf = append(rw.buf, `<v>`...)
	rw.buf = strconv.AppendInt(rw.buf, int64(v), 10)
	rw.buf = append(rw.buf, `</v></c>`...)
}

// NumPtr writes *v in column col, or nothing when v is nil.
func (rw *RowWriter) NumPtr(col int, v *float64) {
	if v != nil {
		rw.Num(col, *v)
	}
}

// Str writes s in column col as an inline string; an empty s leaves the
// cell out. Text that comes from a log is cleaned by the caller first.
func (rw *RowWriter) Str(col int, s string) {
	if s == "" {
		return
	}
	s = truncateCell(s)
	rw.cell(col, "inlineStr")
	if isSpace(s[0]) || isSpace(s[len(s)-1]) {
		rw.buf = append(rw.buf, `<is><t xml:space="preserve">`...)
	} else {
		rw.buf = append(rw.buf, `<is><t>`...)
	}
	rw.buf = appendCellText(rw.buf, s)
	rw.buf = append(rw.buf, `</t></is></c>`...)
}

func isSpace(c byte) bool { return c == ' ' || c == '\t' || c == '\n' || c == '\r' }

// maxCellChars is the most characters (UTF-16 code units) a cell holds.
const maxCellChars = 32767

// truncateCell shortens s to the characters a cell holds, at a rune
// boundary.
func truncateCell(s string) string {
	if len(s) <= maxCellChars {
		return s
	}
	n := 0
	for i, r := range s {
		w := 1
		if r >= 0x10000 {
			w = 2
		}
		if n+w > maxCellChars {
			return s[:i]
		}
		n += w
	}
	return s
}

// appendCellText appends s escaped for element content. A literal
// "_xHHHH_" is escaped by writing its underscore as "_x005F_", because
// SpreadsheetML reads that pattern as an escaped character (ECMA-376 Part 1,
// §22.9.2.19 ST_Xstring). A carriage return is written as a character
// reference so that XML line-end handling keeps it.
func appendCellText(b []byte, s string) []byte {
	start := 0
	for i := 0; i < len(s); i++ {
		var esc string
		switch c := s[i]; c {
		case '&':
			esc = "&amp;"
		case '<':
			esc = "&lt;"
		case '>':
			esc = "&gt;"
		case '\r':
			esc = "&#xD;"
		case '_':
			if escapedChar(s[i:]) {
				esc = "_x005F_"
			}
		}
		if esc == "" {
			continue
		}
		b = append(b, s[start:i]...)
		b = append(b, esc...)
		start = i + 1
	}
	return append(b, s[start:]...)
}

// escapedChar reports whether s starts with "_xHHHH_".
func escapedChar(s string) bool {
	if len(s) < 7 || s[1] != 'x' || s[6] != '_' {
		return false
	}
	for _, c := range []byte(s[2:6]) {
		if !('0' <= c && c <= '9' || 'a' <= c && c <= 'f' || 'A' <= c && c <= 'F') {
			return false
		}
	}
	return true
}

// appendCellFloat appends v rounded to the 15 significant digits a
// spreadsheet keeps, in the shortest form that reads back as that value
// (xsd:double lexical form, as SpreadsheetML numbers are).
func appendCellFloat(b []byte, v float64) []byte {
	if math.Abs(v) > 1.79769313486231e308 {
		// Rounding up to 15 digits would overflow.
		return strconv.AppendFloat(b, v, 'g', -1, 64)
	}
	return strconv.AppendFloat(b, v, 'g', 15, 64)
}

// colName returns the letters of column n (1 is A).
func colName(n int) string {
	s, _ := excelize.ColumnNumberToName(n)
	return s
}
