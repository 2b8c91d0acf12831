package pdfenc

import (
	"bytes"
	"compress/zlib"
	"errors"
	"io"
	"regexp"
	"runtime"
	"sort"
	"strconv"
	"sync"
	"sync/atomic"
)

// Compress writes doc, a document that gofpdf wrote without
// compression, to w with the content stream of every page compressed, and
// the cross-reference table and the startxref offset moved to match. The
// result is byte for byte the document gofpdf writes with compression on:
// each page's content in a stream of its own, zlib at best speed, with
// "/Filter /FlateDecode" before its length. gofpdf starts a new compressor
// for every page, a megabyte to allocate and clear each time; here one
// compressor per core is reset from page to page, which gives the same
// bytes.
//
// A document laid out other than as gofpdf writes it (see pageContents)
// is written as it is: uncompressed, but whole.
func Compress(w io.Writer, doc []byte) error {
	objs, xref, ok := pageContents(doc)
	if !ok {
		_, err := w.Write(doc)
		return err
	}
	pc, err := newPageCompressor()
	if err != nil {
		return err
	}
	var out bytes.Buffer
	out.Grow(len(doc) / 3)
	// ends[i] is where the i-th content object ended in doc, moved[i] how
	// far everything after it has moved in the output.
	ends := make([]int, len(objs))
	moved := make([]int, len(objs))
	cur := 0
	for c0 := 0; c0 < len(objs); c0 += len(pc.packed) {
		part := objs[c0:min(c0+len(pc.packed), len(objs))]
		if err := pc.compress(doc, part); err != nil {
			return err
		}
		for k, o := range part {
			i := c0 + k
			z := &pc.packed[k]
			out.Write(doc[cur:o.start])
			before := out.Len()
			out.WriteString(strconv.Itoa(o.num))
			out.WriteString(" 0 obj\n<</Filter /FlateDecode /Length ")
			out.WriteString(strconv.Itoa(z.Len()))
			out.WriteString(">>\nstream\n")
			out.Write(z.Bytes())
			out.WriteString("\nendstream\nendobj\n")
			ends[i] = o.end
			moved[i] = out.Len() - before - (o.end - o.start)
			if i > 0 {
				moved[i] += moved[i-1]
			}
			cur = o.end
		}
	}
	out.Write(doc[cur:xref.start])
	// An object moves as far as the last content object before it.
	shift := func(off int) int {
		if k := sort.SearchInts(ends, off+1); k > 0 {
			return moved[k-1]
		}
		return 0
	}
	newXref := xref.start + shift(xref.start)
	out.WriteString("xref\n0 ")
	out.WriteString(strconv.Itoa(len(xref.offsets) + 1))
	out.WriteString("\n0000000000 65535 f \n")
	var num [20]byte
	for _, off := range xref.offsets {
		b := strconv.AppendInt(num[:0], int64(off+shift(off)), 10)
		for i := len(b); i < 10; i++ {
			out.WriteByte('0')
		}
		out.Write(b)
		out.WriteString(" 00000 n \n")
	}
	out.Write(doc[xref.trailer:xref.startxref])
	out.WriteString("startxref\n")
	out.WriteString(strconv.Itoa(newXref))
	out.WriteString("\n%%EOF\n")
	_, err = w.Write(out.Bytes())
	return err
}

// content is the uncompressed content stream object of a page: doc[start:end]
// is "num 0 obj\n<</Length length>>\nstream\n", the data at doc[data:],
// "\nendstream\nendobj\n".
type content struct {
	num, start, end, data, length int
}

// xrefTable is where the cross-reference section of a document lies.
type xrefTable struct {
	start     int   // "xref"
	offsets   []int // of objects 1, 2, …
	trailer   int   // "trailer"
	startxref int   // "startxref"
}

var (
	contentsRef = regexp.MustCompile(`/Contents (\d+) 0 R>>`)
	xrefHead    = regexp.MustCompile(`\Axref\n0 (\d+)\n0000000000 65535 f \n`)
	tail        = regexp.MustCompile(`startxref\n(\d+)\n%%EOF\n\z`)
)

// pageContents finds the page content streams and the cross-reference
// table of a document gofpdf wrote without compression, and reports
// whether every piece is where and as gofpdf writes it.
func pageContents(doc []byte) ([]content, xrefTable, bool) {
	var x xrefTable
	m := tail.FindSubmatchIndex(doc)
	if m == nil {
		return nil, x, false
	}
	x.startxref = m[0]
	x.start, _ = strconv.Atoi(string(doc[m[2]:m[3]]))
	if x.start <= 0 || x.start >= x.startxref {
		return nil, x, false
	}
	h := xrefHead.FindSubmatchIndex(doc[x.start:x.startxref])
	if h == nil {
		return nil, x, false
	}
	n, _ := strconv.Atoi(string(doc[x.start+h[2] : x.start+h[3]]))
	const entry = len("0000000000 00000 n \n")
	at := x.start + h[1]
	if n < 1 || at+(n-1)*entry > x.startxref {
		return nil, x, false
	}
	x.offsets = make([]int, n-1)
	for i := range x.offsets {
		e := doc[at+i*entry : at+(i+1)*entry]
		if !bytes.HasSuffix(e, []byte(" 00000 n \n")) {
			return nil, x, false
		}
		off, err := strconv.Atoi(string(e[:10]))
		if err != nil || off <= 0 || off >= x.start {
			return nil, x, false
		}
		x.offsets[i] = off
	}
	x.trailer = at + (n-1)*entry
	if !bytes.HasPrefix(doc[x.trailer:], []byte("trailer\n")) {
		return nil, x, false
	}

	var objs []content
	for _, r := range contentsRef.FindAllSubmatchIndex(doc[:x.start], -1) {
		num, _ := strconv.Atoi(string(doc[r[2]:r[3]]))
		if num < 1 || num > len(x.offsets) {
			return nil, x, false
		}
		c := content{num: num, start: x.offsets[num-1]}
		head := strconv.Itoa(num) + " 0 obj\n<</Length "
		if !bytes.HasPrefix(doc[c.start:], []byte(head)) {
			return nil, x, false
		}
		p := c.start + len(head)
		e := bytes.IndexByte(doc[p:x.start], '>')
		if e < 0 {
			return nil, x, false
		}
		length, err := strconv.Atoi(string(doc[p : p+e]))
		if err != nil || length < 0 {
			return nil, x, false
		}
		p += e
		if !bytes.HasPrefix(doc[p:], []byte(">>\nstream\n")) {
			return nil, x, false
		}
		c.data, c.length = p+len(">>\nstream\n"), length
		c.end = c.data + length + len("\nendstream\nendobj\n")
		if c.end > x.start || !bytes.Equal(doc[c.data+length:c.end], []byte("\nendstream\nendobj\n")) {
			return nil, x, false
		}
		objs = append(objs, c)
	}
	sort.Slice(objs, func(i, j int) bool { return objs[i].start < objs[j].start })
	for i := 1; i < len(objs); i++ {
		if objs[i].start < objs[i-1].end {
			return nil, x, false
		}
	}
	return objs, x, true
}

// pageCompressor compresses page content streams with one zlib compressor
// per core, a few pages at a time, so that only those pages' compressed
// bytes are held besides the document. Each stream is compressed on its
// own and its bytes depend on its content alone, so the split between
// compressors does not change them.
type pageCompressor struct {
	zw     []*zlib.Writer
	packed []bytes.Buffer // the compressed streams of the pages in hand
}

func newPageCompressor() (*pageCompressor, error) {
	workers := max(runtime.GOMAXPROCS(0), 1)
	pc := &pageCompressor{packed: make([]bytes.Buffer, 8*workers)}
	for range workers {
		zw, err := zlib.NewWriterLevel(io.Discard, zlib.BestSpeed)
		if err != nil {
			return nil, err
		}
		pc.zw = append(pc.zw, zw)
	}
	return pc, nil
}

// compress compresses the content streams part of doc (at most
// len(pc.packed)) into pc.packed[:len(part)].
func (pc *pageCompressor) compress(doc []byte, part []content) error {
	errs := make([]error, len(pc.zw))
	var next atomic.Int64
	var wg sync.WaitGroup
	for w, zw := range pc.zw {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				k := int(next.Add(1) - 1)
				if k >= len(part) {
					return
				}
				o, z := part[k], &pc.packed[k]
				z.Reset()
				zw.Reset(z)
				if _, err := zw.Write(doc[o.data : o.data+o.length]); err != nil {
					errs[w] = err
					return
				}
				if err := zw.Close(); err != nil {
					errs[w] = err
					return
				}
			}
		}()
	}
	wg.Wait()
	return errors.Join(errs...)
}
