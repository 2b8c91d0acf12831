package rigsim

import (
	"bytes"
	"encoding/csv"
	"strconv"
	"strings"
	"testing"
)

func smallRecord(t *testing.T) Record {
	t.Helper()
	rig := pLoop(0.6, 5)
	rig.Loop = Loop{SampleRate: 100, Delay: 0.01, EffortLimit: 30}
	rig.Encoder = Encoder{Count: 1e-5, NoiseSD: 3e-6, Seed: 4}
	rec, err := Simulate(rig, Step{Time: 0.05, To: 0.25}, 2)
	if err != nil {
		t.Fatal(err)
	}
	return rec
}

// The written log reads back through Go's encoding/csv (RFC 4180, a
// general-purpose reference reader) to exactly the record's numbers when
// the shortest format is used, and to within the stated rounding
// otherwise; metadata lines come first in the stated style.
func TestWriteCSVReadsBack(t *testing.T) {
	rec := smallRecord(t)
	cases := []struct {
		name     string
		layout   CSVLayout
		meta     []string // the expected metadata lines
		header   string
		parse    func(string) (float64, error)
		relTol   float64
		timeMult float64
	}{
		{"default", CSVLayout{}, nil, "time,command,position,effort", parseDot, 0, 1},
		{"comment metadata, named columns, tab", CSVLayout{
			Delimiter: '\t', Columns: [4]string{"t [s]", "cmd (mm)", "pos (mm)", "I (A)"},
			Metadata: []Meta{{"serial", "SN-001"}, {"date", "2026-03-01T10:00:00Z"}},
		}, []string{"# serial: SN-001", "# date: 2026-03-01T10:00:00Z"}, "t [s]\tcmd (mm)\tpos (mm)\tI (A)", parseDot, 0, 1},
		{"semicolon, decimal comma, pairs, ms", CSVLayout{
			Delimiter: ';', DecimalComma: true, MetaStyle: MetaPair, TimeScale: 1000,
			Metadata: []Meta{{"unit", "A;7"}}, Columns: [4]string{"t_ms"},
		}, []string{`unit;"A;7"`}, "t_ms;command;position;effort", parseComma, 0, 1000},
		{"fixed decimals, no effort, CRLF", CSVLayout{Decimals: 6, OmitEffort: true, CRLF: true, MetaStyle: MetaEquals,
			Metadata: []Meta{{"rate", "100"}}}, []string{"rate=100"}, "time,command,position", parseDot, 5e-7, 1},
		{"four digits", CSVLayout{Digits: 4}, nil, "time,command,position,effort", parseDot, 5e-4, 1},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var buf bytes.Buffer
			if err := WriteCSV(&buf, rec, c.layout); err != nil {
				t.Fatal(err)
			}
			text := buf.String()
			if c.layout.CRLF != strings.Contains(text, "\r\n") {
				t.Errorf("CRLF line ends: want %v", c.layout.CRLF)
			}
			lines := strings.Split(strings.ReplaceAll(text, "\r\n", "\n"), "\n")
			for i, want := range c.meta {
				if lines[i] != want {
					t.Errorf("metadata line %d = %q, want %q", i+1, lines[i], want)
				}
			}
			if got := lines[len(c.meta)]; got != c.header {
				t.Errorf("header %q, want %q", got, c.header)
			}
			r := csv.NewReader(strings.NewReader(strings.Join(lines[len(c.meta):], "\n")))
			r.Comma = c.layout.delim()
			rows, err := r.ReadAll()
			if err != nil {
				t.Fatal(err)
			}
			if len(rows) != rec.Len()+1 {
				t.Fatalf("%d rows, want %d", len(rows), rec.Len()+1)
			}
			cols := [][]float64{rec.T, rec.Command, rec.Position, rec.Effort}
			for i, row := range rows[1:] {
				for j, f := range row {
					v, err := c.parse(f)
					if err != nil {
						t.Fatalf("row %d column %d: %v", i+2, j+1, err)
					}
					want := cols[j][i]
					if j == 0 {
						want *= c.timeMult
					}
					if d := abs(v - want); d > c.relTol*abs(want) && !(c.layout.Decimals > 0 && d <= c.relTol) {
						t.Fatalf("row %d column %d: %s reads %v, want %v", i+2, j+1, f, v, want)
					}
				}
			}
		})
	}
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

func parseDot(s string) (float64, error) { return strconv.ParseFloat(s, 64) }

func parseComma(s string) (float64, error) {
	return strconv.ParseFloat(strings.ReplaceAll(s, ",", "."), 64)
}

func TestWriteCSVRefusesAmbiguousLayouts(t *testing.T) {
	rec := Record{T: []float64{0}, Command: []float64{0}, Position: []float64{0}, Effort: []float64{0}}
	for _, l := range []CSVLayout{
		{DecimalComma: true},
		{Delimiter: '.'},
		{Delimiter: '"'},
		{Digits: 18},
		{MetaStyle: 9},
	} {
		if err := WriteCSV(&bytes.Buffer{}, rec, l); err == nil {
			t.Errorf("layout %+v accepted", l)
		}
	}
	bad := rec
	bad.Position = nil
	if err := WriteCSV(&bytes.Buffer{}, bad, CSVLayout{}); err == nil {
		t.Error("record with a missing column accepted")
	}
}
