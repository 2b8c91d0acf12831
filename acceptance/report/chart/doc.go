// Package chart owns the step-response figures that the reports draw: it
// turns recorded and predicted traces into step responses normalised to
// their step, y = (response − from)/(to − from) against the time from the
// step instant, reduces each curve to a few hundred points without losing
// its peaks, chooses the time window and the settling band, and lays the
// curves out as a gonum plot.
//
// The package draws nothing itself: a report writer renders the returned
// plot on its own canvas (vector graphics in the PDF report). It never
// re-measures a metric; it only reshapes the samples that the batch kept.
package chart
