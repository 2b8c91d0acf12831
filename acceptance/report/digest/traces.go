package digest

import (
	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/metrics"
)

// TraceStore gives a report the full record of a unit, for the drawings
// that need more than the unit's summary (the PDF's unit pages). It is an
// explicit input of the writers that draw records, beside the digest.
type TraceStore interface {
	// UnitTrace returns the record of u, a unit of the batch reported:
	// kept in memory or read again from its log. It returns nil and no
	// error when the record was not kept and cannot be read again, and an
	// error when reading it again failed.
	UnitTrace(u *acceptance.UnitResult) (*metrics.Trace, error)
}
