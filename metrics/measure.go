package metrics

// Options set the measurement levels. Fractions, not percentages.
type Options struct {
	RiseLow       float64 // lower rise reference level, fraction of the transition (0.10)
	RiseHigh      float64 // upper rise reference level (0.90)
	Band          float64 // settling band half-width, fraction of |step size| (0.02)
	DeadTimeLevel float64 // departure level that ends the dead time, fraction of the transition (0.02)
	FinalWindow   float64 // fraction of the step's record, at its end, used for the final value (0.2)
	MinSamples    int     // fewest samples a step needs to be measured at all (10)
	// SteadyTime is how long, in seconds, the command must hold its value
	// for a move to end (FindMoves); Measure segments with it (0.05).
	SteadyTime float64
}

// DefaultOptions returns the levels stepgate uses when a spec sets none.
func DefaultOptions() Options {
	return Options{RiseLow: 0.10, RiseHigh: 0.90, Band: 0.02, DeadTimeLevel: 0.02, FinalWindow: 0.2, MinSamples: 10, SteadyTime: DefaultSteadyTime}
}

// StepMetrics holds every metric of one step, each measured or unknown with a
// reason.
type StepMetrics struct {
	Step  Step
	Start float64 // time of the step instant (the move start), seconds on the record's clock

	StepSize            Value
	InitialValue        Value
	FinalValue          Value
	DeadTime            Value
	RiseTime            Value
	PeakValue           Value
	PeakTime            Value
	Overshoot           Value
	SettlingTime        Value
	SteadyStateError    Value
	SteadyStateErrorPct Value
	MoveTime            Value // duration of the commanded move; 0 for an ideal step
	SettlingAfterMove   Value // settling time measured from the end of the commanded move
	MaxFollowingError   Value // largest |command − response| during the commanded move

	// LastOutside is the time after the step instant of the last sample
	// outside the settling band, centred on the final value or, when that is
	// unknown, on the command. It is the evidence for a settling failure when
	// the settling time itself cannot be measured (the record ends first).
	LastOutside Value
	// Duration is the time from the step instant to the step's last sample.
	Duration float64
}

// Get returns the named metric; ok is false for an unknown name.
func (m StepMetrics) Get(n Name) (v Value, ok bool) {
	i, ok := index[n]
	if !ok {
		return Value{}, false
	}
	return *catalogue[i].field(&m), true
}

// At returns metric i of Names.
func (m *StepMetrics) At(i int) Value { return *catalogue[i].field(m) }
