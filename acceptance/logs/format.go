package logs

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Default limits applied when a Format leaves them 0.
const (
	DefaultMaxLineBytes = 1 << 20 // 1 MiB
	DefaultMaxBytes     = 1 << 30 // 1 GiB
)

// Format says which columns to read and how numbers are written.
type Format struct {
	Time, Command, Response, Effort string // column names; Effort optional ("" = not read)

	TimeScale    float64 // multiply time by this to get seconds (1, 1e-3, 1e-6); 0 means 1
	DecimalComma bool    // numbers use ',' as the decimal mark
	Delimiter    byte    // 0 = detect from the header; else ',', ';' or '\t'
	MaxLineBytes int     // 0 = DefaultMaxLineBytes; a longer line is an error naming the line
	MaxBytes     int64   // 0 = DefaultMaxBytes; a larger file is an error

	// HeaderLine is the 1-based line of the header row when detection
	// cannot be sure; 0 finds the header as the first line that names the
	// time and command columns. Lines before it are metadata or comments.
	HeaderLine int
	// SkipRows is the number of lines right after the header that are not
	// data (a units row, a row of descriptions). A units row directly
	// under the header is recognised without it.
	SkipRows int
	// TimeUnit and ValueUnit name the units the spec declares for the time
	// column ("s", "ms", "us") and for the command and response columns
	// ("" = not declared). A unit written in the header or a units row
	// that contradicts them is an error naming both (ErrUnit): stepgate
	// never rescales on its own.
	TimeUnit, ValueUnit string
	// Scale converts the command, response and effort columns as
	// written into the spec's units: value = Factor × (±raw) + Offset
	// (see Transform). Indexed by ScaleCommand, ScaleResponse, ScaleEffort.
	Scale [3]Transform
	// Plausible turns on the checks that a judged log needs: a mean sample
	// period a step test can have for the time unit (ErrSamplePeriod) and
	// a response on the command's scale (ErrScale). A spec's Format sets it.
	Plausible bool
}

// Indexes into Format.Scale.
const (
	ScaleCommand = iota
	ScaleResponse
	ScaleEffort
)

// Transform maps a column as written to the spec's units: value =
// Factor × raw + Offset, with raw negated first when Invert is set (a
// sensor mounted the other way round). The zero Transform (Factor 0) leaves
// the column as it is.
type Transform struct {
	Factor float64 // 0 means 1
	Offset float64
	Invert bool
}

// IsIdentity reports whether t leaves values unchanged.
func (t Transform) IsIdentity() bool {
	return (t.Factor == 0 || t.Factor == 1) && t.Offset == 0 && !t.Invert
}

// apply converts the values in place.
func (t Transform) apply(v []float64) {
	if t.IsIdentity() {
		return
	}
	f := t.Factor
	if f == 0 {
		f = 1
	}
	if t.Invert {
		f = -f
	}
	for i, x := range v {
		v[i] = f*x + t.Offset
	}
}

// Validate reports whether the Format can be used: the time, command and
// response column names are set and all names distinct, the time scale is
// finite and positive (or 0), the delimiter is known and not a comma when
// numbers use decimal commas, and the limits are not negative.
func (f Format) Validate() error {
	roles := [...]struct{ key, name string }{
		{"time", f.Time}, {"command", f.Command}, {"response", f.Response}, {"effort", f.Effort},
	}
	for i, r := range roles[:3] {
		if r.name == "" {
			return fmt.Errorf("%w: the %s column name is empty", ErrFormat, roles[i].key)
		}
	}
	for i := range roles {
		for j := i + 1; j < len(roles); j++ {
			if roles[i].name != "" && roles[i].name == roles[j].name {
				return fmt.Errorf("%w: the %s and %s columns are both named %q",
					ErrFormat, roles[i].key, roles[j].key, roles[i].name)
			}
		}
	}
	if f.TimeScale < 0 || math.IsNaN(f.TimeScale) || math.IsInf(f.TimeScale, 0) {
		return fmt.Errorf("%w: time scale %v is not a positive finite number", ErrFormat, f.TimeScale)
	}
	switch f.Delimiter {
	case 0, ';', '\t':
	case ',':
		if f.DecimalComma {
			return fmt.Errorf("%w: numbers with decimal commas cannot be delimited by commas", ErrFormat)
		}
	default:
		return fmt.Errorf("%w: delimiter %q is not a comma, semicolon or tab", ErrFormat, rune(f.Delimiter))
	}
	if f.MaxLineBytes < 0 {
		return fmt.Errorf("%w: line limit %d is negative", ErrFormat, f.MaxLineBytes)
	}
	if f.MaxBytes < 0 {
		return fmt.Errorf("%w: size limit %d is negative", ErrFormat, f.MaxBytes)
	}
	if f.HeaderLine < 0 || f.SkipRows < 0 {
		return fmt.Errorf("%w: header line %d and rows skipped %d must not be negative", ErrFormat, f.HeaderLine, f.SkipRows)
	}
	for i, t := range f.Scale {
		for _, v := range []float64{t.Factor, t.Offset} {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("%w: the %s scale %v is not finite", ErrFormat, roleKeys[i+1], v)
			}
		}
	}
	return nil
}

// DelimiterByName returns the delimiter a spec names: "comma", "semicolon",
// "tab", or "auto" or "" for detection from the header (0).
func DelimiterByName(name string) (byte, error) {
	switch strings.ToLower(strings.TrimSpace(name)) {
	case "", "auto":
		return 0, nil
	case "comma":
		return ',', nil
	case "semicolon":
		return ';', nil
	case "tab":
		return '\t', nil
	}
	return 0, fmt.Errorf("%w: delimiter %q is not one of auto, comma, semicolon, tab", ErrFormat, name)
}

// TimeScaleFor returns the factor from a time unit to seconds: "s" (or "")
// 1, "ms" 1e-3, "us" or "µs" 1e-6.
func TimeScaleFor(unit string) (float64, error) {
	switch strings.TrimSpace(unit) {
	case "", "s":
		return 1, nil
	case "ms":
		return 1e-3, nil
	case "us", "µs":
		return 1e-6, nil
	}
	return 0, fmt.Errorf("%w: time unit %q is not one of s, ms, us", ErrFormat, unit)
}

// timeConversion splits a time scale into a power-of-ten shift applied
// exactly while parsing, or, for other scales, a multiplier.
func timeConversion(scale float64) (shift int, mul float64) {
	if scale == 0 {
		return 0, 1
	}
	for k := -12; k <= 12; k++ {
		p, _ := strconv.ParseFloat("1e"+strconv.Itoa(k), 64)
		if scale == p {
			return k, 1
		}
	}
	return 0, scale
}

// delimiterName names a delimiter for messages.
func delimiterName(d byte) string {
	switch d {
	case ',':
		return "comma"
	case ';':
		return "semicolon"
	case '\t':
		return "tab"
	}
	return strconv.QuoteRune(rune(d))
}
