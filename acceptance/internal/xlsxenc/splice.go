package xlsxenc

import (
	"archive/zip"
	"bufio"
	"bytes"
	"encoding/xml"
	"fmt"
	"hash"
	"hash/crc32"
	"io"
	"os"
	"path"
	"regexp"
	"strconv"
	"strings"

	"github.com/klauspost/compress/flate"
)

// sheetParts maps the workbook's sheet names to their part names, read from
// the workbook part and its relationships (ECMA-376 Part 1, §18.2.20
// sheets; Part 2, §9.3 relationships).
func sheetParts(zr *zip.Reader) (map[string]string, error) {
	read := func(name string) ([]byte, error) {
		for _, zf := range zr.File {
			if zf.Name == name {
				rc, err := zf.Open()
				if err != nil {
					return nil, err
				}
				defer rc.Close()
				return io.ReadAll(rc)
			}
		}
		return nil, fmt.Errorf("the package has no part %s", name)
	}
	wb, err := read("xl/workbook.xml")
	if err != nil {
		return nil, err
	}
	rels, err := read("xl/_rels/workbook.xml.rels")
	if err != nil {
		return nil, err
	}
	var book struct {
		Sheets []struct {
			Name string `xml:"name,attr"`
			RID  string `xml:"http://schemas.openxmlformats.org/officeDocument/2006/relationships id,attr"`
		} `xml:"sheets>sheet"`
	}
	if err := xml.Unmarshal(wb, &book); err != nil {
		return nil, fmt.Errorf("xl/workbook.xml: %w", err)
	}
	var rel struct {
		Rels []struct {
			ID     string `xml:"Id,attr"`
			Target string `xml:"Target,attr"`
		} `xml:"Relationship"`
	}
	if err := xml.Unmarshal(rels, &rel); err != nil {
		return nil, fmt.Errorf("xl/_rels/workbook.xml.rels: %w", err)
	}
	targets := map[string]string{}
	for _, r := range rel.Rels {
		t := r.Target
		if strings.HasPrefix(t, "/") {
			t = strings.TrimPrefix(t, "/")
		} else {
			t = path.Join("xl", t)
		}
		targets[r.ID] = t
	}
	parts := map[string]string{}
	for _, s := range book.Sheets {
		if t, ok := targets[s.RID]; ok {
			parts[s.Name] = t
		}
	}
	return parts, nil
}

// dimensionRef matches the dimension element excelize writes for a
// streamed sheet, which covers the header only.
var dimensionRef = regexp.MustCompile(`<dimension ref="[^"]*"\s*(/>|></dimension>)`)

// packedSheet is a long sheet's part, frame and rows, deflated into a
// temporary file ready to be copied into the package as it is.
type packedSheet struct {
	file         *os.File      // the temporary file, or nil when mem holds the data
	mem          *bytes.Buffer // when no temporary file could be made
	crc          uint32
	size, packed int64 // uncompressed and compressed bytes
}

// close closes and removes the temporary file.
func (p *packedSheet) close() {
	if p != nil && p.file != nil {
		p.file.Close()
		os.Remove(p.file.Name())
	}
}

// data is what the packed bytes are read from.
func (p *packedSheet) data() io.Reader {
	if p.file != nil {
		return p.file
	}
	return p.mem
}

// packSheet deflates the sheet part zf with body's rows inserted after the
// header row that excelize wrote, and its dimension set to the full table.
// The long sheets are packed concurrently, one per goroutine, since they
// are most of the workbook's work; each goes to a temporary file so that
// none is held in memory, unless no temporary file can be made.
func packSheet(zf *zip.File, body *Body) (*packedSheet, error) {
	rc, err := zf.Open()
	if err != nil {
		return nil, err
	}
	frame, err := io.ReadAll(rc)
	rc.Close()
	if err != nil {
		return nil, err
	}
	at := bytes.LastIndex(frame, []byte("</sheetData>"))
	if at < 0 {
		return nil, fmt.Errorf("no sheetData element to fill")
	}
	head, tail := frame[:at], frame[at:]
	dim := []byte(`<dimension ref="A1:` + colName(max(body.Cols, 1)) + strconv.Itoa(body.Rows+1) + `"/>`)
	if loc := dimensionRef.FindIndex(head); loc != nil {
		head = append(append(append([]byte(nil), head[:loc[0]]...), dim...), head[loc[1]:]...)
	}

	// A temporary directory that cannot be written to (full, or read-only)
	// costs memory, not the report: the packed sheet is then held in memory.
	p := &packedSheet{}
	var sink io.Writer
	if f, ferr := os.CreateTemp("", "stepgate-sheet-*.deflate"); ferr == nil {
		p.file, sink = f, f
	} else {
		p.mem = new(bytes.Buffer)
		sink = p.mem
	}
	done := false
	defer func() {
		if !done { // an error or a panic
			p.close()
		}
	}()
	out := &countingWriter{w: bufio.NewWriterSize(sink, 1<<16)}
	// The long sheets are most of the package: deflate's fastest level
	// packs their repetitive XML nearly as small in a fraction of the time,
	// and klauspost/compress's at half the time of the standard library's.
	fw, err := flate.NewWriter(out, flate.BestSpeed)
	if err != nil {
		return nil, err
	}
	sum := &summingWriter{w: fw, crc: crc32.NewIEEE()}
	if _, err := sum.Write(head); err != nil {
		return nil, err
	}
	rw := newRowWriter(sum, body.Cols)
	if err := body.Write(rw); err != nil {
		return nil, err
	}
	if err := rw.flush(); err != nil {
		return nil, err
	}
	if rw.row != body.Rows+1 {
		return nil, fmt.Errorf("wrote %d data rows, expected %d", rw.row-1, body.Rows)
	}
	if _, err := sum.Write(tail); err != nil {
		return nil, err
	}
	if err := fw.Close(); err != nil {
		return nil, err
	}
	if err := out.w.Flush(); err != nil {
		return nil, err
	}
	if p.file != nil {
		if _, err := p.file.Seek(0, io.SeekStart); err != nil {
			return nil, err
		}
	}
	p.crc, p.size, p.packed = sum.crc.Sum32(), sum.n, out.n
	done = true
	return p, nil
}

// copyPacked writes a packed sheet into the package as entry name.
func copyPacked(zw *zip.Writer, name string, p *packedSheet) error {
	// CreateRaw writes the header as given: the versions are those
	// CreateHeader sets, 2.0, the least that deflate needs (APPNOTE 4.4.3).
	w, err := zw.CreateRaw(&zip.FileHeader{
		Name: name, Method: zip.Deflate, CRC32: p.crc,
		CompressedSize64: uint64(p.packed), UncompressedSize64: uint64(p.size),
		CreatorVersion: 20, ReaderVersion: 20,
	})
	if err != nil {
		return err
	}
	n, err := io.Copy(w, p.data())
	if err == nil && n != p.packed {
		err = fmt.Errorf("copied %d of %d packed bytes", n, p.packed)
	}
	return err
}

// countingWriter counts the bytes written through it.
type countingWriter struct {
	w *bufio.Writer
	n int64
}

func (c *countingWriter) Write(b []byte) (int, error) {
	n, err := c.w.Write(b)
	c.n += int64(n)
	return n, err
}

// summingWriter keeps the CRC-32 and count of what it passes on.
type summingWriter struct {
	w   io.Writer
	crc hash.Hash32
	n   int64
}

func (s *summingWriter) Write(b []byte) (int, error) {
	n, err := s.w.Write(b)
	s.crc.Write(b[:n])
	s.n += int64(n)
	return n, err
}
