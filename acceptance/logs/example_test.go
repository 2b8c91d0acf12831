package logs_test

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/stepgate/stepgate/acceptance/logs"
)

func ExampleRead() {
	log := `# serial: VD25-000123
# station: EOL-2
time_ms;cmd;pos
0;0,0;0,00
1;1,0;0,12
2;1,0;0,47
`
	f := logs.Format{Time: "time_ms", Command: "cmd", Response: "pos", TimeScale: 1e-3, DecimalComma: true}
	lg, err := logs.Read(strings.NewReader(log), "vd25-000123.csv", f)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(lg.Metadata["serial"], lg.Rows, "rows, delimiter", string(lg.Delimiter))
	fmt.Println("time, s:", lg.Trace.Time)
	fmt.Println("position:", lg.Trace.Response)

	// A bad value names the file, line, field and column.
	_, err = logs.Read(strings.NewReader("time_ms;cmd;pos\n0;0;0\n1;1;NaN\n"), "vd25-000124.csv", f)
	fmt.Println(err, errors.Is(err, logs.ErrBadNumber))
	// Output:
	// VD25-000123 3 rows, delimiter ;
	// time, s: [0 0.001 0.002]
	// position: [0 0.12 0.47]
	// vd25-000124.csv:3:3: column "pos": NaN is not a measurement true
}

func ExampleFindLogs() {
	// A batch directory: two days of logs, a rejected folder and a note.
	root, err := os.MkdirTemp("", "batch")
	if err != nil {
		fmt.Println(err)
		return
	}
	defer os.RemoveAll(root)
	for _, name := range []string{"day1/u1.csv", "day1/u2.CSV", "day2/u3.tsv", "day2/readme.md", "rejected/u0.csv"} {
		p := filepath.Join(root, name)
		_ = os.MkdirAll(filepath.Dir(p), 0o755)
		_ = os.WriteFile(p, nil, 0o644)
	}
	paths, err := logs.FindLogs([]string{root}, []string{filepath.Join(root, "rejected")})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, p := range paths {
		rel, _ := filepath.Rel(root, p)
		fmt.Println(filepath.ToSlash(rel))
	}
	// Output:
	// day1/u1.csv
	// day1/u2.CSV
	// day2/readme.md
	// day2/u3.tsv
}
