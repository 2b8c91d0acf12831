package acceptance

import (
	"cmp"
	"slices"
	"strings"
	"time"
)

// PriorAttempt is an attempt of a serial judged before this batch, as the
// line record gives it.
type PriorAttempt struct {
	Serial    string
	File      string
	SHA256    string
	StartedAt time.Time // zero when the log carried no start time
	FileTime  time.Time // zero when unknown
	Verdict   Verdict
	RunTime   time.Time // when the earlier run judged it
}

// Retest is a serial tested more than once: its attempts in order.
type Retest struct {
	Serial   string
	Attempts []RetestAttempt
}

// RetestAttempt is one attempt of a retested serial.
type RetestAttempt struct {
	Attempt   int // 1 for the first
	File      string
	StartedAt time.Time // zero when the log carried no start time
	Verdict   Verdict
	Earlier   bool // judged by an earlier run (from the line record)
}

// Final is the serial's disposition: the verdict of its latest attempt.
func (r Retest) Final() Verdict { return r.Attempts[len(r.Attempts)-1].Verdict }

// StartedAt returns the start time a log's metadata gives under
// started_at (RFC 3339, in the offset written there, or "YYYY-MM-DD
// hh:mm:ss" read as UTC); zero when it gives none that can be read.
func StartedAt(md map[string]string) time.Time {
	v := strings.TrimSpace(md["started_at"])
	if v == "" {
		return time.Time{}
	}
	for _, layout := range []string{time.RFC3339Nano, "2006-01-02 15:04:05", "2006-01-02T15:04:05"} {
		if t, err := time.Parse(layout, v); err == nil {
			return t
		}
	}
	return time.Time{}
}

// attemptKey orders the attempts of one serial: by start time, where a
// log carries none by its file time, then by file name. A file's time
// never decides between two logs that carry start times, so that copies
// of the same logs (whose file times differ) give the same order.
type attemptKey struct {
	at   time.Time
	name string
}

func keyOf(started, file time.Time, name string) attemptKey {
	at := started
	if at.IsZero() {
		at = file
	}
	return attemptKey{at: at, name: name}
}

func compareKeys(a, b attemptKey) int {
	if c := a.at.Compare(b.at); c != 0 {
		return c
	}
	return strings.Compare(a.name, b.name)
}

// CompareAttempts orders two units of one serial as attempts: by start
// time (file time where the log carries none), then file.
func CompareAttempts(a, b *UnitResult) int {
	return compareKeys(keyOf(StartedAt(a.Metadata), a.FileTime, a.File), keyOf(StartedAt(b.Metadata), b.FileTime, b.File))
}

// IsCopy reports whether u is a second copy of another log of its batch
// (it carries a DuplicateFile reason); a copy is no attempt of its own.
func IsCopy(u *UnitResult) bool {
	for _, r := range u.Reasons {
		if r.Kind == DuplicateFile {
			return true
		}
	}
	return false
}

// chainEntry is one attempt of a serial while the chain is built: a unit
// of the batch (unit >= 0) or an earlier attempt (unit < 0).
type chainEntry struct {
	key     attemptKey
	unit    int
	prior   *PriorAttempt
	verdict Verdict
}

// ChainAttempts numbers the attempts of every serial of b and sets the
// summary's serial counts and yields and b.Retests. units must be sorted
// by serial (Unit). prior holds the attempts of earlier runs (from the
// line record); one whose file content (SHA-256) is also in the batch is
// the same attempt and counts once.
//
// Definitions (common practice for first-pass and rolled yields): a
// serial's attempts are ordered by start time (file time where a log has
// none); its disposition is its latest attempt; first-pass yield is the
// share of serials whose first attempt passed, final yield the share whose
// latest attempt passed. An invalid attempt did not pass. A second copy of
// a log (IsCopy) is no attempt: it takes the attempt number of the log it
// repeats.
//
// ChainAttempts may be called again (with the record's attempts, once they
// are known); it replaces what an earlier call set.
func ChainAttempts(b *Batch, prior []PriorAttempt) {
	bySerial := map[string][]*PriorAttempt{}
	for i := range prior {
		bySerial[prior[i].Serial] = append(bySerial[prior[i].Serial], &prior[i])
	}
	sum := &b.Summary
	sum.Serials, sum.Retested = 0, 0
	firstPass, finalPass := 0, 0
	b.Retests = nil
	units := b.Units
	for i := 0; i < len(units); {
		j := i + 1
		for j < len(units) && units[j].Unit == units[i].Unit {
			j++
		}
		chain := chainOf(units, i, j, bySerial[units[i].Unit])
		sum.Serials++
		if chain[0].verdict == Pass {
			firstPass++
		}
		if chain[len(chain)-1].verdict == Pass {
			finalPass++
		}
		if len(chain) > 1 {
			sum.Retested++
			b.Retests = append(b.Retests, retestOf(units, units[i].Unit, chain))
		}
		i = j
	}
	sum.FirstPassYieldPct, sum.FinalYieldPct = nil, nil
	if sum.Serials > 0 {
		fp := 100 * float64(firstPass) / float64(sum.Serials)
		fy := 100 * float64(finalPass) / float64(sum.Serials)
		sum.FirstPassYieldPct, sum.FinalYieldPct = &fp, &fy
	}
}

// chainOf orders the attempts of one serial, units[i:j] with its earlier
// attempts, numbers the units and returns the chain.
func chainOf(units []UnitResult, i, j int, prior []*PriorAttempt) []chainEntry {
	inBatch := map[string]bool{}
	var chain []chainEntry
	for k := i; k < j; k++ {
		u := &units[k]
		if u.SHA256 != "" {
			inBatch[u.SHA256] = true
		}
		if IsCopy(u) {
			continue
		}
		chain = append(chain, chainEntry{key: keyOf(StartedAt(u.Metadata), u.FileTime, u.File), unit: k, verdict: u.Verdict})
	}
	seen := map[string]bool{}
	for _, p := range prior {
		if p.SHA256 != "" && (inBatch[p.SHA256] || seen[p.SHA256]) {
			continue
		}
		seen[p.SHA256] = true
		chain = append(chain, chainEntry{key: keyOf(p.StartedAt, p.FileTime, p.File), unit: -1, prior: p, verdict: p.Verdict})
	}
	slices.SortStableFunc(chain, func(a, b chainEntry) int {
		return cmp.Or(compareKeys(a.key, b.key), cmp.Compare(a.unit, b.unit))
	})
	bySHA := map[string]int{}
	for n, e := range chain {
		if e.unit >= 0 {
			units[e.unit].Attempt = n + 1
			if s := units[e.unit].SHA256; s != "" {
				bySHA[s] = n + 1
			}
		}
	}
	for k := i; k < j; k++ {
		units[k].Attempts = len(chain)
		if IsCopy(&units[k]) {
			units[k].Attempt = bySHA[units[k].SHA256]
		}
	}
	return chain
}

// retestOf describes a serial's chain for the retest tables.
func retestOf(units []UnitResult, serial string, chain []chainEntry) Retest {
	r := Retest{Serial: serial, Attempts: make([]RetestAttempt, len(chain))}
	for n, e := range chain {
		a := RetestAttempt{Attempt: n + 1, Verdict: e.verdict}
		if e.unit >= 0 {
			a.File, a.StartedAt = units[e.unit].File, StartedAt(units[e.unit].Metadata)
		} else {
			a.File, a.StartedAt, a.Earlier = e.prior.File, e.prior.StartedAt, true
		}
		r.Attempts[n] = a
	}
	return r
}
