// Package spec owns the acceptance specification: its types (Spec, Limit,
// the signal, log, step and metric rules), the defaults applied to keys a
// file leaves out, the accessors the later stages read (Options, Format,
// TimeScale, LimitNames, LogoPath), strict loading and validation of the
// YAML file with every problem reported at its line, column and key path
// (Load, Parse, Error), and the plain-words summary `stepgate spec check`
// prints (Explain).
//
// A spec is read in three passes: a walk over the YAML node tree that
// checks every key and type against the Go types (yamlwalk.go), a strict
// decode, and the value rules (validate.go). Problems from all three are
// collected, sorted by position and returned together as one *Error, so a
// user fixes a file in one round.
package spec
