// Package chart owns the figures that the reports draw, as gonum plots:
//
//   - the overlay of recorded and predicted steps normalised to their step,
//     y = (response − from)/(to − from) against the time from the step
//     instant, with the settling band (Overlay);
//   - a unit's steps in the record's own units and clock, with the command,
//     the prediction shifted to the step instant, the settling band and the
//     instants at which the time limits end (UnitFigure);
//   - the failure-reason Pareto bars (Pareto) and the histogram of a
//     limited metric with its limits and predicted value (Histogram), from
//     package digest.
//
// The overlay's curves are reduced to a few hundred points without losing
// their peaks (Downsample); a unit figure keeps every sample of its
// windows, and Panel.Reduced thins them to what the plot's size on paper
// shows (Envelope, then only the samples a line needs to pass within
// a fraction of a millimetre of every other). A figure holds a bounded number of curves
// whatever the batch size.
// The package draws nothing itself: a report writer renders the returned
// plot on its own canvas (vector graphics in the PDF report). It never
// re-measures a metric; it only reshapes the samples that the batch kept.
package chart
