// Package pdfreport owns the PDF acceptance report: an A4 document for the
// QA lead who signs it, the plant manager who reads its first page, and the
// test engineer who digs into the failures.
//
// The report opens with a summary (identification, the result banner with
// counts and yield, the limits, the decision rule, the authorisation block,
// and the model's prediction beside what the batch achieved), then a chart of every recorded step normalised to its step, a table of
// every unit, a detail page for each unit that did not pass (or for every
// unit), and the safety cautions. Every page carries the report title, the
// spec id and revision, the report id and "page x of y", as ISO/IEC
// 17025:2017 §7.8.2.1 asks of a test report.
//
// Charts are drawn as vector graphics through Canvas, a gonum vg.Canvas
// backed by gofpdf. Text is set in an embedded Unicode TrueType font
// (Liberation Sans), so Greek letters, signs such as ± and µ, arrows and
// non-ASCII serials print; text read from logs passes through Clean first.
//
// Output is deterministic: the document dates are the batch's report date,
// resources are written in sorted order, and nothing reads the clock.
package pdfreport
