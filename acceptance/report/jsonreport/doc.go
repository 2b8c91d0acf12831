// Package jsonreport owns results.json, the machine-readable record of a
// stepgate run, and is the one definition of its shape: which members,
// in which order, under which keys, with null and the reason where a value
// is unknown. Its key names are a contract for machine consumers: keys may
// be added, never renamed.
//
// The document is written from the digest (Write) by a hand-written
// encoder, unit by unit, without reflection: field order and the members
// left out when empty are written out in this package, not read from
// struct tags. The byte layout is that of encoding/json's MarshalIndent
// with two-space indentation, and its strings and numbers are escaped and
// formatted as encoding/json writes them (package jsonfmt).
package jsonreport
