// Package report owns putting a batch's reports on disk: results.json,
// units.jsonl, steps.csv, report.xlsx and report.pdf (Names). WriteAll
// digests the batch once (package digest) and writes the reports from that
// digest at the same time,
// the PDF's unit pages drawing the records of an explicit store
// (digest.TraceStore). Each report goes to a temporary file in the output
// directory and is renamed into place only when every report is complete,
// so a reader never sees a torn or partial report under a final name.
//
// The writers are packages of their own: jsonreport (results.json and
// units.jsonl), csvreport, xlsxreport and pdfreport hold what a report contains; the bytes they are
// encoded in are written by the packages under acceptance/internal
// (jsonfmt, xlsxenc, pdfenc).
package report
