package acceptance

import "github.com/stepgate/stepgate/acceptance/rigdata"

// Format returns how the spec says logs are written, for the log reader.
func (s *Spec) Format() rigdata.Format {
	f := rigdata.Format{
		Time:         s.Signals.Time,
		Command:      s.Signals.Command,
		Response:     s.Signals.Response,
		Effort:       s.Signals.Effort,
		TimeScale:    s.TimeScale(),
		DecimalComma: s.Log.DecimalComma,
	}
	switch s.Log.Delimiter {
	case "comma":
		f.Delimiter = ','
	case "semicolon":
		f.Delimiter = ';'
	case "tab":
		f.Delimiter = '\t'
	}
	return f
}
