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
