package logs

import (
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

// tree makes files and directories under root; a name ending in "/" is a
// directory, "name -> target" a symbolic link.
func tree(t *testing.T, root string, entries ...string) {
	t.Helper()
	for _, e := range entries {
		p := filepath.Join(root, e)
		switch {
		case strings.Contains(e, " -> "):
			name, target, _ := strings.Cut(e, " -> ")
			if err := os.Symlink(target, filepath.Join(root, name)); err != nil {
				t.Skipf("symbolic links unavailable: %v", err)
			}
		case strings.HasSuffix(e, "/"):
			if err := os.MkdirAll(p, 0o755); err != nil {
				t.Fatal(err)
			}
		default:
			if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(p, []byte("time,command,position\n"), 0o644); err != nil {
				t.Fatal(err)
			}
		}
	}
}

func TestFindLogs(t *testing.T) {
	root := t.TempDir()
	tree(t, root,
		"logs/a.csv", "logs/B.CSV", "logs/c.tsv", "logs/d.txt", "logs/notes.md", "logs/e.csv.gz", "logs/noext",
		"logs/day1/f.csv", "logs/day1/deep/g.Txt", "logs/rejected/h.csv", "logs/rejected/sub/i.csv",
		"logs/empty/",
		"logs/day1/loop -> ..",                // a link back up: a loop
		"logs/day1/self -> self",              // a link to itself: broken, no log extension
		"logs/alias.csv -> a.csv",             // a second name for a.csv
		"logs/day1/again -> ../day1",          // the same directory again
		"other/z.csv", "logs/ext -> ../other", // a link to a directory outside
		"single.dat",
	)
	t.Chdir(root)
	cases := []struct {
		name    string
		paths   []string
		exclude []string
		want    []string
	}{
		// Every regular file is found, logs by name or not (notes.md and
		// noext become units refused as not step-test logs).
		{"directory tree", []string{"logs"}, nil, []string{
			"logs/B.CSV", "logs/a.csv", "logs/c.tsv", "logs/d.txt", "logs/day1/deep/g.Txt", "logs/day1/f.csv",
			"logs/e.csv.gz", "logs/ext/z.csv", "logs/noext", "logs/notes.md", "logs/rejected/h.csv", "logs/rejected/sub/i.csv"}},
		{"excluded directory", []string{"./logs/"}, []string{"logs/rejected"}, []string{
			"logs/B.CSV", "logs/a.csv", "logs/c.tsv", "logs/d.txt", "logs/day1/deep/g.Txt", "logs/day1/f.csv",
			"logs/e.csv.gz", "logs/ext/z.csv", "logs/noext", "logs/notes.md"}},
		{"excluded through a link", []string{"logs"}, []string{"other", "logs/day1/deep"}, []string{
			"logs/B.CSV", "logs/a.csv", "logs/c.tsv", "logs/d.txt", "logs/day1/f.csv", "logs/e.csv.gz", "logs/noext", "logs/notes.md",
			"logs/rejected/h.csv", "logs/rejected/sub/i.csv"}},
		{"file as given, any extension", []string{"single.dat", "logs/day1/f.csv"}, nil, []string{"logs/day1/f.csv", "single.dat"}},
		{"named file under an excluded directory", []string{"logs/rejected/h.csv"}, []string{"logs/rejected"}, []string{"logs/rejected/h.csv"}},
		{"duplicates removed", []string{"logs/day1/deep", "logs/day1/deep/g.Txt", filepath.Join(root, "logs", "day1", "deep"), "logs/day1/deep"}, nil,
			[]string{"logs/day1/deep/g.Txt"}},
		{"first path names a file", []string{filepath.Join(root, "logs", "day1", "deep"), "logs/day1/deep"}, nil,
			[]string{filepath.Join(root, "logs/day1/deep/g.Txt")}},
		{"link to a parent followed once", []string{"logs/day1"}, nil, []string{
			"logs/day1/deep/g.Txt", "logs/day1/f.csv", "logs/day1/loop/B.CSV", "logs/day1/loop/a.csv", "logs/day1/loop/c.tsv",
			"logs/day1/loop/d.txt", "logs/day1/loop/e.csv.gz", "logs/day1/loop/ext/z.csv", "logs/day1/loop/noext", "logs/day1/loop/notes.md",
			"logs/day1/loop/rejected/h.csv", "logs/day1/loop/rejected/sub/i.csv"}},
		{"root inside an excluded directory is searched", []string{"logs/rejected"}, []string{"logs"}, []string{"logs/rejected/h.csv", "logs/rejected/sub/i.csv"}},
		{"excluded directory inside a root inside another", []string{"logs/rejected"}, []string{"logs", "logs/rejected/sub"}, []string{"logs/rejected/h.csv"}},
		{"root equal to an excluded directory is searched", []string{"logs/day1/deep"}, []string{"logs/day1/deep"}, []string{"logs/day1/deep/g.Txt"}},
		{"directory without logs", []string{"logs/empty"}, nil, []string{}},
		{"no paths", nil, nil, []string{}},
		{"exclude path not made yet", []string{"logs/day1/deep"}, []string{"reports/out"}, []string{"logs/day1/deep/g.Txt"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got, err := FindLogs(c.paths, c.exclude)
			if err != nil {
				t.Fatal(err)
			}
			want := make([]string, len(c.want))
			for i, w := range c.want {
				want[i] = filepath.FromSlash(w)
			}
			if !reflect.DeepEqual(got, want) {
				t.Errorf("FindLogs(%q, %q)\n got %q\nwant %q", c.paths, c.exclude, got, want)
			}
		})
	}
}

func TestFindLogsErrors(t *testing.T) {
	root := t.TempDir()
	tree(t, root, "logs/a.csv", "ok/b.csv")
	t.Chdir(root)
	cases := []struct {
		name    string
		paths   []string
		exclude []string
		phrase  string
		notExit bool
	}{
		{"nonexistent path", []string{"ok", "nowhere"}, nil, "nowhere", true},
	}
	for _, c := range cases {
		_, err := FindLogs(c.paths, c.exclude)
		if err == nil || !strings.Contains(err.Error(), c.phrase) {
			t.Errorf("%s: error %v, want one naming %q", c.name, err, c.phrase)
			continue
		}
		if c.notExit && !errors.Is(err, fs.ErrNotExist) {
			t.Errorf("%s: error %v does not match fs.ErrNotExist", c.name, err)
		}
	}
}

func TestIsLogName(t *testing.T) {
	cases := map[string]bool{
		"a.csv": true, "A.CSV": true, "b.Tsv": true, "c.txt": true, "dir/x.TXT": true,
		"a.csv.gz": true, "lot.ZIP": true, "csv": false, "a.xlsx": false, "a.": false, ".csv": true,
	}
	for name, want := range cases {
		if got := IsLogName(name); got != want {
			t.Errorf("IsLogName(%q) = %v, want %v", name, got, want)
		}
	}
}

// TestFindLogsUnreadableEntries checks that entries with a log extension
// that cannot be read as logs are returned, so that the batch reports each
// as a unit with the reader's reason instead of stopping or dropping it: a
// broken link, a link to itself (a loop; POSIX.1-2017 ELOOP), a named pipe
// and a directory link loop, which the search follows once.
func TestFindLogsUnreadableEntries(t *testing.T) {
	root := t.TempDir()
	tree(t, root, "logs/a.csv", "logs/broken.csv -> missing.csv", "logs/self.csv -> self.csv", "logs/up -> ..", "logs/notes -> nowhere")
	fifo := filepath.Join(root, "logs", "pipe.csv")
	if err := mkfifo(fifo); err != nil {
		t.Skipf("named pipes unavailable: %v", err)
	}
	t.Chdir(root)
	got, err := FindLogs([]string{"logs"}, nil)
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"logs/a.csv", "logs/broken.csv", "logs/pipe.csv", "logs/self.csv"}
	for i := range want {
		want[i] = filepath.FromSlash(want[i])
	}
	if !reflect.DeepEqual(got, want) {
		t.Fatalf("FindLogs = %q, want %q", got, want)
	}
	f := Format{Time: "time", Command: "command", Response: "position"}
	for _, c := range []struct{ file, phrase string }{
		{"logs/broken.csv", "no such file or directory"},
		{"logs/self.csv", "too many levels of symbolic links"},
		{"logs/pipe.csv", "is a named pipe (FIFO), not a regular file"},
	} {
		_, err := ReadFile(filepath.FromSlash(c.file), f)
		if err == nil || !strings.Contains(err.Error(), c.phrase) || !strings.Contains(err.Error(), filepath.FromSlash(c.file)) {
			t.Errorf("ReadFile(%s) = %v, want an error naming the file and %q", c.file, err, c.phrase)
		}
	}
}

// Files in a searched directory that are not logs by name are returned
// with the logs, so that each becomes a unit ("not a step-test log"); the
// list of others is empty.
func TestFindLogsAndOthers(t *testing.T) {
	dir := t.TempDir()
	for _, n := range []string{"a.csv", "b.log", "c.TXT", "notes.md"} {
		if err := os.WriteFile(filepath.Join(dir, n), []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	logs, others, err := FindLogsAndOthers([]string{dir}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(logs) != 4 || len(others) != 0 {
		t.Errorf("logs %v, others %v", logs, others)
	}
}
