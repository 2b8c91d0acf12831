package batch

import (
	"sync"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/logs"
	"github.com/stepgate/stepgate/metrics"
)

// Records is the store of the units' full records that a run keeps for the
// reports beyond the batch's per-unit summaries: the records kept for the
// detail pages while judging (Options.Traces), and the means to read any
// other unit's log again. It is safe for concurrent use.
type Records struct {
	kept map[string]*metrics.Trace // by file
	mu   sync.Mutex                // serialises src
	src  logs.Source               // reads a log again; nil when the run kept no page records
}

// UnitTrace returns the record of u: the one kept with the unit
// (KeepAllTraces) or for its detail page, else its log read again and
// checked against the SHA-256 judged. A record read again is not kept, so
// a report that draws unit pages one after the other holds one such record
// at a time. It returns nil, and no error, when the record was not kept and
// cannot be read again: a unit without steps or digest, a log that no
// longer reads or no longer matches its digest; the unit's page then says
// that it has no record. A nil *Records has the records kept with the
// units only.
func (r *Records) UnitTrace(u *acceptance.UnitResult) (*metrics.Trace, error) {
	if u.Trace != nil {
		return u.Trace, nil
	}
	if r == nil || len(u.Axes) > 0 {
		// One axis's record cannot stand for a unit with several.
		return nil, nil
	}
	if tr := r.kept[u.File]; tr != nil {
		return tr, nil
	}
	if r.src == nil || u.SHA256 == "" || len(u.Steps) == 0 {
		return nil, nil
	}
	r.mu.Lock()
	lg, err := r.src.ReadFile(u.File)
	r.mu.Unlock()
	if err != nil || lg.SHA256 != u.SHA256 {
		return nil, nil
	}
	return &lg.Trace, nil
}
