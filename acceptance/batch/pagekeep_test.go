package batch

import (
	"fmt"
	"maps"
	"math/rand"
	"slices"
	"sort"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/metrics"
)

type keeperUnit struct {
	id, file string
	v        acceptance.Verdict
	size     int64
}

// keeperUnits is a batch of 60 units with ids out of file order, one id in
// two files, and records of 1 to 3 bytes.
func keeperUnits() []keeperUnit {
	r := rand.New(rand.NewSource(7))
	var units []keeperUnit
	for i := 0; i < 60; i++ {
		v := []acceptance.Verdict{acceptance.Pass, acceptance.Pass, acceptance.Fail, acceptance.Invalid}[r.Intn(4)]
		id := fmt.Sprintf("SN-%03d", (i*37)%60)
		if i == 59 {
			id = units[3].id
		}
		units = append(units, keeperUnit{id: id, file: fmt.Sprintf("logs/%02d.csv", i), v: v, size: int64(1 + r.Intn(3))})
	}
	return units
}

// pageOrder returns the files of the units that get a page, in batch order:
// the first limit that did not pass (of all units with all), the batch
// sorted as Run sorts it.
func pageOrder(units []keeperUnit, limit int, all bool) []keeperUnit {
	sorted := slices.Clone(units)
	sort.SliceStable(sorted, func(i, j int) bool {
		return pageKey{sorted[i].id, sorted[i].file}.before(pageKey{sorted[j].id, sorted[j].file})
	})
	var pages []keeperUnit
	for _, u := range sorted {
		if len(pages) < limit && (all || u.v != acceptance.Pass) {
			pages = append(pages, u)
		}
	}
	return pages
}

// feed admits the units in the given order, storing a record for each
// admitted one, and checks the budget after every step.
func feed(t *testing.T, k *pageKeeper, units []keeperUnit, order []int) {
	t.Helper()
	for _, i := range order {
		u := units[i]
		if k.admit(u.id, u.file, u.v, u.size) {
			k.store(u.file, &metrics.Trace{})
		}
		if len(k.cands) > k.limit || k.used > k.budget {
			t.Fatalf("%d units and %d bytes held, limit %d units and %d bytes", len(k.cands), k.used, k.limit, k.budget)
		}
	}
}

func files(m map[string]*metrics.Trace) []string {
	var f []string
	for k := range m {
		f = append(f, k)
	}
	sort.Strings(f)
	return f
}

// With room for every record, the keeper ends with the records of exactly
// the units PageUnits will pick, whatever order the workers finish the
// files in.
func TestPageKeeperKeepsThePageUnits(t *testing.T) {
	units := keeperUnits()
	r := rand.New(rand.NewSource(1))
	for _, all := range []bool{false, true} {
		for _, limit := range []int{1, 7, 100} {
			var want []string
			for _, u := range pageOrder(units, limit, all) {
				want = append(want, u.file)
			}
			sort.Strings(want)
			for trial := 0; trial < 20; trial++ {
				k := newPageKeeper(limit, all, 1<<40)
				feed(t, k, units, r.Perm(len(units)))
				members := slices.Sorted(maps.Keys(k.members))
				if got := files(k.traces()); !slices.Equal(got, want) || !slices.Equal(members, want) {
					t.Fatalf("all %v, limit %d, trial %d: kept %v, units with a page %v, want %v", all, limit, trial, got, members, want)
				}
			}
		}
	}
}

// With a byte budget, the kept records never take more, and when every
// record has the same size they are those of the first page units that
// fit.
func TestPageKeeperBudget(t *testing.T) {
	units := keeperUnits()
	for i := range units {
		units[i].size = 10
	}
	pages := pageOrder(units, 12, false)
	var want []string
	for _, u := range pages[:4] {
		want = append(want, u.file)
	}
	sort.Strings(want)
	r := rand.New(rand.NewSource(2))
	for trial := 0; trial < 50; trial++ {
		k := newPageKeeper(12, false, 45) // room for four records
		feed(t, k, units, r.Perm(len(units)))
		if got := files(k.traces()); !slices.Equal(got, want) {
			t.Fatalf("trial %d: kept %v, want %v", trial, got, want)
		}
		if len(k.members) != 12 {
			t.Fatalf("trial %d: %d units with a page, want 12", trial, len(k.members))
		}
	}
	// Records of different sizes stay within the budget (feed checks), and
	// a record larger than the budget is never kept.
	mixed := keeperUnits()
	mixed[5].size = 1000
	for trial := 0; trial < 50; trial++ {
		k := newPageKeeper(30, true, 7)
		feed(t, k, mixed, r.Perm(len(mixed)))
		if k.traces()[mixed[5].file] != nil {
			t.Fatal("a record larger than the budget was kept")
		}
	}
}

// A record whose unit lost its place between admit and store is not kept,
// and a unit with no record to draw still takes its place.
func TestPageKeeperDropsALateRecord(t *testing.T) {
	k := newPageKeeper(2, false, 1<<20)
	if !k.admit("B", "b.csv", acceptance.Fail, 8) {
		t.Fatal("the first failing unit is not admitted")
	}
	if k.admit("A", "a.csv", acceptance.Invalid, 0) { // unreadable: nothing to copy
		t.Fatal("a unit without a record asked for a copy")
	}
	if !k.admit("0", "0.csv", acceptance.Fail, 8) { // earliest: takes B's place
		t.Fatal("an earlier unit is not admitted")
	}
	k.store("b.csv", &metrics.Trace{})
	k.store("0.csv", &metrics.Trace{})
	if got := files(k.traces()); !slices.Equal(got, []string{"0.csv"}) {
		t.Fatalf("kept %v, want only 0.csv", got)
	}
	if k.admit("C", "c.csv", acceptance.Fail, 8) || k.admit("00", "00.csv", acceptance.Pass, 8) {
		t.Fatal("a later unit, or a passing one, was admitted")
	}
	var none *pageKeeper
	if none.admit("A", "a.csv", acceptance.Fail, 8) || none.traces() != nil {
		t.Fatal("a nil keeper keeps records")
	}
}
