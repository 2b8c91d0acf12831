// Package xlsxenc owns the byte level of the workbook report: writing the
// data rows of the long sheets as SpreadsheetML straight into a deflate
// stream (RowWriter, Body), and packing the workbook excelize wrote into a
// canonical zip package with those rows spliced in (Pack): entries in name
// order, no clock time, the content-types part sorted, so the same
// workbook gives the same bytes.
//
// The cells are the ones excelize would write: numbers as numbers rounded
// to the 15 significant digits a spreadsheet keeps, text as inline strings
// escaped as ST_Xstring asks (ECMA-376 Part 1, §22.9.2.19), empty cells
// left out. The long sheets are deflated concurrently, one goroutine and
// one temporary file each, with github.com/klauspost/compress/flate at its
// fastest level.
package xlsxenc
