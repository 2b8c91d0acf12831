package xlsxenc

import (
	"archive/zip"
	"bytes"
	"encoding/xml"
	"fmt"
	"io"
	"sort"
	"sync"
)

// Pack copies the workbook package data (as excelize writes it) to w, its
// zip entries sorted by name and their compressed data untouched, except
// that the sheets named in bodies get their data rows after the header row
// and the content-types part is sorted. excelize writes streamed sheets in map order;
// sorting makes the same workbook the same bytes. The order of the parts of
// an Open Packaging Conventions package carries no meaning (ECMA-376
// Part 2).
func Pack(w io.Writer, data []byte, bodies map[string]*Body) error {
	zr, err := zip.NewReader(bytes.NewReader(data), int64(len(data)))
	if err != nil {
		return err
	}
	targets, err := bodyParts(zr, bodies)
	if err != nil {
		return err
	}
	// Pack the long sheets concurrently while the rest is copied; every
	// packing is waited for, and its temporary file removed, before Pack
	// returns.
	p := startPacking(targets)
	defer p.release()
	files := append([]*zip.File(nil), zr.File...)
	sort.SliceStable(files, func(i, j int) bool {
		// [Content_Types].xml first, as writers conventionally put it.
		a, b := files[i].Name, files[j].Name
		if (a == "[Content_Types].xml") != (b == "[Content_Types].xml") {
			return a == "[Content_Types].xml"
		}
		return a < b
	})
	zw := zip.NewWriter(w)
	for _, zf := range files {
		if err := p.copyEntry(zw, zf); err != nil {
			return fmt.Errorf("%s: %w", zf.Name, err)
		}
	}
	return zw.Close()
}

// bodyParts maps the zip entry of every sheet named in bodies to its body.
func bodyParts(zr *zip.Reader, bodies map[string]*Body) (map[*zip.File]*Body, error) {
	parts, err := sheetParts(zr)
	if err != nil {
		return nil, err
	}
	byPart := map[string]*zip.File{}
	for _, zf := range zr.File {
		byPart[zf.Name] = zf
	}
	targets := map[*zip.File]*Body{}
	for name, body := range bodies {
		part, ok := parts[name]
		if !ok || byPart[part] == nil {
			return nil, fmt.Errorf("sheet %s is not in the workbook", name)
		}
		targets[byPart[part]] = body
	}
	return targets, nil
}

// packing is a long sheet being packed, or its outcome.
type packing struct {
	p   *packedSheet
	err error
}

// packings are the long sheets being packed, each on its own goroutine,
// by entry name.
type packings struct {
	fill map[string]chan packing
	wg   sync.WaitGroup
}

// startPacking starts packing every target sheet on a goroutine of its
// own.
func startPacking(targets map[*zip.File]*Body) *packings {
	p := &packings{fill: map[string]chan packing{}}
	for zf, body := range targets {
		ch := make(chan packing, 1)
		p.fill[zf.Name] = ch
		p.wg.Add(1)
		go func() {
			defer p.wg.Done()
			defer func() {
				// A panic here would end the program past the report
				// writer's own recovery; it fails this workbook instead.
				if r := recover(); r != nil {
					ch <- packing{err: fmt.Errorf("internal error packing the sheet: %v", r)}
				}
			}()
			ps, err := packSheet(zf, body)
			ch <- packing{ps, err}
		}()
	}
	return p
}

// release waits for every packing and frees whatever was packed but not
// taken (after an error).
func (p *packings) release() {
	p.wg.Wait()
	for _, ch := range p.fill {
		select {
		case r := <-ch:
			r.p.close()
		default:
		}
	}
}

// copyEntry writes entry zf to zw: the content types sorted, a long sheet
// as packed, any other entry with its compressed data untouched.
func (p *packings) copyEntry(zw *zip.Writer, zf *zip.File) error {
	if zf.Name == "[Content_Types].xml" {
		return canonicalTypes(zw, zf)
	}
	if ch := p.fill[zf.Name]; ch != nil {
		r := <-ch
		if r.err != nil {
			return r.err
		}
		err := copyPacked(zw, zf.Name, r.p)
		r.p.close()
		return err
	}
	h := zf.FileHeader
	rc, err := zf.OpenRaw()
	if err != nil {
		return err
	}
	out, err := zw.CreateRaw(&h)
	if err != nil {
		return err
	}
	_, err = io.Copy(out, rc)
	return err
}

// contentTypes is the content-types part of an Open Packaging Conventions
// package (ECMA-376 Part 2).
type contentTypes struct {
	XMLName   xml.Name     `xml:"http://schemas.openxmlformats.org/package/2006/content-types Types"`
	Defaults  []ctDefault  `xml:"Default"`
	Overrides []ctOverride `xml:"Override"`
}

type ctDefault struct {
	Extension   string `xml:"Extension,attr"`
	ContentType string `xml:"ContentType,attr"`
}

type ctOverride struct {
	PartName    string `xml:"PartName,attr"`
	ContentType string `xml:"ContentType,attr"`
}

// canonicalTypes rewrites the content-types part with its entries sorted:
// excelize lists the image types of a chart in map order.
func canonicalTypes(zw *zip.Writer, zf *zip.File) error {
	rc, err := zf.Open()
	if err != nil {
		return err
	}
	data, err := io.ReadAll(rc)
	rc.Close()
	if err != nil {
		return err
	}
	var ct contentTypes
	if err := xml.Unmarshal(data, &ct); err != nil {
		return err
	}
	sort.Slice(ct.Defaults, func(i, j int) bool { return ct.Defaults[i].Extension < ct.Defaults[j].Extension })
	sort.Slice(ct.Overrides, func(i, j int) bool { return ct.Overrides[i].PartName < ct.Overrides[j].PartName })
	out, err := xml.Marshal(ct)
	if err != nil {
		return err
	}
	h := zip.FileHeader{Name: zf.Name, Method: zip.Deflate}
	w, err := zw.CreateHeader(&h)
	if err != nil {
		return err
	}
	if _, err := io.WriteString(w, xml.Header); err != nil {
		return err
	}
	_, err = w.Write(out)
	return err
}
