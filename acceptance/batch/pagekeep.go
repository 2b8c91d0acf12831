package batch

import (
	"container/heap"
	"sync"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/metrics"
)

// pageRecordBudget is the most memory the records kept for detail pages
// may take: 200 records of 6 s at 1 kHz (about 38 MB) fit; of longer logs,
// the first pages that fit keep theirs and the others read their log again.
const pageRecordBudget = 48 << 20

// pageKeeper finds, while a batch is judged, the units that will get a
// detail page: the first limit units in batch order (by unit id, then file)
// that did not pass, or of every unit with all. Workers finish files out of
// order, so it holds the best candidates seen so far, and a unit earlier in
// batch order takes the place of a later one.
//
// It keeps the records of those units too, as many as fit in its byte
// budget, earlier units first: a record is given up for an earlier unit's.
// A page unit without a kept record (one that did not fit, or a passing
// unit made invalid after the batch by a duplicate serial) has its log read
// again when its page is drawn.
type pageKeeper struct {
	mu      sync.Mutex
	limit   int
	all     bool
	budget  int64
	used    int64
	cands   pageHeap               // the units with a page so far, latest in batch order on top
	members map[string]bool        // their files
	records map[string]*pageRecord // by file: the records kept, or awaited from a worker
}

// pageRecord is a record kept for a page, or reserved for one.
type pageRecord struct {
	key  pageKey
	size int64
	tr   *metrics.Trace // nil until the worker stores its copy
}

func newPageKeeper(limit int, all bool, budget int64) *pageKeeper {
	return &pageKeeper{limit: limit, all: all, budget: budget, members: map[string]bool{}, records: map[string]*pageRecord{}}
}

// recordSize is the memory a copy of tr takes, in bytes.
func recordSize(tr *metrics.Trace) int64 {
	return 8 * int64(len(tr.Time)+len(tr.Command)+len(tr.Response)+len(tr.Effort))
}

// admit enters the unit judged from file, whose record takes size bytes (0
// when it has none to draw), and reports whether the caller should copy
// the record and hand it to store.
func (k *pageKeeper) admit(unit, file string, v acceptance.Verdict, size int64) bool {
	if k == nil || k.limit <= 0 || (!k.all && v == acceptance.Pass) {
		return false
	}
	c := pageKey{unit: unit, file: file}
	k.mu.Lock()
	defer k.mu.Unlock()
	if k.members[file] {
		return false // the same file named twice: one record serves both
	}
	if len(k.cands) == k.limit {
		if !c.before(k.cands[0]) {
			return false
		}
		out := heap.Pop(&k.cands).(pageKey)
		delete(k.members, out.file)
		k.drop(out.file)
	}
	heap.Push(&k.cands, c)
	k.members[file] = true
	if size <= 0 || size > k.budget {
		return false
	}
	// Make room by giving up the records of later units, latest first.
	for k.used+size > k.budget {
		var latest *pageRecord
		for _, r := range k.records {
			if latest == nil || latest.key.before(r.key) {
				latest = r
			}
		}
		if latest == nil || !c.before(latest.key) {
			return false
		}
		k.drop(latest.key.file)
	}
	k.records[file] = &pageRecord{key: c, size: size}
	k.used += size
	return true
}

// drop gives up the record of file, if one is kept.
func (k *pageKeeper) drop(file string) {
	if r := k.records[file]; r != nil {
		k.used -= r.size
		delete(k.records, file)
	}
}

// store keeps tr as the record of file, unless it has been given up since
// admit.
func (k *pageKeeper) store(file string, tr *metrics.Trace) {
	k.mu.Lock()
	defer k.mu.Unlock()
	if r := k.records[file]; r != nil {
		r.tr = tr
	}
}

// traces returns the kept records by file.
func (k *pageKeeper) traces() map[string]*metrics.Trace {
	if k == nil {
		return nil
	}
	k.mu.Lock()
	defer k.mu.Unlock()
	m := make(map[string]*metrics.Trace, len(k.records))
	for f, r := range k.records {
		if r.tr != nil {
			m[f] = r.tr
		}
	}
	return m
}

// pageKey places a unit in batch order.
type pageKey struct{ unit, file string }

func (a pageKey) before(b pageKey) bool {
	if a.unit != b.unit {
		return a.unit < b.unit
	}
	return a.file < b.file
}

// pageHeap is a max-heap of pageKeys in batch order.
type pageHeap []pageKey

func (h pageHeap) Len() int           { return len(h) }
func (h pageHeap) Less(i, j int) bool { return h[j].before(h[i]) }
func (h pageHeap) Swap(i, j int)      { h[i], h[j] = h[j], h[i] }
func (h *pageHeap) Push(x any)        { *h = append(*h, x.(pageKey)) }
func (h *pageHeap) Pop() any {
	old := *h
	x := old[len(old)-1]
	*h = old[:len(old)-1]
	return x
}
