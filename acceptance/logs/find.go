package logs

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"sort"
	"strings"
)

// ErrNoLogs says that the paths given name no log file: FindLogs returns
// an empty list, and a command that needs logs wraps ErrNoLogs with the
// paths it searched.
var ErrNoLogs = errors.New("no log files found: the paths hold no files to judge (logs are " + extensionList() + ")")

// extensionList lists the LogExtensions as ".csv, .tsv and .txt".
func extensionList() string {
	n := len(LogExtensions)
	if n == 1 {
		return LogExtensions[0]
	}
	return strings.Join(LogExtensions[:n-1], ", ") + " and " + LogExtensions[n-1]
}

// FindLogs returns the files named by paths, each a unit of the batch. A
// file is taken as given, whatever its extension. A directory is searched
// recursively for every regular file in it, whatever its extension: a file
// that is not a log becomes a unit refused as "not a step-test log" with
// the reason, so that nothing found disappears from the reports. A ZIP
// archive (".zip", found or named) gives one path per member,
// "lot.zip!unit7.csv" (SplitMember); an archive that cannot be listed is
// returned whole, and reading it gives the reason. The search follows
// symbolic links but never into a directory already visited, so link
// loops end. Directories (and files) under any of the exclude paths are
// skipped during the search; a file named directly in paths is always
// returned, and a directory named directly is searched even when it lies
// inside an exclude path (an output directory that holds the log folder,
// as in `--out . logs`): an exclude path only skips what lies under it
// within a search.
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
// nothing. No paths, or directories without files, give an empty result.
func FindLogs(paths []string, exclude []string) ([]string, error) {
	files, _, err := FindLogsAndOthers(paths, exclude)
	return files, err
}

// FindLogsAndOthers is FindLogs that also returns the files the directory
// search left out as not logs by name: none since every file found is a
// unit, kept for callers that print them.
func FindLogsAndOthers(paths []string, exclude []string) (logs, others []string, err error) {
	f, err := FindFiles(paths, exclude, Patterns{})
	return f.Files, nil, err
}

// Found is what a search found: the files to judge, sorted, and the files
// the patterns left out, sorted by file, each with the pattern.
type Found struct {
	Files    []string
	Excluded []Excluded
}

// Excluded is a file a search left out and the pattern that did.
type Excluded struct {
	File    string // as FindLogs would name it
	Pattern string // the exclude pattern matched, or "not matched by include: P1, P2"
}

// Patterns name the files of a search that are not logs of the line
// (path.Match syntax). A pattern with a '/' is matched against the path
// below the searched directory (slashes, an archive member as
// "lot.zip!unit7.csv"), one without against the file's (or member's)
// name. A file matched by an Exclude pattern, or by no Include pattern
// when some are given, is left out and listed; a file named directly is
// always taken.
type Patterns struct {
	Include, Exclude []string
}

// match returns why rel (slash-separated, below the searched directory)
// is left out, or "".
func (p Patterns) match(rel string) string {
	name := path.Base(rel)
	if _, m, ok := SplitMember(rel); ok {
		name = path.Base(m)
	}
	hit := func(pat string) bool {
		subject := name
		if strings.Contains(pat, "/") {
			subject = rel
		}
		ok, _ := path.Match(pat, subject)
		return ok
	}
	for _, x := range p.Exclude {
		if hit(x) {
			return x
		}
	}
	if len(p.Include) == 0 {
		return ""
	}
	for _, in := range p.Include {
		if hit(in) {
			return ""
		}
	}
	return "not matched by include: " + strings.Join(p.Include, ", ")
}

// add takes a file found, unless the patterns leave it out of a search.
func (fl *finder) add(shown, real string) {
	if fl.root != "" {
		rel, err := filepath.Rel(fl.root, shown)
		if err == nil {
			if why := fl.pat.match(filepath.ToSlash(rel)); why != "" {
				fl.left = append(fl.left, Excluded{File: shown, Pattern: why})
				return
			}
		}
	}
	fl.found = append(fl.found, foundLog{shown, real})
}

// FindFiles is FindLogs with patterns: it also returns the files the
// patterns left out, each with the pattern that did.
func FindFiles(paths []string, exclude []string, pat Patterns) (Found, error) {
	logs, err := findFiles(paths, exclude, pat)
	return logs, err
}

func findFiles(paths []string, exclude []string, pat Patterns) (Found, error) {
	fl := finder{visited: map[string]bool{}, pat: pat}
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
			return Found{}, fmt.Errorf("find logs: exclude path: %w", err)
		}
		fl.exclude = append(fl.exclude, real)
	}
	for _, p := range paths {
		st, err := os.Stat(p)
		if err != nil {
			return Found{}, fmt.Errorf("find logs: %w", err)
		}
		real, err := realPath(p)
		if err != nil {
			return Found{}, fmt.Errorf("find logs: %w", err)
		}
		switch {
		case st.IsDir():
			fl.active = fl.active[:0]
			for _, x := range fl.exclude {
				if !within(real, x) {
					fl.active = append(fl.active, x)
				}
			}
			fl.root = filepath.Clean(p)
			err := fl.walk(filepath.Clean(p), real)
			fl.root = ""
			if err != nil {
				return Found{}, err
			}
		case st.Mode().IsRegular() && strings.EqualFold(filepath.Ext(p), ".zip"):
			fl.addArchive(filepath.Clean(p), real)
		case st.Mode().IsRegular():
			fl.found = append(fl.found, foundLog{filepath.Clean(p), real})
		default:
			return Found{}, fmt.Errorf("find logs: %s: not a regular file or directory (%s)", p, st.Mode().Type())
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
	sort.Slice(fl.left, func(i, j int) bool { return fl.left[i].File < fl.left[j].File })
	return Found{Files: out, Excluded: fl.left}, nil
}

type foundLog struct {
	shown string // path as the user would write it
	real  string // absolute path with links resolved
}

type finder struct {
	pat     Patterns
	root    string     // the directory being searched, "" for files named directly
	left    []Excluded // files the patterns left out
	exclude []string
	active  []string        // the exclude paths that apply to the current search
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
					fl.add(shown, childReal)
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
		case strings.EqualFold(filepath.Ext(e.Name()), ".zip") && typ.IsRegular():
			fl.addArchive(shown, childReal)
		default:
			// Every file found is a unit: a log, or one the reports show
			// as "not a step-test log" with the reason; entries that cannot
			// be logs (named pipes, sockets, devices) are refused by the
			// reader with the reason.
			fl.add(shown, childReal)
		}
	}
	return nil
}

// addArchive adds the members of a ZIP archive, each a log of its own
// named archive!member; an archive that cannot be listed is added whole,
// so that reading it gives the reason.
func (fl *finder) addArchive(shown, real string) {
	members, err := zipMembers(shown)
	if err != nil || len(members) == 0 {
		fl.add(shown, real)
		return
	}
	for _, m := range members {
		_, name, _ := SplitMember(m)
		fl.add(m, real+MemberSep+name)
	}
}
