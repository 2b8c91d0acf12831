package logs_test

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"github.com/stepgate/stepgate/acceptance/logs"
)

// TestOpen reads logs through the registry: by extension, in any letter
// case, and a file whose extension no layout claims as delimited text.
// Shared sources lend their buffers; others return a fresh trace per file.
func TestOpen(t *testing.T) {
	dir := t.TempDir()
	f := logs.Format{Time: "t", Command: "c", Response: "y"}
	write := func(name, body string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	a := write("a.csv", "t,c,y\n0,0,0\n1,1,0.5\n")
	b := write("b.TSV", "t\tc\ty\n0\t0\t0\n1\t1\t0.25\n2\t1\t0.75\n")
	c := write("c.log", "t;c;y\n0;0;0\n1;1;1\n")
	for _, shared := range []bool{false, true} {
		src := logs.Open(f, logs.Options{Shared: shared})
		la, err := src.ReadFile(a)
		if err != nil {
			t.Fatal(err)
		}
		first := la.Trace.Response[1]
		for _, tc := range []struct {
			path string
			rows int
		}{{b, 3}, {c, 2}} {
			lg, err := src.ReadFile(tc.path)
			if err != nil || lg.Rows != tc.rows || lg.SHA256 == "" {
				t.Fatalf("shared %v: %s: %+v, %v", shared, tc.path, lg, err)
			}
		}
		if !shared && la.Trace.Response[1] != first {
			t.Errorf("a trace of an unshared source changed after the next read")
		}
	}
	if _, err := logs.Open(f, logs.Options{}).ReadFile(filepath.Join(dir, "none.csv")); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("missing file: %v", err)
	}
	lg, err := logs.Open(f, logs.Options{NoDigest: true}).ReadFile(a)
	if err != nil || lg.SHA256 != "" {
		t.Errorf("NoDigest: %q, %v", lg.SHA256, err)
	}
}

// The extensions are those of the registered layouts, written once.
func TestLogExtensions(t *testing.T) {
	var all []string
	for _, l := range logs.Layouts() {
		if l.Name == "" || l.New == nil || len(l.Extensions) == 0 {
			t.Errorf("incomplete layout %+v", l)
		}
		all = append(all, l.Extensions...)
	}
	if !slices.Equal(all, logs.LogExtensions) {
		t.Errorf("LogExtensions = %v, layouts give %v", logs.LogExtensions, all)
	}
	if want := "no log files found: the paths hold no files to judge (logs are .csv, .tsv, .txt, .gz and .zip)"; logs.ErrNoLogs.Error() != want {
		t.Errorf("ErrNoLogs = %q, want %q", logs.ErrNoLogs, want)
	}
}

// A batch reads its logs through Open: one Source per worker, each file by
// the layout its extension names.
func ExampleOpen() {
	dir, err := os.MkdirTemp("", "logs")
	if err != nil {
		fmt.Println(err)
		return
	}
	defer os.RemoveAll(dir)
	p := filepath.Join(dir, "VD25-000123.csv")
	_ = os.WriteFile(p, []byte("# serial: VD25-000123\ntime,cmd,pos\n0,0,0\n0.001,1,0.12\n"), 0o644)

	src := logs.Open(logs.Format{Time: "time", Command: "cmd", Response: "pos"}, logs.Options{})
	lg, err := src.ReadFile(p)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(lg.Metadata["serial"], lg.Rows, "rows", len(lg.SHA256), "hex digits of SHA-256")
	// Output:
	// VD25-000123 2 rows 64 hex digits of SHA-256
}
