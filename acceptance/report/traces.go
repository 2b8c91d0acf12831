package report

import (
	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/metrics"
)

// BatchTraces gives the records of the units of b as batch.Run keeps
// them: kept with the unit or for its detail page, else read again from
// the log and checked against the SHA-256 judged (Batch.UnitTrace).
func BatchTraces(b *acceptance.Batch) digest.TraceStore { return batchTraces{b} }

type batchTraces struct{ b *acceptance.Batch }

// UnitTrace returns the record of u, which must be a unit of the batch; a
// unit of another batch gets the record kept with it, if any.
func (t batchTraces) UnitTrace(u *acceptance.UnitResult) (*metrics.Trace, error) {
	for i := range t.b.Units {
		if &t.b.Units[i] == u {
			return t.b.UnitTrace(i), nil
		}
	}
	return u.Trace, nil
}
