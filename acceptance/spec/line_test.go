package spec_test

import (
	"strings"
	"testing"
	"time"

	"github.com/stepgate/stepgate/acceptance/spec"
)

// The line section: a lot from a metadata key or the folder, shifts by
// their start times; problems name the key.
func TestParseLine(t *testing.T) {
	cases := []struct {
		name, line, key, msg string
	}{
		{"lot from metadata and shifts", "line:\n  lot: {metadata: lot}\n  shifts: [{name: A, starts: \"06:00\"}, {name: B, starts: \"14:00\"}, {name: C, starts: \"22:00\"}]\n", "", ""},
		{"lot from the folder", "line: {lot: {folder: true}}\n", "", ""},
		{"both lot sources", "line: {lot: {metadata: lot, folder: true}}\n", "line.lot", "not both"},
		{"blank metadata key", "line: {lot: {metadata: \" \"}}\n", "line.lot.metadata", "must name a metadata key"},
		{"bad start", "line: {shifts: [{name: A, starts: \"6h\"}]}\n", "line.shifts[0].starts", `hh:mm (24-hour clock), got "6h"`},
		{"nameless shift", "line: {shifts: [{starts: \"06:00\"}]}\n", "line.shifts[0].name", "required"},
		{"two shifts at one time", "line: {shifts: [{name: A, starts: \"06:00\"}, {name: B, starts: \"6:00\"}]}\n", "line.shifts[1].starts", "as shifts[0] does"},
		{"unknown key", "line: {batch: x}\n", "line.batch", "unknown key"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			probs := problemsOf(t, baseSpec+c.line)
			if c.key == "" {
				if len(probs) != 0 {
					t.Fatalf("want a valid spec, got %v", probs)
				}
				return
			}
			if len(probs) != 1 || probs[0].Key != c.key || !strings.Contains(probs[0].Msg, c.msg) {
				t.Errorf("problems %v, want one at %s: …%s…", probs, c.key, c.msg)
			}
		})
	}
}

// A test belongs to the shift whose start is the latest at or before its
// time of day; before the first start of the day it belongs to the
// previous day's last shift (a night shift across midnight).
func TestShiftAndLot(t *testing.T) {
	l := spec.LineInfo{Shifts: []spec.Shift{{"B", "14:00"}, {"A", "06:00"}, {"C", "22:00"}}, Lot: spec.LotSource{Metadata: "Lot"}}
	berlin := time.FixedZone("CET", 3600)
	for _, c := range []struct {
		at   time.Time
		want string
	}{
		{time.Date(2026, 11, 30, 6, 0, 0, 0, time.UTC), "A"},
		{time.Date(2026, 11, 30, 13, 59, 59, 0, time.UTC), "A"},
		{time.Date(2026, 11, 30, 14, 0, 0, 0, time.UTC), "B"},
		{time.Date(2026, 11, 30, 23, 0, 0, 0, time.UTC), "C"},
		{time.Date(2026, 11, 30, 2, 0, 0, 0, time.UTC), "C"},
		{time.Date(2026, 11, 30, 5, 30, 0, 0, berlin), "C"}, // the clock time as written
		{time.Time{}, ""},
	} {
		if got := l.ShiftOf(c.at); got != c.want {
			t.Errorf("ShiftOf(%v) = %q, want %q", c.at, got, c.want)
		}
	}
	if got := l.LotOf("logs/L7/u.csv", map[string]string{"lot": " L-42 "}); got != "L-42" {
		t.Errorf("lot from metadata %q", got)
	}
	if got := (spec.LineInfo{Lot: spec.LotSource{Folder: true}}).LotOf("logs/L7/u.csv", nil); got != "L7" {
		t.Errorf("lot from folder %q", got)
	}
	if got := (spec.LineInfo{}).LotOf("logs/L7/u.csv", map[string]string{"lot": "x"}); got != "" {
		t.Errorf("lot without a source %q", got)
	}
}
