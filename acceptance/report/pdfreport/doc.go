// Package pdfreport owns the PDF acceptance report: an A4 document for the
// QA lead who signs it, the plant manager who reads its first page, and the
// test engineer who digs into the failures.
//
// The one-minute summary comes first: the identification that ISO/IEC
// 17025:2017 §7.8.2.1 asks of a test report (report id, dates of issue and
// of testing, specification with its SHA-256, tool, items tested,
// laboratory, site and customer), the result banner with counts and yield,
// the failure reasons as a Pareto bar chart and the limited metrics over
// the measured steps with their capability indices; then a histogram per
// limited metric with its limits and the predicted value. The method
// follows (metric definitions with their references, the limits, the
// decision rule, the statements and the authorisation block), then the
// model against the line (predicted against achieved, the identified loop
// against the model's, notes on likely causes worded as indications, the
// designed gains with their caution), the overlay of every recorded step,
// the unit table, a page per unit that did not pass (or per unit) with its
// response, command and prediction, and the safety cautions, closed by an
// end-of-report line. Every page carries the report title, the spec id and
// revision, the report id and "page x of y".
//
// What the report shows is computed once by package digest; Write takes a
// digest that the other writers share.
//
// Charts are drawn as vector graphics through pdfenc.Canvas, a gonum
// vg.Canvas backed by gofpdf; a page draws a bounded number of curves
// whatever the batch size. Text is set in the embedded Unicode TrueType
// font of package pdfenc (Liberation Sans), so Greek letters, signs such
// as ± and µ, arrows and non-ASCII serials print; text read from logs
// passes through pdfenc.Clean first. The page streams are compressed by
// pdfenc.Compress.
//
// Output is deterministic: the document dates are the batch's report date,
// resources are written in sorted order, and nothing reads the clock.
package pdfreport
