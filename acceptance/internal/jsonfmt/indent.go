package jsonfmt

import (
	"math"
	"slices"
	"strconv"
)

// indentLines is a newline followed by enough spaces for the deepest line
// of a results.json; NL slices it.
const indentLines = "\n                                        "

// Indented appends JSON values to B laid out as json.MarshalIndent(v, "",
// "  ") lays them out: an object or array that is not empty opens on the
// current line, each member or element on a line of its own indented two
// spaces per depth, and its closing bracket on a line at the opening
// line's depth. Depth 0 is the top-level value's line.
//
// The caller writes the members in the order the document defines; keys
// are passed already quoted with their colon and space, e.g. `"unit": `.
// Strings are escaped and numbers formatted exactly as encoding/json
// writes them. A number that is not finite, which JSON cannot hold, is
// written as null and sets NonFinite, so the caller can refuse the
// document.
type Indented struct {
	B         []byte
	NonFinite bool
	keys      []string // scratch for sorting map keys
}

// Open appends the opening brace of an object and its first member's key;
// d is the depth of the members.
func (e *Indented) Open(d int, key string) {
	e.B = append(e.B, '{')
	e.NL(d)
	e.B = append(e.B, key...)
}

// Member appends the separator and key of a member after the first; d is
// the depth of the members.
func (e *Indented) Member(d int, key string) {
	e.B = append(e.B, ',')
	e.NL(d)
	e.B = append(e.B, key...)
}

// Close ends a non-empty object (c '}') or array (c ']') whose opening line
// is at depth d.
func (e *Indented) Close(d int, c byte) {
	e.NL(d)
	e.B = append(e.B, c)
}

// NL appends a newline and the indentation of depth d.
func (e *Indented) NL(d int) {
	n := 1 + 2*d
	if n <= len(indentLines) {
		e.B = append(e.B, indentLines[:n]...)
		return
	}
	e.B = append(e.B, indentLines...)
	for n -= len(indentLines); n > 0; n-- {
		e.B = append(e.B, ' ')
	}
}

// Null appends null.
func (e *Indented) Null() { e.B = append(e.B, "null"...) }

// Bool appends true or false.
func (e *Indented) Bool(v bool) { e.B = strconv.AppendBool(e.B, v) }

// Int appends a whole number.
func (e *Indented) Int(v int) { e.B = strconv.AppendInt(e.B, int64(v), 10) }

// Float appends v as encoding/json writes a float64; a number that is not
// finite is written as null and sets NonFinite.
func (e *Indented) Float(v float64) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		e.NonFinite = true
		e.Null()
		return
	}
	e.B = AppendFloat(e.B, v)
}

// FloatPtr appends *p, or null when p is nil.
func (e *Indented) FloatPtr(p *float64) {
	if p == nil {
		e.Null()
		return
	}
	e.Float(*p)
}

// Str appends s as a JSON string.
func (e *Indented) Str(s string) { e.B = AppendString(e.B, s) }

// Array appends a slice of n elements whose opening line is at depth d:
// null for a nil slice, [] for an empty one, else one element per line,
// each appended by elem(i) at depth d+1.
func (e *Indented) Array(d int, isNil bool, n int, elem func(i int)) {
	switch {
	case isNil:
		e.Null()
	case n == 0:
		e.B = append(e.B, "[]"...)
	default:
		e.B = append(e.B, '[')
		for i := 0; i < n; i++ {
			if i > 0 {
				e.B = append(e.B, ',')
			}
			e.NL(d + 1)
			elem(i)
		}
		e.Close(d, ']')
	}
}

// Strings appends s as an array of strings; null when nil.
func (e *Indented) Strings(d int, s []string) {
	e.Array(d, s == nil, len(s), func(i int) { e.Str(s[i]) })
}

// Floats appends s as an array of numbers; null when nil.
func (e *Indented) Floats(d int, s []float64) {
	e.Array(d, s == nil, len(s), func(i int) { e.Float(s[i]) })
}

// StringMap appends m as an object with its keys in sorted order, as
// encoding/json writes a map; null when nil.
func (e *Indented) StringMap(d int, m map[string]string) {
	keys := e.SortedKeys(m)
	if m == nil {
		e.Null()
		return
	}
	if len(keys) == 0 {
		e.B = append(e.B, "{}"...)
		return
	}
	e.B = append(e.B, '{')
	for i, k := range keys {
		if i > 0 {
			e.B = append(e.B, ',')
		}
		e.NL(d + 1)
		e.Str(k)
		e.B = append(e.B, ": "...)
		e.Str(m[k])
	}
	e.Close(d, '}')
	e.release(keys)
}

// SortedKeys returns the keys of m in the byte order encoding/json sorts
// them in, in a scratch slice that the next call reuses.
func (e *Indented) SortedKeys(m map[string]string) []string {
	keys := e.keys[:0]
	for k := range m {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	e.keys = keys
	return keys
}

// release clears the scratch keys, so that they do not keep the
// document's strings alive.
func (e *Indented) release(keys []string) {
	clear(keys)
	e.keys = keys[:0]
}
