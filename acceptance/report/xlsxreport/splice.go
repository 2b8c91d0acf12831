package xlsxreport

import (
	"archive/zip"
	"bytes"
	"encoding/xml"
	"fmt"
	"io"
	"path"
	"regexp"
	"strconv"
	"strings"
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

// spliceSheet writes the sheet part zf to zw with body's rows inserted
// after the header row that excelize wrote, and its dimension set to the
// full table.
func spliceSheet(zw *zip.Writer, zf *zip.File, body *sheetBody) error {
	rc, err := zf.Open()
	if err != nil {
		return err
	}
	frame, err := io.ReadAll(rc)
	rc.Close()
	if err != nil {
		return err
	}
	at := bytes.LastIndex(frame, []byte("</sheetData>"))
	if at < 0 {
		return fmt.Errorf("no sheetData element to fill")
	}
	head, tail := frame[:at], frame[at:]
	dim := []byte(`<dimension ref="A1:` + colName(max(body.cols, 1)) + strconv.Itoa(body.rows+1) + `"/>`)
	if loc := dimensionRef.FindIndex(head); loc != nil {
		head = append(append(append([]byte(nil), head[:loc[0]]...), dim...), head[loc[1]:]...)
	}
	w, err := zw.CreateHeader(&zip.FileHeader{Name: zf.Name, Method: zip.Deflate})
	if err != nil {
		return err
	}
	if _, err := w.Write(head); err != nil {
		return err
	}
	rw := newRowWriter(w, body.cols)
	if err := body.write(rw); err != nil {
		return err
	}
	if err := rw.flush(); err != nil {
		return err
	}
	if rw.row != body.rows+1 {
		return fmt.Errorf("wrote %d data rows, expected %d", rw.row-1, body.rows)
	}
	_, err = w.Write(tail)
	return err
}
