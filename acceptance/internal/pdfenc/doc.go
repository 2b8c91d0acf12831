// Package pdfenc owns the byte level of the PDF report, below its content:
// the embedded report font and the text it can print (FontFamily,
// AddFonts, HasGlyph, Clean), a gonum vg.Canvas that draws vector graphics
// straight into a gofpdf page (Canvas), and the compression of the page
// content streams after gofpdf has written the document (Compress), byte
// for byte what gofpdf writes with compression on, at less cost.
//
// Coordinates follow ISO 32000-1:2008, §8.3.2.3 (PDF user space in points,
// y up from the bottom edge of the page); the cross-reference table is
// rewritten as §7.5.4 describes.
package pdfenc
