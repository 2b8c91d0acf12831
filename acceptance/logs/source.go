package logs

import (
	"errors"
	"path/filepath"
	"strings"
)

// Source reads log files into traces. A Source serves one goroutine at a
// time and may reuse its buffers from one file to the next (Options.Shared).
type Source interface {
	// ReadFile reads and digests the log at path.
	ReadFile(path string) (*Log, error)
}

// Options tune the Sources that Open makes.
type Options struct {
	// Shared lets a Source return traces that alias its own buffers, valid
	// only until its next read (Reader.Shared): for a worker that measures
	// each log before it reads the next.
	Shared bool
	// NoDigest skips the SHA-256 of the bytes read (Reader.WithoutDigest):
	// for measuring the bare cost of reading, never for a judged log.
	NoDigest bool
}

// Layout is one log file format stepgate reads: the file name extensions
// that mark it and how to make a Source for it.
type Layout struct {
	Name       string   // what the format is, e.g. "delimited text"
	Extensions []string // lower case, with the dot; compared without regard to case
	New        func(f Format, o Options) Source
}

// layouts is the registry of log formats, one row each. A new format (or a
// container such as a compressed file) is one row and its Source. The
// first row also reads a file whose extension no row claims, such as a
// file named directly on the command line.
var layouts = []Layout{
	{Name: "delimited text", Extensions: []string{".csv", ".tsv", ".txt"}, New: newDelimited},
	{Name: "gzip-compressed log", Extensions: []string{".gz"}, New: newGzip},
	{Name: "ZIP archive of logs, one unit per member", Extensions: []string{".zip"}, New: newZip},
}

// zipLayout is the index of the ZIP layout, which reads archive members.
const zipLayout = 2

// newDelimited is the Source of delimited text logs: a Reader.
func newDelimited(f Format, o Options) Source {
	rd := NewReader(f)
	if o.Shared {
		rd.Shared()
	}
	if o.NoDigest {
		rd.WithoutDigest()
	}
	return rd
}

// Layouts returns the registered log formats, in registry order.
func Layouts() []Layout { return append([]Layout(nil), layouts...) }

// LogExtensions are the file name extensions of every registered layout,
// the ones FindLogs collects from directories, compared without regard to
// letter case.
var LogExtensions = func() []string {
	var out []string
	for _, l := range layouts {
		out = append(out, l.Extensions...)
	}
	return out
}()

// layoutOf returns the index of the layout whose extension name carries,
// or -1.
func layoutOf(name string) int {
	ext := filepath.Ext(name)
	for i, l := range layouts {
		for _, e := range l.Extensions {
			if strings.EqualFold(ext, e) {
				return i
			}
		}
	}
	return -1
}

// IsLogName reports whether a file name has one of the LogExtensions.
func IsLogName(name string) bool { return layoutOf(name) >= 0 }

// Open returns a Source that reads the logs of every registered layout
// with Format f, each file by the layout its extension names; a file whose
// extension no layout claims is read as delimited text. The Source of each
// layout is made when a file first needs it and then reused.
func Open(f Format, o Options) Source {
	return &registry{f: f, o: o, src: make([]Source, len(layouts))}
}

// registry dispatches to one Source per layout.
type registry struct {
	f   Format
	o   Options
	src []Source
}

// ReadFile reads path with the Source of its layout: an archive member
// (SplitMember) with the ZIP layout's. A file of no layout is read as
// delimited text and, when that fails, refused as not a step-test log
// (ErrNotLog) with the reason.
func (r *registry) ReadFile(path string) (*Log, error) {
	i := layoutOf(path)
	if _, _, ok := SplitMember(path); ok {
		i = zipLayout
	}
	src := r.source(max(i, 0))
	lg, err := src.ReadFile(path)
	if err != nil && i < 0 {
		var pe *ParseError
		if errors.As(err, &pe) {
			err = notLog(path, filepath.Base(path), err)
		}
	}
	return lg, err
}

// source returns the Source of layout i, made when first needed.
func (r *registry) source(i int) Source {
	if r.src[i] == nil {
		r.src[i] = layouts[i].New(r.f, r.o)
	}
	return r.src[i]
}
