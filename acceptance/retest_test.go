package acceptance_test

import (
	"fmt"
	"math"
	"testing"
	"time"

	"github.com/stepgate/stepgate/acceptance"
)

// at is 2026-11-30 at hh:mm UTC, as a started_at value.
func at(hh, mm int) string {
	return time.Date(2026, 11, 30, hh, mm, 0, 0, time.UTC).Format(time.RFC3339)
}

// attempt builds a unit of serial s started at start ("" for none) with a
// verdict and a file content digest.
func attempt(s, file, start string, v acceptance.Verdict, sha string) acceptance.UnitResult {
	md := map[string]string{}
	if start != "" {
		md["started_at"] = start
	}
	return acceptance.UnitResult{Unit: s, File: file, SHA256: sha, Metadata: md, Verdict: v}
}

// The yields follow the common-practice definitions (common practice, no
// source): first-pass yield = serials that passed at their first attempt /
// serials; final yield = serials whose latest attempt passed / serials; an
// invalid attempt did not pass; a serial's disposition is its latest
// attempt.
func TestChainAttempts(t *testing.T) {
	P, F, I := acceptance.Pass, acceptance.Fail, acceptance.Invalid
	earlier := time.Date(2026, 11, 29, 8, 0, 0, 0, time.UTC)
	cases := []struct {
		name       string
		units      []acceptance.UnitResult // sorted by serial
		prior      []acceptance.PriorAttempt
		attempts   []int // want, per unit: Attempt
		of         []int // want, per unit: Attempts
		serials    int
		retested   int
		firstPass  float64 // %
		finalYield float64 // %
	}{
		{name: "no units", firstPass: math.NaN(), finalYield: math.NaN()},
		{name: "one pass", units: []acceptance.UnitResult{attempt("A", "a.csv", at(6, 0), P, "1")},
			attempts: []int{1}, of: []int{1}, serials: 1, firstPass: 100, finalYield: 100},
		{name: "fail then pass: a retest chain",
			units:    []acceptance.UnitResult{attempt("A", "a1.csv", at(6, 0), F, "1"), attempt("A", "a2.csv", at(7, 0), P, "2"), attempt("B", "b.csv", at(6, 5), P, "3")},
			attempts: []int{1, 2, 1}, of: []int{2, 2, 1}, serials: 2, retested: 1, firstPass: 50, finalYield: 100},
		{name: "pass then fail: the latest attempt decides",
			units:    []acceptance.UnitResult{attempt("A", "z.csv", at(6, 0), P, "1"), attempt("A", "a.csv", at(9, 0), F, "2")},
			attempts: []int{1, 2}, of: []int{2, 2}, serials: 1, retested: 1, firstPass: 100, finalYield: 0},
		{name: "invalid first, three attempts",
			units: []acceptance.UnitResult{attempt("A", "1.csv", at(6, 0), I, "1"), attempt("A", "2.csv", at(6, 30), F, "2"), attempt("A", "3.csv", at(7, 0), P, "3"),
				attempt("B", "b.csv", at(6, 0), F, "4"), attempt("C", "c.csv", at(6, 0), P, "5")},
			attempts: []int{1, 2, 3, 1, 1}, of: []int{3, 3, 3, 1, 1}, serials: 3, retested: 1, firstPass: 100.0 / 3, finalYield: 200.0 / 3},
		{name: "earlier runs' attempts come first",
			units:    []acceptance.UnitResult{attempt("A", "a.csv", at(6, 0), P, "2")},
			prior:    []acceptance.PriorAttempt{{Serial: "A", File: "old/a.csv", SHA256: "1", StartedAt: earlier, Verdict: F}},
			attempts: []int{2}, of: []int{2}, serials: 1, retested: 1, firstPass: 0, finalYield: 100},
		{name: "a file already recorded is the same attempt",
			units:    []acceptance.UnitResult{attempt("A", "a.csv", at(6, 0), P, "1")},
			prior:    []acceptance.PriorAttempt{{Serial: "A", File: "a.csv", SHA256: "1", StartedAt: earlier, Verdict: P}},
			attempts: []int{1}, of: []int{1}, serials: 1, firstPass: 100, finalYield: 100},
		{name: "without start times the file time orders",
			units: func() []acceptance.UnitResult {
				a, b := attempt("A", "a.csv", "", P, "1"), attempt("A", "b.csv", "", F, "2")
				a.FileTime, b.FileTime = earlier.Add(time.Hour), earlier // b.csv was written first
				return []acceptance.UnitResult{a, b}
			}(),
			attempts: []int{2, 1}, of: []int{2, 2}, serials: 1, retested: 1, firstPass: 0, finalYield: 100},
		{name: "a copy takes its original's attempt",
			units: func() []acceptance.UnitResult {
				c := attempt("A", "b.csv", at(6, 0), I, "1")
				c.Reasons = []acceptance.Reason{acceptance.DuplicateFileReason("A", "a.csv")}
				return []acceptance.UnitResult{attempt("A", "a.csv", at(6, 0), P, "1"), c}
			}(),
			attempts: []int{1, 1}, of: []int{1, 1}, serials: 1, firstPass: 100, finalYield: 100},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			b := &acceptance.Batch{Units: c.units}
			acceptance.ChainAttempts(b, c.prior)
			acceptance.ChainAttempts(b, c.prior) // a second call replaces the first
			for i, u := range b.Units {
				if u.Attempt != c.attempts[i] || u.Attempts != c.of[i] {
					t.Errorf("%s: attempt %d of %d, want %d of %d", u.File, u.Attempt, u.Attempts, c.attempts[i], c.of[i])
				}
			}
			s := b.Summary
			if s.Serials != c.serials || s.Retested != c.retested || len(b.Retests) != c.retested {
				t.Errorf("serials %d retested %d (%d retests), want %d and %d", s.Serials, s.Retested, len(b.Retests), c.serials, c.retested)
			}
			for _, p := range []struct {
				name string
				got  *float64
				want float64
			}{{"first-pass yield", s.FirstPassYieldPct, c.firstPass}, {"final yield", s.FinalYieldPct, c.finalYield}} {
				if math.IsNaN(p.want) != (p.got == nil) || p.got != nil && math.Abs(*p.got-p.want) > 1e-12 {
					t.Errorf("%s %s, want %v", p.name, show(p.got), p.want)
				}
			}
		})
	}
}

func show(p *float64) string {
	if p == nil {
		return "null"
	}
	return fmt.Sprint(*p)
}

// The retest table lists a chain's attempts in order with the latest
// attempt as the disposition.
func TestRetestsTable(t *testing.T) {
	b := &acceptance.Batch{Units: []acceptance.UnitResult{
		attempt("A", "a1.csv", at(6, 0), acceptance.Fail, "1"), attempt("A", "a2.csv", at(7, 0), acceptance.Pass, "2"),
	}}
	acceptance.ChainAttempts(b, []acceptance.PriorAttempt{{Serial: "A", File: "old.csv", SHA256: "0", StartedAt: time.Date(2026, 11, 1, 0, 0, 0, 0, time.UTC), Verdict: acceptance.Invalid}})
	if len(b.Retests) != 1 {
		t.Fatalf("retests %+v", b.Retests)
	}
	r := b.Retests[0]
	if len(r.Attempts) != 3 || !r.Attempts[0].Earlier || r.Attempts[0].File != "old.csv" || r.Attempts[2].File != "a2.csv" || r.Final() != acceptance.Pass {
		t.Errorf("retest %+v", r)
	}
}
