// Package xlsxreport owns the workbook report: a spreadsheet a test
// engineer filters and sorts to dig into a batch.
//
// The workbook has a Summary sheet (the identification printed in the PDF,
// counts by verdict and the yield, the capability table of the limited
// metrics, the failure reasons, the notes on likely causes, and a native
// scatter chart of overshoot against settling time with the limit lines),
// a Units sheet with one row per unit step (every metric as a number, an
// empty cell where a metric is unknown, units in the headers), a Checks
// sheet with one row per limit check, a Gaps sheet with measured,
// predicted and gap per step and limited metric, a Limits sheet with the
// definitions and references, and a Model sheet (parameters, nominal
// predictions ideal and realised, the identified loop against the model's,
// the designed gains). Gaps and Model are written when the batch has a
// model. Units, Checks and Gaps have a frozen, filtered header and verdicts
// coloured by conditional formatting, and are streamed, so a batch of
// 100,000 steps does not sit in memory as cells.
//
// Every text read from a log (serials, file names, metadata, reasons) is
// stored as a string cell: a serial such as "=1+1" stays the text "=1+1" and
// is never evaluated as a formula. Characters a workbook cannot hold
// (control characters, bytes that are not UTF-8) are marked with U+FFFD.
//
// The same batch gives the same bytes: document dates are the report date,
// the zip entries carry no clock time and are written in name order, and
// the content-types part is sorted.
package xlsxreport
