package logs

import (
	"archive/zip"
	"compress/gzip"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"os"
	"path"
	"path/filepath"
	"sort"
	"strings"
)

// MemberSep joins an archive's path and a member's name in the path of a
// log inside a ZIP archive: "lot.zip!unit7.csv" is the member unit7.csv
// of lot.zip. Each member is a unit of its own.
const MemberSep = "!"

// SplitMember splits the path of a log inside a ZIP archive into the
// archive's path and the member's name; ok is false for any other path.
// The archive is the longest prefix ending in ".zip" (any case) followed
// by MemberSep.
func SplitMember(p string) (archive, member string, ok bool) {
	low := strings.ToLower(p)
	i := strings.LastIndex(low, ".zip"+MemberSep)
	if i < 0 {
		return "", "", false
	}
	return p[:i+4], p[i+4+len(MemberSep):], true
}

// UnitName is the name a log gives its unit when its metadata names no
// serial: the file (or archive member) name without its directories, its
// compression extension and its log extension ("lot.zip!day1/unit7.csv"
// and "unit7.csv.gz" both give "unit7").
func UnitName(p string) string {
	if _, m, ok := SplitMember(p); ok {
		p = m
	}
	base := path.Base(filepath.ToSlash(p))
	if strings.EqualFold(path.Ext(base), ".gz") {
		base = base[:len(base)-3]
	}
	return strings.TrimSuffix(base, path.Ext(base))
}

// zipMembers lists the files of a ZIP archive as member paths, sorted;
// directories are left out.
func zipMembers(archive string) ([]string, error) {
	zr, err := zip.OpenReader(archive)
	if err != nil {
		return nil, err
	}
	defer zr.Close()
	var out []string
	for _, f := range zr.File {
		if f.FileInfo().IsDir() {
			continue
		}
		out = append(out, archive+MemberSep+f.Name)
	}
	sort.Strings(out)
	return out, nil
}

// gzipSource reads a gzip-compressed log (".gz") as the log it holds. The
// digest is of the compressed file's bytes, as stored.
type gzipSource struct{ rd *Reader }

func newGzip(f Format, o Options) Source {
	rd := NewReader(f).WithoutDigest()
	if o.Shared {
		rd.Shared()
	}
	return &gzipSource{rd: rd}
}

// ReadFile decompresses and reads the log at p.
func (g *gzipSource) ReadFile(p string) (*Log, error) {
	fh, err := openRegular(p, g.rd.maxSize)
	if err != nil {
		return nil, err
	}
	defer fh.Close()
	h := sha256.New()
	raw := io.TeeReader(fh, h)
	zr, err := gzip.NewReader(raw)
	if err != nil {
		return nil, &ParseError{File: p, Err: because(ErrNotLog, "the file is named .gz but cannot be decompressed: "+err.Error())}
	}
	defer zr.Close()
	lg, err := g.rd.Read(zr, p)
	if lg != nil {
		io.Copy(io.Discard, raw) // the rest of the compressed bytes, for the digest
		lg.SHA256 = hex.EncodeToString(h.Sum(nil))
	}
	return lg, err
}

// zipSource reads one member of a ZIP archive, named by its member path
// (SplitMember). The digest is of the member's bytes as extracted.
type zipSource struct{ rd *Reader }

func newZip(f Format, o Options) Source {
	rd := NewReader(f)
	if o.Shared {
		rd.Shared()
	}
	if o.NoDigest {
		rd.WithoutDigest()
	}
	return &zipSource{rd: rd}
}

// ReadFile reads the archive member p names, or refuses an archive named
// without a member (one FindLogs could not list).
func (z *zipSource) ReadFile(p string) (*Log, error) {
	archive, member, ok := SplitMember(p)
	if !ok {
		if _, err := zipMembers(p); err != nil {
			return nil, &ParseError{File: p, Err: because(ErrNotLog, "the ZIP archive cannot be opened: "+err.Error())}
		}
		return nil, &ParseError{File: p, Err: because(ErrNotLog,
			"a ZIP archive is read member by member: name its logs as "+p+MemberSep+"NAME, or the archive's folder")}
	}
	zr, err := zip.OpenReader(archive)
	if err != nil {
		return nil, &ParseError{File: p, Err: because(ErrNotLog, "the ZIP archive cannot be opened: "+err.Error())}
	}
	defer zr.Close()
	for _, f := range zr.File {
		if f.Name != member {
			continue
		}
		if int64(f.UncompressedSize64) > z.rd.maxSize || f.UncompressedSize64 > 1<<62 {
			return nil, z.rd.tooLarge(p, int64(min(f.UncompressedSize64, 1<<62)))
		}
		rc, err := f.Open()
		if err != nil {
			return nil, &ParseError{File: p, Err: because(ErrNotLog, "the archive member cannot be extracted: "+err.Error())}
		}
		defer rc.Close()
		if !IsLogName(member) || strings.EqualFold(path.Ext(member), ".zip") {
			return readNotLog(z.rd, rc, p, member)
		}
		if strings.EqualFold(path.Ext(member), ".gz") {
			gz, err := gzip.NewReader(rc)
			if err != nil {
				return nil, &ParseError{File: p, Err: because(ErrNotLog, "the member is named .gz but cannot be decompressed: "+err.Error())}
			}
			return z.rd.Read(gz, p)
		}
		return z.rd.Read(rc, p)
	}
	return nil, &ParseError{File: p, Err: because(ErrNotLog, fmt.Sprintf("the archive %s has no member %q", archive, member))}
}

// openRegular opens a regular file no larger than limit.
func openRegular(p string, limit int64) (*os.File, error) {
	st, err := os.Stat(p)
	if err != nil {
		return nil, fmt.Errorf("read log: %w", err)
	}
	if !st.Mode().IsRegular() {
		return nil, &ParseError{File: p, Err: because(ErrNotText,
			fmt.Sprintf("is %s, not a regular file: a log must be a file", fileKind(st.Mode())))}
	}
	if st.Size() > limit {
		return nil, &ParseError{File: p, Err: because(ErrTooLarge, fmt.Sprintf("file is larger than the %d-byte limit (%d bytes or more)", limit, st.Size()))}
	}
	return os.Open(p)
}

// readNotLog reads a file whose name is not a log's as delimited text; a
// file that does not read as a log is refused as not a step-test log,
// with the reason.
func readNotLog(rd *Reader, r io.Reader, p, name string) (*Log, error) {
	lg, err := rd.Read(r, p)
	if err == nil {
		return lg, nil
	}
	return lg, notLog(p, name, err)
}

// notLog wraps the error of a file that is not a log by name.
func notLog(p, name string, err error) error {
	ext := path.Ext(name)
	what := "a file without an extension"
	if ext != "" {
		what = "a " + ext + " file"
	}
	out := &ParseError{File: p}
	reason := err.Error()
	if pe, ok := err.(*ParseError); ok && pe.Err != nil {
		reason = pe.Err.Error()
		out.Line, out.Column, out.Field = pe.Line, pe.Column, pe.Field
	}
	out.Err = because(ErrNotLog, fmt.Sprintf("not a step-test log: %s (logs are %s) that does not read as one: %s",
		what, extensionList(), reason))
	return out
}
