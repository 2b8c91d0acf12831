package logs

import (
	"archive/zip"
	"bytes"
	"compress/gzip"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stepgate/stepgate/metrics"
)

// The export shapes below all carry one invented step test: a 0 → 10 mm
// step at 0.25 s into the unit-step response of the standard second-order
// loop with ζ = 0.6, ωn = 20 rad/s, sampled every 1 ms to 1.5 s. Its
// closed-form response (K. Ogata, Modern Control Engineering, 5th ed.,
// §5-3, Eq. 5-10) is
//
//	c(t) = 1 − e^(−ζωn t) (cos ωd t + ζ/√(1−ζ²) sin ωd t),  ωd = ωn √(1−ζ²),
//
// and its maximum overshoot (Ogata Eq. 5-21) is Mp = e^(−ζπ/√(1−ζ²)) =
// 9.478 %; the peak time tp = π/ωd = 0.1963 s (Eq. 5-20). Every shape is
// either measured within the sampling's tolerance of these values or
// refused with a reason that says how to fix it.

const (
	shapeZeta  = 0.6
	shapeWn    = 20.0
	shapeStepT = 0.25
	shapeDt    = 0.001
	shapeN     = 1500
)

// shapeSample is sample i of the reference test: time, command, response
// (written with 6 decimals, as rigs do).
func shapeSample(i int) (t, c, y float64) {
	t = float64(i) * shapeDt
	if t < shapeStepT-shapeDt/2 {
		return t, 0, 0
	}
	tau := t - shapeStepT
	wd := shapeWn * math.Sqrt(1-shapeZeta*shapeZeta)
	y = 10 * (1 - math.Exp(-shapeZeta*shapeWn*tau)*(math.Cos(wd*tau)+shapeZeta/math.Sqrt(1-shapeZeta*shapeZeta)*math.Sin(wd*tau)))
	return t, 10, y
}

// shapeOpts describes how one export writes the samples.
type shapeOpts struct {
	head      string                         // lines before the header, each ending in "\n"
	header    string                         // header row
	under     string                         // lines right under the header
	delim     string                         // field delimiter
	row       func(t, c, y float64) []string // the fields of one row; nil: t, c, y plainly
	trailing  string                         // appended to every data row
	tail      string                         // lines after the data
	eol       string                         // line end; "" is "\n"
	decComma  bool
	timeScale float64 // time written is t / timeScale
}

func (o shapeOpts) bytes() []byte {
	var b bytes.Buffer
	eol := o.eol
	if eol == "" {
		eol = "\n"
	}
	b.WriteString(o.head)
	b.WriteString(o.header + eol)
	b.WriteString(o.under)
	for i := range shapeN {
		t, c, y := shapeSample(i)
		ts := t
		if o.timeScale != 0 {
			ts = t / o.timeScale
		}
		var fields []string
		if o.row != nil {
			fields = o.row(t, c, y)
		} else {
			fields = []string{fmt.Sprintf("%.6f", ts), fmt.Sprintf("%g", c), fmt.Sprintf("%.6f", y)}
		}
		line := strings.Join(fields, o.delim)
		if o.decComma {
			line = strings.ReplaceAll(line, ".", ",")
		}
		b.WriteString(line + o.trailing + eol)
	}
	b.WriteString(o.tail)
	return b.Bytes()
}

// TestExportShapes reads the reference test written as rigs, data loggers
// and spreadsheet exports write logs, and measures it; shapes stepgate
// cannot be sure of are refused with the reason that says what to set.
func TestExportShapes(t *testing.T) {
	f := Format{Time: "t", Command: "cmd", Response: "pos", TimeUnit: "s", ValueUnit: "mm", Plausible: true}
	plain := shapeOpts{header: "t,cmd,pos", delim: ","}
	with := func(mod func(*shapeOpts)) shapeOpts { o := plain; mod(&o); return o }
	stamp := func(day bool) func(t, c, y float64) []string {
		return func(t, c, y float64) []string {
			ts := fmt.Sprintf("2026-11-30T23:59:59.5+01:00 plus %v", t) // replaced below
			base := 23*3600 + 59*60 + 59.5                              // crosses midnight at 0.5 s (29 to 30 November)
			s := base + t
			h, m := int(s/3600)%24, int(math.Mod(s, 3600)/60)
			sec := math.Mod(s, 60)
			ts = fmt.Sprintf("%02d:%02d:%06.3f", h, m, sec)
			if !day {
				d := 29 + int(s/86400)
				ts = fmt.Sprintf("2026-11-%02dT%s+01:00", d, ts)
			}
			return []string{ts, fmt.Sprintf("%g", c), fmt.Sprintf("%.6f", y)}
		}
	}
	cases := []struct {
		name   string
		o      shapeOpts
		f      func(Format) Format
		ext    string
		refuse error  // nil: measured
		phrase string // in the refusal
	}{
		{name: "plain", o: plain},
		{name: "metadata without #, key,value", o: with(func(o *shapeOpts) {
			o.head = "Serial,VD25-7\nStation,EOL-2\nOperator,A. Tester\n"
		})},
		{name: "metadata key;value, key=value and key: value; sep= line", o: with(func(o *shapeOpts) {
			o.head = "sep=;\nSerial Number;VD25-7\nstation=EOL-2\nStarted at: 2026-11-30T06:00:00Z\n"
			o.delim, o.header = ";", "t;cmd;pos"
		})},
		{name: "bracketed sections", o: with(func(o *shapeOpts) {
			o.head = "[Header]\nserial,VD25-7\nrate,1000 Hz\n\n[Data]\n"
		})},
		{name: "units in the header", o: with(func(o *shapeOpts) { o.header = "t [s],cmd (mm),pos (mm)" })},
		{name: "units row under the header", o: with(func(o *shapeOpts) { o.under = "s,mm,mm\n" })},
		{name: "quoted fields with delimiters inside", o: with(func(o *shapeOpts) {
			o.header = `"t","cmd","pos","note"`
			o.row = func(t, c, y float64) []string {
				return []string{fmt.Sprintf(`"%.6f"`, t), fmt.Sprintf("%g", c), fmt.Sprintf("%.6f", y), `"ok, ""checked"""`}
			}
		})},
		{name: "trailing delimiter on data rows", o: with(func(o *shapeOpts) { o.trailing = "," })},
		{name: "empty and delimiter-only rows at the end", o: with(func(o *shapeOpts) { o.tail = ",,\n\n,,\n" })},
		{name: "decimal comma, semicolons, CRLF", o: with(func(o *shapeOpts) {
			o.delim, o.header, o.decComma, o.eol = ";", "t;cmd;pos", true, "\r\n"
		}), f: func(f Format) Format { f.DecimalComma = true; return f }},
		{name: "time in ms with time_unit ms", o: with(func(o *shapeOpts) { o.timeScale = 1e-3; o.header = "t [ms],cmd,pos" }),
			f: func(f Format) Format { f.TimeScale, f.TimeUnit = 1e-3, "ms"; return f }},
		{name: "sample numbers with a stated rate", o: with(func(o *shapeOpts) { o.timeScale = shapeDt }),
			f: func(f Format) Format { f.TimeScale, f.TimeUnit = shapeDt, "samples"; return f }},
		{name: "ISO 8601 timestamps with zone across midnight", o: with(func(o *shapeOpts) { o.row = stamp(false) })},
		{name: "times of day across midnight", o: with(func(o *shapeOpts) { o.row = stamp(true) })},
		{name: "encoder counts with a scale", o: with(func(o *shapeOpts) {
			o.row = func(t, c, y float64) []string {
				return []string{fmt.Sprintf("%.6f", t), fmt.Sprintf("%g", c), fmt.Sprintf("%d", int64(math.Round(-y*4000)))}
			}
		}), f: func(f Format) Format { f.Scale[ScaleResponse] = Transform{Factor: 0.00025, Invert: true}; return f }},
		{name: "header named by line", o: with(func(o *shapeOpts) { o.head = "t,cmd,pos written below\nnotes: a, b, c\n" }),
			f: func(f Format) Format { f.HeaderLine = 3; return f }},
		{name: "gzip-compressed", o: plain, ext: ".csv.gz"},
		{name: "member of a ZIP archive", o: plain, ext: ".zip"},

		// Refused, with what to do.
		{name: "two recordings appended", o: with(func(o *shapeOpts) { o.tail = "# serial: VD25-8\nt,cmd,pos\n0,0,0\n0.001,0,0\n" }),
			refuse: ErrRepeatedHeader, phrase: "two recordings appended"},
		{name: "header unit contradicts time_unit", o: with(func(o *shapeOpts) { o.header = "t [ms],cmd,pos" }),
			refuse: ErrUnit, phrase: "the header says the time column is in ms but the spec's time_unit is s"},
		{name: "units row contradicts response_unit", o: with(func(o *shapeOpts) { o.under = "s,mm,counts\n" }),
			refuse: ErrUnit, phrase: "the units row says the response column is in counts but the spec's response_unit is mm"},
		{name: "time in ms read as s", o: with(func(o *shapeOpts) { o.timeScale = 1e-3 }),
			refuse: ErrSamplePeriod, phrase: "set time_unit"},
		{name: "sample numbers without a rate", o: with(func(o *shapeOpts) { o.timeScale = shapeDt }),
			refuse: ErrSamplePeriod, phrase: "give log.sample_rate_hz"},
		{name: "encoder counts without a scale", o: with(func(o *shapeOpts) {
			o.row = func(t, c, y float64) []string {
				return []string{fmt.Sprintf("%.6f", t), fmt.Sprintf("%g", c), fmt.Sprintf("%d", int64(math.Round(y*4000)))}
			}
		}), refuse: ErrScale, phrase: "check the response scale"},
		{name: "response in metres", o: with(func(o *shapeOpts) {
			o.row = func(t, c, y float64) []string {
				return []string{fmt.Sprintf("%.6f", t), fmt.Sprintf("%g", c), fmt.Sprintf("%.9f", y/1000)}
			}
		}), refuse: ErrScale, phrase: "check the response scale"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			fm := f
			if c.f != nil {
				fm = c.f(f)
			}
			path := writeShape(t, c.o.bytes(), c.ext)
			lg, err := Open(fm, Options{}).ReadFile(path)
			if c.refuse != nil {
				if !errors.Is(err, c.refuse) || !strings.Contains(err.Error(), c.phrase) {
					t.Fatalf("err = %v, want %v with %q", err, c.refuse, c.phrase)
				}
				if lg == nil || lg.SHA256 == "" {
					t.Errorf("a refused log keeps its identity and digest: got %+v", lg)
				}
				return
			}
			if err != nil {
				t.Fatalf("ReadFile: %v", err)
			}
			checkShape(t, lg)
		})
	}
}

// writeShape writes data as a file with extension ext (".csv" when
// empty), compressed or inside an archive as the extension says, and
// returns the path to read.
func writeShape(t *testing.T, data []byte, ext string) string {
	t.Helper()
	dir := t.TempDir()
	switch ext {
	case "", ".csv":
		p := filepath.Join(dir, "unit.csv")
		os.WriteFile(p, data, 0o644)
		return p
	case ".csv.gz":
		var b bytes.Buffer
		zw := gzip.NewWriter(&b)
		zw.Write(data)
		zw.Close()
		p := filepath.Join(dir, "unit.csv.gz")
		os.WriteFile(p, b.Bytes(), 0o644)
		return p
	case ".zip":
		p := filepath.Join(dir, "lot.zip")
		writeZip(t, p, map[string][]byte{"day1/unit.csv": data})
		return p + MemberSep + "day1/unit.csv"
	}
	t.Fatalf("extension %s", ext)
	return ""
}

func writeZip(t *testing.T, p string, members map[string][]byte) {
	t.Helper()
	var b bytes.Buffer
	zw := zip.NewWriter(&b)
	for _, name := range sortedKeys(members) {
		w, err := zw.Create(name)
		if err != nil {
			t.Fatal(err)
		}
		w.Write(members[name])
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(p, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
}

func sortedKeys(m map[string][]byte) []string {
	var k []string
	for n := range m {
		k = append(k, n)
	}
	for i := range k {
		for j := i + 1; j < len(k); j++ {
			if k[j] < k[i] {
				k[i], k[j] = k[j], k[i]
			}
		}
	}
	return k
}

// checkShape measures the log's one step against the closed form.
func checkShape(t *testing.T, lg *Log) {
	t.Helper()
	tr := lg.Trace
	if lg.Rows != shapeN {
		t.Fatalf("%d rows, want %d", lg.Rows, shapeN)
	}
	for _, i := range []int{0, 700, shapeN - 1} {
		wt, wc, wy := shapeSample(i)
		// Values are written with 6 decimals (timestamps with 3, counts
		// to 1/4000 mm): tolerances of half the last digit written.
		if math.Abs(tr.Time[i]-wt) > 6e-7 || tr.Command[i] != wc || math.Abs(tr.Response[i]-wy) > 1.3e-4 {
			t.Fatalf("sample %d = (%v, %v, %v), want (%v, %v, %v)", i, tr.Time[i], tr.Command[i], tr.Response[i], wt, wc, wy)
		}
	}
	steps := metrics.FindSteps(tr, 1)
	if len(steps) != 1 {
		t.Fatalf("%d steps, want 1", len(steps))
	}
	m := metrics.MeasureStep(tr, steps[0], metrics.DefaultOptions())
	// Ogata Eq. 5-21 and 5-20 (see above); the 1 ms sampling and the six
	// decimals written bound the peak's error to about 0.01 points and the
	// peak time's to one sample.
	mp := 100 * math.Exp(-shapeZeta*math.Pi/math.Sqrt(1-shapeZeta*shapeZeta))
	tp := math.Pi / (shapeWn * math.Sqrt(1-shapeZeta*shapeZeta))
	if !m.Overshoot.OK || math.Abs(m.Overshoot.V-mp) > 0.02 {
		t.Errorf("overshoot %v, closed form %.4f %%", m.Overshoot, mp)
	}
	if !m.PeakTime.OK || math.Abs(m.PeakTime.V-tp) > shapeDt {
		t.Errorf("peak time %v, closed form %.4f s", m.PeakTime, tp)
	}
}

// TestEveryFileFound checks that a lot folder's files all become units:
// logs, a compressed log, each member of an archive, and files that are
// not logs, refused as such; identities come from the names.
func TestEveryFileFound(t *testing.T) {
	dir := t.TempDir()
	good := shapeOpts{header: "t,cmd,pos", delim: ","}.bytes()
	os.WriteFile(filepath.Join(dir, "u1.csv"), good, 0o644)
	os.WriteFile(filepath.Join(dir, "readme.md"), []byte("# Lot 7\nshipped 2026-11-30\n"), 0o644)
	os.WriteFile(filepath.Join(dir, "photo.png"), []byte("\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR"), 0o644)
	os.WriteFile(filepath.Join(dir, "u2.dat"), good, 0o644)
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write(good)
	zw.Close()
	os.WriteFile(filepath.Join(dir, "u3.csv.gz"), gz.Bytes(), 0o644)
	writeZip(t, filepath.Join(dir, "lot.zip"), map[string][]byte{"u4.csv": good, "u5.csv": good, "list.pdf": []byte("%PDF-1.4\n")})
	os.WriteFile(filepath.Join(dir, "broken.zip"), []byte("PK\x03\x04 not really"), 0o644)

	files, err := FindLogs([]string{dir}, nil)
	if err != nil {
		t.Fatal(err)
	}
	rel := make([]string, len(files))
	for i, p := range files {
		rel[i], _ = filepath.Rel(dir, p)
	}
	want := []string{"broken.zip", "lot.zip!list.pdf", "lot.zip!u4.csv", "lot.zip!u5.csv", "photo.png", "readme.md", "u1.csv", "u2.dat", "u3.csv.gz"}
	if strings.Join(rel, " ") != strings.Join(want, " ") {
		t.Fatalf("found %q, want %q", rel, want)
	}
	f := Format{Time: "t", Command: "cmd", Response: "pos", Plausible: true}
	src := Open(f, Options{})
	outcome := map[string]string{}
	for i, p := range files {
		_, err := src.ReadFile(p)
		switch {
		case err == nil:
			outcome[rel[i]] = "read"
		case errors.Is(err, ErrNotLog):
			outcome[rel[i]] = "not a log"
		default:
			outcome[rel[i]] = "refused: " + err.Error()
		}
	}
	wantOutcome := map[string]string{
		"broken.zip": "not a log", "lot.zip!list.pdf": "not a log", "lot.zip!u4.csv": "read", "lot.zip!u5.csv": "read",
		"photo.png": "not a log", "readme.md": "not a log", "u1.csv": "read", "u2.dat": "read", "u3.csv.gz": "read",
	}
	for k, v := range wantOutcome {
		if outcome[k] != v {
			t.Errorf("%s: %s, want %s", k, outcome[k], v)
		}
	}
	for p, want := range map[string]string{"lot.zip!day1/u4.csv": "u4", "u3.csv.gz": "u3", "a/b/u1.csv": "u1", "noext": "noext"} {
		if got := UnitName(p); got != want {
			t.Errorf("UnitName(%q) = %q, want %q", p, got, want)
		}
	}
}

// TestFindFilesPatterns checks that include and exclude patterns leave
// files out of a search, each listed with the pattern, and that a file
// named directly is always taken.
func TestFindFilesPatterns(t *testing.T) {
	dir := t.TempDir()
	for _, n := range []string{"u1.csv", "u2-cal.csv", "notes.md", "day1/u3.csv", "day1/raw/u4.csv"} {
		p := filepath.Join(dir, filepath.FromSlash(n))
		os.MkdirAll(filepath.Dir(p), 0o755)
		os.WriteFile(p, []byte("x"), 0o644)
	}
	writeZip(t, filepath.Join(dir, "lot.zip"), map[string][]byte{"u5.csv": nil, "u6-cal.csv": nil})
	cases := []struct {
		name     string
		paths    []string
		pat      Patterns
		files    string
		excluded string
	}{
		{"exclude by name, also in an archive", []string{dir}, Patterns{Exclude: []string{"*-cal.csv", "*.md"}},
			"day1/raw/u4.csv day1/u3.csv lot.zip!u5.csv u1.csv", "lot.zip!u6-cal.csv=*-cal.csv notes.md=*.md u2-cal.csv=*-cal.csv"},
		{"exclude by path", []string{dir}, Patterns{Exclude: []string{"day1/raw/*"}},
			"day1/u3.csv lot.zip!u5.csv lot.zip!u6-cal.csv notes.md u1.csv u2-cal.csv", "day1/raw/u4.csv=day1/raw/*"},
		{"include", []string{dir}, Patterns{Include: []string{"u?.csv"}},
			"day1/raw/u4.csv day1/u3.csv lot.zip!u5.csv u1.csv",
			"lot.zip!u6-cal.csv=not matched by include: u?.csv notes.md=not matched by include: u?.csv u2-cal.csv=not matched by include: u?.csv"},
		{"a file named directly is taken", []string{filepath.Join(dir, "notes.md")}, Patterns{Exclude: []string{"*.md"}}, "notes.md", ""},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got, err := FindFiles(c.paths, nil, c.pat)
			if err != nil {
				t.Fatal(err)
			}
			var files, ex []string
			for _, f := range got.Files {
				r, _ := filepath.Rel(dir, f)
				files = append(files, filepath.ToSlash(r))
			}
			for _, x := range got.Excluded {
				r, _ := filepath.Rel(dir, x.File)
				ex = append(ex, filepath.ToSlash(r)+"="+x.Pattern)
			}
			if strings.Join(files, " ") != c.files || strings.Join(ex, " ") != c.excluded {
				t.Errorf("files %q excluded %q\nwant %q and %q", files, ex, c.files, c.excluded)
			}
		})
	}
}
