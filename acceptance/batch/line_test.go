package batch_test

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"

	"github.com/stepgate/stepgate/acceptance/spec"
)

// Units carry the lot (here the folder name) and the shift their test
// started in (the good log starts at 06:00 UTC; a copy edited to 23:30 is
// in the night shift).
func TestLotAndShift(t *testing.T) {
	sp := loadCorpusSpec(t, corpusSpec)
	sp.Line = spec.LineInfo{Lot: spec.LotSource{Folder: true}, Shifts: []spec.Shift{{Name: "early", Starts: "06:00"}, {Name: "night", Starts: "22:00"}}}
	dir := filepath.Join(t.TempDir(), "LOT-7")
	if err := os.Mkdir(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	a := writeCase(t, filepath.Join(dir, "a.csv"), goodBytes(t))
	b := writeCase(t, filepath.Join(dir, "b.csv"), bytes.Replace(bytes.Replace(goodBytes(t), []byte("T06:00:00Z"), []byte("T23:30:00Z"), 1), []byte(goodSerial), []byte("NIGHT-1"), 1))
	res := runBatch(t, sp, []string{a, b})
	want := map[string]string{goodSerial: "early", "NIGHT-1": "night"}
	for _, u := range res.Units {
		if u.Lot != "LOT-7" || u.Shift != want[u.Unit] {
			t.Errorf("%s: lot %q shift %q, want LOT-7 and %q", u.Unit, u.Lot, u.Shift, want[u.Unit])
		}
	}
}
