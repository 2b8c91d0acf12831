package spec

import (
	"fmt"
	"path/filepath"
	"strings"
	"time"
)

// LineInfo says where a unit's lot and shift come from.
type LineInfo struct {
	Lot LotSource `yaml:"lot"`
	// Shifts are the line's shifts, each from its start (a time of day)
	// to the next one's start; the last runs past midnight to the first.
	// Empty: units carry no shift.
	Shifts []Shift `yaml:"shifts"`
}

// LotSource names where a unit's lot is read: a metadata key of the log
// (Metadata), or the name of the folder holding the log (Folder). Neither:
// units carry no lot.
type LotSource struct {
	Metadata string `yaml:"metadata"` // a "# key: value" line of the log, e.g. lot
	Folder   bool   `yaml:"folder"`   // the log's folder name is its lot
}

// Shift is one shift of the line: its name and the time of day it starts,
// "hh:mm" (24-hour clock), compared with the clock time the log's
// started_at is written in.
type Shift struct {
	Name   string `yaml:"name"`
	Starts string `yaml:"starts"`
}

// LotOf returns the lot of the log at path with metadata md, or "" when
// the spec names no source or the source gives nothing.
func (l LineInfo) LotOf(path string, md map[string]string) string {
	switch {
	case l.Lot.Metadata != "":
		return strings.TrimSpace(md[strings.ToLower(l.Lot.Metadata)])
	case l.Lot.Folder:
		d := filepath.Base(filepath.Dir(path))
		if d == "." || d == string(filepath.Separator) {
			return ""
		}
		return d
	}
	return ""
}

// ShiftOf returns the name of the shift a test started at t falls in, by
// the time of day in t's own location; "" when t is zero or the spec has
// no shifts. Shifts must have been validated (validateLine).
func (l LineInfo) ShiftOf(t time.Time) string {
	if t.IsZero() || len(l.Shifts) == 0 {
		return ""
	}
	m := t.Hour()*60 + t.Minute()
	best, bestStart := -1, -1
	latest, latestStart := 0, -1
	for i, s := range l.Shifts {
		start, _ := minuteOfDay(s.Starts)
		if start <= m && start > bestStart {
			best, bestStart = i, start
		}
		if start > latestStart {
			latest, latestStart = i, start
		}
	}
	if best < 0 { // before the first start of the day: the last shift of the previous day
		best = latest
	}
	return l.Shifts[best].Name
}

// minuteOfDay reads "hh:mm" as minutes after midnight.
func minuteOfDay(s string) (int, error) {
	t, err := time.Parse("15:04", strings.TrimSpace(s))
	if err != nil {
		return 0, fmt.Errorf("must be a time of day hh:mm (24-hour clock), got %q", s)
	}
	return t.Hour()*60 + t.Minute(), nil
}

// validateLine checks the line section: one lot source at most, shifts
// with names and distinct start times.
func (p *parser) validateLine() {
	l := p.spec.Line
	if l.Lot.Metadata != "" && l.Lot.Folder && !p.skip("line.lot") {
		p.problem("line.lot", valNode, "give either metadata (the log's metadata key holding the lot) or folder: true, not both")
	}
	if p.present("line.lot.metadata") && strings.TrimSpace(l.Lot.Metadata) == "" && !p.skip("line.lot.metadata") {
		p.problem("line.lot.metadata", valNode, "must name a metadata key, e.g. lot")
	}
	seenName, seenStart := map[string]int{}, map[int]int{}
	for i, s := range l.Shifts {
		key := fmt.Sprintf("line.shifts[%d]", i)
		if p.skip(key) {
			continue
		}
		if strings.TrimSpace(s.Name) == "" {
			p.problem(key+".name", valNode, "required: the shift's name, e.g. A")
		} else if j, dup := seenName[s.Name]; dup {
			p.problem(key+".name", valNode, "shift %q is named twice (also shifts[%d])", s.Name, j)
		}
		seenName[s.Name] = i
		m, err := minuteOfDay(s.Starts)
		if err != nil {
			p.problem(key+".starts", valNode, "%v", err)
			continue
		}
		if j, dup := seenStart[m]; dup {
			p.problem(key+".starts", valNode, "starts at %s as shifts[%d] does", s.Starts, j)
		}
		seenStart[m] = i
	}
}
