package logs

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"
)

// ErrNoLogs says that the paths given name no log file: FindLogs returns
// an empty list, and a command that needs logs wraps ErrNoLogs with the
// paths it searched.
var ErrNoLogs = errors.New("no log files found (looked for " + extensionList() + ")")

// extensionList lists the LogExtensions as ".csv, .tsv and .txt".
func extensionList() string {
	n := len(LogExtensions)
	if n == 1 {
		return LogExtensions[0]
	}
	return strings.Join(LogExtensions[:n-1], ", ") + " and " + LogExtensions[n-1]
}

// FindLogs returns the log files named by paths. A file is taken as given,
// whatever its extension. A directory is searched recursively for files
// with one of the LogExtensions, following symbolic links but never into a
// directory already visited, so link loops end. Directories (and files)
// under any of the exclude paths are skipped during the search; a file
// named directly in paths is always returned, and a directory named
// directly is searched even when it lies inside an exclude path (an output
// directory that holds the log folder, as in `--out . logs`): an exclude
// path only skips what lies under it within a search.
//
// The result is sorted and holds each file once, even when it is reached
// through several paths or links: the first path that reaches it, in the
// order given and directory entries in name order, names it. Paths are
// cleaned but keep the form the user gave (relative stays relative).
//
// A path that does not exist or a directory that cannot be listed is an
// error naming it. Inside a searched directory, an entry with a log
// extension that cannot be a log (a broken or looping link, a named pipe, a
// socket or a device) is returned all the same, so that reading it fails
// with the reason and the batch reports it as a unit instead of stopping or
// leaving it out silently. An exclude path that does not exist excludes
// nothing. No paths, or directories without logs, give an empty result.
func FindLogs(paths []string, exclude []string) ([]string, error) {
	files, _, err := FindLogsAndOthers(paths, exclude)
	return files, err
}

// FindLogsAndOthers is FindLogs that also returns, sorted, the other files
// the directory search met and left out because their names do not have a
// log extension, so that a caller can say so.
func FindLogsAndOthers(paths []string, exclude []string) (logs, others []string, err error) {
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
			return nil, nil, fmt.Errorf("find logs: exclude path: %w", err)
		}
		fl.exclude = append(fl.exclude, real)
	}
	for _, p := range paths {
		st, err := os.Stat(p)
		if err != nil {
			return nil, nil, fmt.Errorf("find logs: %w", err)
		}
		real, err := realPath(p)
		if err != nil {
			return nil, nil, fmt.Errorf("find logs: %w", err)
		}
		switch {
		case st.IsDir():
			fl.active = fl.active[:0]
			for _, x := range fl.exclude {
				if !within(real, x) {
					fl.active = append(fl.active, x)
				}
			}
			if err := fl.walk(filepath.Clean(p), real); err != nil {
				return nil, nil, err
			}
		case st.Mode().IsRegular():
			fl.found = append(fl.found, foundLog{filepath.Clean(p), real})
		default:
			return nil, nil, fmt.Errorf("find logs: %s: not a regular file or directory (%s)", p, st.Mode().Type())
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
	sort.Strings(fl.skipped)
	return out, fl.skipped, nil
}

type foundLog struct {
	shown string // path as the user would write it
	real  string // absolute path with links resolved
}

type finder struct {
	exclude []string
	active  []string        // the exclude paths that apply to the current search
	visited map[string]bool // real paths of directories searched
	found   []foundLog
	skipped []string // files met in directories that are not logs by name
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

// excluded reports whether real is an exclude path of the current search
// or lies under one.
func (fl *finder) excluded(real string) bool {
	for _, x := range fl.active {
		if within(real, x) {
			return true
		}
	}
	return false
}

// within reports whether path is dir or lies under it; both are clean and
// absolute.
func within(path, dir string) bool {
	if path == dir {
		return true
	}
	prefix := dir
	if !strings.HasSuffix(prefix, string(filepath.Separator)) {
		prefix += string(filepath.Separator)
	}
	return strings.HasPrefix(path, prefix)
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
			var st fs.FileInfo
			if err == nil {
				st, err = os.Stat(shown)
			}
			if err != nil {
				// A broken or looping link: a log that cannot be read.
				if IsLogName(e.Name()) && !fl.excluded(childReal) {
					fl.found = append(fl.found, foundLog{shown, childReal})
				}
				continue
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
			fl.skipped = append(fl.skipped, shown)
		default:
			// Regular files, and entries that cannot be logs (named pipes,
			// sockets, devices), which the reader refuses with the reason.
			fl.found = append(fl.found, foundLog{shown, childReal})
		}
	}
	return nil
}
