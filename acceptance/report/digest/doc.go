// Package digest owns what the PDF and XLSX reports show about a batch
// beyond its raw records, computed once from an *acceptance.Batch: the
// report id and date, the yield, the metric labels and units, the method
// (metric definitions with their references and the decision rule), the
// predicted-versus-achieved comparison, the statistics of every limited
// metric over the measured steps with their capability indices and
// histogram bins, the failure-reason Pareto, the batch's identified
// closed loops against the model's, and the notes on likely causes.
//
// A digest is O(units) in time and memory: it passes over the units a fixed
// number of times, keeps no trace and no per-step values, and its
// histograms have a bounded number of bins. Everything is deterministic:
// units are visited in batch order and maps only in sorted key order.
//
// What cannot be computed is unknown with a reason (metrics.Value), never
// 0: a standard deviation of one step, a capability index when σ = 0, a
// predicted value the model did not give.
//
// The thresholds of the cause notes are stepgate's choices (common
// practice, no source); they are the exported constants of notes.go.
package digest
