// Package jsonfmt owns JSON at the byte level for stepgate's hand-written
// encoders: numbers (AppendFloat, and Round to the significant digits
// results.json keeps), strings escaped as encoding/json escapes them
// (AppendString), and Indented, an appender that lays values out as
// json.MarshalIndent does. What a document contains is its encoder's
// business (package jsonreport); the bytes are this package's, tested
// against encoding/json, the Go standard library.
package jsonfmt
