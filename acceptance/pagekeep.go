package acceptance

import (
	"container/heap"
	"sync"

	"github.com/stepgate/stepgate/metrics"
)

// pageKeeper keeps, while a batch is judged, the records of the units that
// will get a detail page: the first limit units in batch order (by unit id,
// then file) that did not pass, or of every unit with all. Workers finish
// files out of order, so it holds the best candidates seen so far and lets
// a record go when a unit earlier in batch order takes its place; it never
// holds more than limit records. A unit whose verdict changes after the
// batch (a duplicate serial makes a passing unit invalid) has no kept
// record, and its page reads the log again.
type pageKeeper struct {
	mu    sync.Mutex
	limit int
	all   bool
	cands pageHeap                  // the admitted units, latest in batch order on top
	kept  map[string]*metrics.Trace // by file; nil while the worker copies it
}

func newPageKeeper(limit int, all bool) *pageKeeper {
	return &pageKeeper{limit: limit, all: all, kept: map[string]*metrics.Trace{}}
}

// admit reports whether the record of the unit judged from file should be
// kept; the caller then copies it and hands it to store.
func (k *pageKeeper) admit(unit, file string, v Verdict) bool {
	if k == nil || k.limit <= 0 || (!k.all && v == Pass) {
		return false
	}
	c := pageKey{unit: unit, file: file}
	k.mu.Lock()
	defer k.mu.Unlock()
	if _, dup := k.kept[file]; dup {
		return false // the same file named twice: one record serves both
	}
	if len(k.cands) == k.limit {
		if !c.before(k.cands[0]) {
			return false
		}
		out := heap.Pop(&k.cands).(pageKey)
		delete(k.kept, out.file)
	}
	heap.Push(&k.cands, c)
	k.kept[file] = nil
	return true
}

// store keeps tr as the record of file, unless a unit earlier in batch
// order has taken its place since admit.
func (k *pageKeeper) store(file string, tr *metrics.Trace) {
	k.mu.Lock()
	defer k.mu.Unlock()
	if _, ok := k.kept[file]; ok {
		k.kept[file] = tr
	}
}

// traces returns the kept records by file.
func (k *pageKeeper) traces() map[string]*metrics.Trace {
	if k == nil {
		return nil
	}
	k.mu.Lock()
	defer k.mu.Unlock()
	for f, tr := range k.kept {
		if tr == nil {
			delete(k.kept, f)
		}
	}
	return k.kept
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
