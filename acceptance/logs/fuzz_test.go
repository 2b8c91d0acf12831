package logs

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// FuzzRead checks the reader's invariants on arbitrary bytes: it never
// panics; it either fails with a *ParseError or returns a trace whose
// columns have equal lengths, at least two rows, strictly increasing time
// and only finite values, with the digest of exactly the bytes given.
func FuzzRead(f *testing.F) {
	seeds := []string{
		"time,command,position\n0,0,0\n0.001,1,0.25\n",
		"# serial: A\ntime;command;position;effort\r\n0,0;0;0;0\r\n0,1;1;1;1\r\n",
		"\xef\xbb\xbftime\tcommand\tposition\n0\t0\t0\n1e-3\t1\t1\n",
		"time,command,position\n0,0,0\n0,0,0\n",
		"time,command,position\n0,NaN,0\n1,1,1",
		"\x1f\x8b\x08",
		"\xff\xfet\x00i\x00",
		"",
		"time,command,position,time\n",
	}
	for i, s := range seeds {
		f.Add([]byte(s), i%2 == 0, i%3 == 0)
	}
	// The logs of the test data, with their headers renamed to the columns
	// read here: the bad-input corpus (testdata/bad/README.md), the
	// end-to-end logs and the sample logs. Long logs are cut to their first
	// 32 KiB, itself a truncated-log seed.
	for _, glob := range []string{"../../testdata/bad/*.csv", "../../testdata/e2e/*.csv", "../../testdata/logs/*.csv"} {
		paths, _ := filepath.Glob(glob)
		for _, p := range paths {
			data, err := os.ReadFile(p)
			if err != nil {
				f.Fatal(err)
			}
			data = data[:min(len(data), 32<<10)]
			for _, h := range [][2]string{
				{"t,cmd,pos,effort", "time,command,position,effort"},
				{"t,target,position,drive", "time,command,position,effort"},
				{"Zeit_ms;Sollwert;Istwert", "time;command;position"},
			} {
				data = bytes.Replace(data, []byte(h[0]), []byte(h[1]), 1)
			}
			f.Add(data, bytes.Contains(data, []byte("Istwert")) || bytes.Contains(data, []byte("time;command;position")), true)
		}
	}
	f.Fuzz(func(t *testing.T, data []byte, decimalComma, effort bool) {
		fm := Format{Time: "time", Command: "command", Response: "position", DecimalComma: decimalComma, MaxLineBytes: 4096}
		if effort {
			fm.Effort = "effort"
		}
		lg, err := Read(bytes.NewReader(data), "fuzz.csv", fm)
		if err != nil {
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error %v is not a *ParseError", err)
			}
			return
		}
		tr := lg.Trace
		n := tr.Len()
		if n < 2 || lg.Rows != n || len(tr.Command) != n || len(tr.Response) != n {
			t.Fatalf("rows %d, lengths %d %d %d", lg.Rows, n, len(tr.Command), len(tr.Response))
		}
		// Effort is optional: read when asked for and the header has it.
		if (!effort && tr.Effort != nil) || (tr.Effort != nil && len(tr.Effort) != n) {
			t.Fatalf("effort %v with %d values", effort, len(tr.Effort))
		}
		for i := range n {
			vals := []float64{tr.Time[i], tr.Command[i], tr.Response[i]}
			if tr.Effort != nil {
				vals = append(vals, tr.Effort[i])
			}
			for _, v := range vals {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					t.Fatalf("row %d holds %v", i, v)
				}
			}
			if i > 0 && !(tr.Time[i] > tr.Time[i-1]) {
				t.Fatalf("time %v after %v", tr.Time[i], tr.Time[i-1])
			}
		}
		sum := sha256.Sum256(data)
		if lg.SHA256 != hex.EncodeToString(sum[:]) || lg.Size != int64(len(data)) {
			t.Fatalf("digest %s size %d for %d bytes", lg.SHA256, lg.Size, len(data))
		}
	})
}

// FuzzParseNumber checks the number parser against strconv.ParseFloat, the
// Go standard library's correctly rounded conversion: whatever it accepts
// must convert to the same bits, and any text made only of digits, signs,
// points and exponent letters that strconv converts to a finite value must
// be accepted.
func FuzzParseNumber(f *testing.F) {
	for _, s := range []string{"0", "-1.5e-3", "9007199254740993", "1e23", ".5", "5.", "1e", "NaN", "0x10", "1_0"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		var scratch []byte
		got, st := parseNumber([]byte(s), '.', 0, &scratch)
		want, err := strconv.ParseFloat(s, 64)
		if st == numOK {
			if err != nil || !sameFloat(got, want) {
				t.Fatalf("parseNumber(%q) = %v; strconv gives %v, %v", s, got, want, err)
			}
			return
		}
		plain := len(s) > 0
		for i := 0; i < len(s); i++ {
			if c := s[i]; !('0' <= c && c <= '9' || c == '+' || c == '-' || c == '.' || c == 'e' || c == 'E') {
				plain = false
			}
		}
		if plain && err == nil && !math.IsInf(want, 0) {
			t.Fatalf("parseNumber(%q) refused it (%d); strconv gives %v", s, st, want)
		}
	})
}
