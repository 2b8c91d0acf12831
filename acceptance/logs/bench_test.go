package logs

import (
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// BenchmarkReadFile reads an 18,000-row, 4-column log, the size of one
// end-of-line step test, with a reused Reader as a batch worker does.
func BenchmarkReadFile(b *testing.B) {
	data := genLog(18000, 0)
	path := filepath.Join(b.TempDir(), "bench.csv")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		b.Fatal(err)
	}
	rd := NewReader(withEffort(base))
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		lg, err := rd.ReadFile(path)
		if err != nil {
			b.Fatal(err)
		}
		if lg.Rows != 18000 {
			b.Fatalf("%d rows", lg.Rows)
		}
	}
}

// benchFields are values as rigs write them.
var benchFields = [][]byte{
	[]byte("0.0125"), []byte("10.0"), []byte("9.87654"), []byte("-0.003"), []byte("1234.5678"),
	[]byte("0.000001"), []byte("12"), []byte("3.14159265358979"), []byte("1.5e-3"), []byte("-42.125"),
}

// BenchmarkParseFloat converts typical log fields with this package's
// parser and, for comparison, with strconv.ParseFloat over a string.
func BenchmarkParseFloat(b *testing.B) {
	var n int64
	for _, f := range benchFields {
		n += int64(len(f))
	}
	b.Run("logs", func(b *testing.B) {
		var scratch []byte
		b.SetBytes(n)
		b.ReportAllocs()
		for b.Loop() {
			for _, f := range benchFields {
				if _, st := parseNumber(f, '.', 0, &scratch); st != numOK {
					b.Fatal(st)
				}
			}
		}
	})
	b.Run("strconv", func(b *testing.B) {
		strs := make([]string, len(benchFields))
		for i, f := range benchFields {
			strs[i] = string(f)
		}
		b.SetBytes(n)
		b.ReportAllocs()
		for b.Loop() {
			for _, s := range strs {
				if _, err := strconv.ParseFloat(s, 64); err != nil {
					b.Fatal(err)
				}
			}
		}
	})
}
