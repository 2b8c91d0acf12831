package acceptance

import (
	"fmt"
	"math/rand"
	"slices"
	"sort"
	"testing"

	"github.com/stepgate/stepgate/metrics"
)

// The keeper ends with the records of exactly the units PageUnits will
// pick, whatever order the workers finish the files in, and never holds
// more than its limit.
func TestPageKeeperKeepsThePageUnits(t *testing.T) {
	r := rand.New(rand.NewSource(7))
	type unit struct {
		id, file string
		v        Verdict
	}
	var units []unit
	for i := 0; i < 60; i++ {
		v := []Verdict{Pass, Pass, Fail, Invalid}[r.Intn(4)]
		// Ids out of file order, and one id in two files.
		id := fmt.Sprintf("SN-%03d", (i*37)%60)
		if i == 59 {
			id = units[3].id
		}
		units = append(units, unit{id: id, file: fmt.Sprintf("logs/%02d.csv", i), v: v})
	}
	for _, all := range []bool{false, true} {
		for _, limit := range []int{1, 7, 100} {
			// What PageUnits picks from the batch sorted as Run sorts it.
			sorted := slices.Clone(units)
			sort.SliceStable(sorted, func(i, j int) bool {
				return pageKey{sorted[i].id, sorted[i].file}.before(pageKey{sorted[j].id, sorted[j].file})
			})
			var want []string
			for _, u := range sorted {
				if len(want) < limit && (all || u.v != Pass) {
					want = append(want, u.file)
				}
			}
			sort.Strings(want)
			for trial := 0; trial < 20; trial++ {
				k := newPageKeeper(limit, all)
				for _, i := range r.Perm(len(units)) {
					u := units[i]
					if k.admit(u.id, u.file, u.v) {
						k.store(u.file, &metrics.Trace{})
					}
					if n := len(k.kept); n > limit {
						t.Fatalf("all %v, limit %d: %d records held", all, limit, n)
					}
				}
				var got []string
				for f := range k.traces() {
					got = append(got, f)
				}
				sort.Strings(got)
				if !slices.Equal(got, want) {
					t.Fatalf("all %v, limit %d, trial %d: kept %v, want %v", all, limit, trial, got, want)
				}
			}
		}
	}
}

// A record whose unit lost its place between admit and store is not kept.
func TestPageKeeperDropsALateRecord(t *testing.T) {
	k := newPageKeeper(1, false)
	if !k.admit("B", "b.csv", Fail) {
		t.Fatal("the first failing unit is not admitted")
	}
	if !k.admit("A", "a.csv", Fail) { // earlier in batch order: takes B's place
		t.Fatal("an earlier unit is not admitted")
	}
	k.store("b.csv", &metrics.Trace{})
	k.store("a.csv", &metrics.Trace{})
	got := k.traces()
	if len(got) != 1 || got["a.csv"] == nil {
		t.Fatalf("kept %v, want only a.csv", got)
	}
	if k.admit("C", "c.csv", Fail) || k.admit("0", "0.csv", Pass) {
		t.Fatal("a later unit, or a passing one, was admitted")
	}
	var none *pageKeeper
	if none.admit("A", "a.csv", Fail) || none.traces() != nil {
		t.Fatal("a nil keeper keeps records")
	}
}
