// Package xlsxreport owns the workbook report: a spreadsheet a test
// engineer filters and sorts to dig into a batch.
//
// The workbook has a Summary sheet (identification, counts by verdict and
// the yield), a Units sheet with one row per unit step (every metric as a
// number, an empty cell where a metric is unknown, the verdicts coloured by
// conditional formatting, the header frozen and filtered), a Limits sheet,
// and a Predictions sheet when the batch has a model. The Units sheet is
// streamed, so a batch of 100,000 steps does not sit in memory as cells.
//
// Every text read from a log (serials, file names, metadata, reasons) is
// stored as a string cell: a serial such as "=1+1" stays the text "=1+1" and
// is never evaluated as a formula. Characters a workbook cannot hold
// (control characters, bytes that are not UTF-8) are marked with U+FFFD.
//
// The same batch gives the same bytes: document dates are the report date,
// and the zip entries carry no clock time.
package xlsxreport
