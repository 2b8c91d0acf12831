package rigdata

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"
)

// LogExtensions are the file name extensions FindLogs collects from
// directories, compared without regard to letter case.
var LogExtensions = []string{".csv", ".tsv", ".txt"}

// IsLogName reports whether a file name has one of the LogExtensions.
func IsLogName(name string) bool {
	ext := filepath.Ext(name)
	for _, e := range LogExtensions {
		if strings.EqualFold(ext, e) {
			return true
		}
	}
	return false
}

// FindLogs returns the log files named by paths. A file is taken as given,
// whatever its extension. A directory is searched recursively for files
// with one of the LogExtensions, following symbolic links but never into a
// directory already visited, so link loops end. Directories (and files)
// under any of the exclude paths are skipped during the search; a file
// named directly in paths is always returned.
//
// The result is sorted and holds each file once, even when it is reached
// through several paths or links: the first path that reaches it, in the
// order given and directory entries in name order, names it. Paths are
// cleaned but keep the form the user gave (relative stays relative).
//
// A path that does not exist, a directory that cannot be listed, or a
// broken link with a log extension is an error naming it. An exclude path
// that does not exist excludes nothing. No paths, or directories without
// logs, give an empty result.
func FindLogs(paths []string, exclude []string) ([]string, error) {
	fl := finder{visited: map[string]bool{}}
	for _, x := range exclude {
		real, err := realPath(x)
		if errors.Is(err, fs.ErrNotExist) {
			// Nothing is under a path that does not exist (yet): an output
			// directory still to be made, for example.
			if real, err = filepath.Abs(x); err == nil {
				real = filepath.Clean(real)
			}
		}
		if err != nil {
			return nil, fmt.Errorf("find logs: exclude path: %w", err)
		}
		fl.exclude = append(fl.exclude, real)
	}
	for _, p := range paths {
		st, err := os.Stat(p)
		if err != nil {
			return nil, fmt.Errorf("find logs: %w", err)
		}
		real, err := realPath(p)
		if err != nil {
			return nil, fmt.Errorf("find logs: %w", err)
		}
		switch {
		case st.IsDir():
			if fl.excluded(real) {
				continue
			}
			if err := fl.walk(filepath.Clean(p), real); err != nil {
				return nil, err
			}
		case st.Mode().IsRegular():
			fl.found = append(fl.found, foundLog{filepath.Clean(p), real})
		default:
			return nil, fmt.Errorf("find logs: %s: not a regular file or directory (%s)", p, st.Mode().Type())
		}
	}
	out := make([]string, 0, len(fl.found))
	seen := make(map[string]bool, len(fl.found))
	for _, f := range fl.found {
		if !seen[f.real] {
			seen[f.real] = true
			out = append(out, f.shown)
		}
	}
	sort.Strings(out)
	return out, nil
}

type foundLog struct {
	shown string // path as the user would write it
	real  string // absolute path with links resolved
}

type finder struct {
	exclude []string
	visited map[string]bool // real paths of directories searched
	found   []foundLog
}

func realPath(p string) (string, error) {
	abs, err := filepath.Abs(p)
	if err != nil {
		return "", err
	}
	if _, err := os.Lstat(abs); err != nil {
		return "", err
	}
	real, err := filepath.EvalSymlinks(abs)
	if err != nil {
		return "", err
	}
	return filepath.Clean(real), nil
}

// excluded reports whether real is an exclude path or lies under one.
func (fl *finder) excluded(real string) bool {
	for _, x := range fl.exclude {
		if real == x {
			return true
		}
		prefix := x
		if !strings.HasSuffix(prefix, string(filepath.Separator)) {
			prefix += string(filepath.Separator)
		}
		if strings.HasPrefix(real, prefix) {
			return true
		}
	}
	return false
}

// walk searches the directory shown as dir, whose resolved path is real.
func (fl *finder) walk(dir, real string) error {
	if fl.visited[real] {
		return nil
	}
	fl.visited[real] = true
	entries, err := os.ReadDir(dir)
	if err != nil {
		return fmt.Errorf("find logs: %w", err)
	}
	for _, e := range entries {
		shown := filepath.Join(dir, e.Name())
		childReal := filepath.Join(real, e.Name())
		typ := e.Type()
		if typ&fs.ModeSymlink != 0 {
			target, err := realPath(shown)
			if err != nil {
				if IsLogName(e.Name()) {
					return fmt.Errorf("find logs: %s: broken link: %w", shown, err)
				}
				continue
			}
			st, err := os.Stat(shown)
			if err != nil {
				return fmt.Errorf("find logs: %w", err)
			}
			childReal = target
			typ = st.Mode().Type()
		}
		if fl.excluded(childReal) {
			continue
		}
		switch {
		case typ.IsDir():
			if err := fl.walk(shown, childReal); err != nil {
				return err
			}
		case !IsLogName(e.Name()):
		case typ.IsRegular():
			fl.found = append(fl.found, foundLog{shown, childReal})
		default:
			return fmt.Errorf("find logs: %s: not a regular file (%s)", shown, typ)
		}
	}
	return nil
}
