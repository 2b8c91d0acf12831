package metrics

import "strings"

// Name identifies a metric. The string is the key used in specs and reports.
type Name string

// The metrics measured on every step, in report order. Each is one row of
// the catalogue below.
const (
	StepSize            Name = "step_size"
	InitialValue        Name = "initial_value"
	FinalValue          Name = "final_value"
	DeadTime            Name = "dead_time_s"
	RiseTime            Name = "rise_time_s"
	PeakValue           Name = "peak_value"
	PeakTime            Name = "peak_time_s"
	Overshoot           Name = "overshoot_pct"
	SettlingTime        Name = "settling_time_s"
	SteadyStateError    Name = "steady_state_error"
	SteadyStateErrorPct Name = "steady_state_error_pct"
	MoveTime            Name = "move_time_s"
	SettlingAfterMove   Name = "settling_after_move_s"
	MaxFollowingError   Name = "max_following_error"
)

// UnitKind says what a metric's values are expressed in.
type UnitKind uint8

// The unit kinds.
const (
	// ResponseUnit values are levels or errors in the spec's response unit.
	ResponseUnit UnitKind = iota
	// Seconds values are times from the step instant, or durations.
	Seconds
	// Percent values are percentages of the step size or the transition.
	Percent
)

// Symbol returns the unit a value of kind k is printed with; responseUnit
// is the spec's response unit, returned for ResponseUnit (it may be "").
func (k UnitKind) Symbol(responseUnit string) string {
	switch k {
	case Seconds:
		return "s"
	case Percent:
		return "%"
	}
	return responseUnit
}

// Metric is one row of the catalogue: everything specs, checks and reports
// need to know about a metric besides the function that measures it.
type Metric struct {
	Name  Name     // key in specs, results.json and the workbook
	Label string   // readable name as reports print it, e.g. "rise time"
	Unit  UnitKind // what the values are expressed in
	// NonNegative is true for a metric that cannot be below zero by
	// definition (durations from the step instant, overshoot, the
	// steady-state error); a negative limit on it is a mistake.
	NonNegative bool
	// Method says in words how MeasureUncertainty evaluates the metric's
	// standard uncertainty, with the clause it follows.
	Method string
	// Move is true for a metric that describes a profiled move (a command
	// travelling over several samples): on an ideal step it only repeats
	// what other metrics say (a move time of 0, the settling time, an error
	// of about the step size), so reports list it for batches that have
	// moves or limit it.
	Move bool

	field func(*StepMetrics) *Value // the StepMetrics field holding it
}

// catalogue is the one table of metrics, in report order. A new metric is
// one row here, its field in StepMetrics and the function that measures it.
var catalogue = [...]Metric{
	{StepSize, "step size", ResponseUnit, false, "none: the commanded change is set, not measured (u = 0)", false, func(m *StepMetrics) *Value { return &m.StepSize }},
	{InitialValue, "initial value", ResponseUnit, false, "GUM §4.2.3: σ/√N over the pre-step window (σ from second differences), with the resolution q/√12 where the noise does not dither the encoder (GUM F.2.2.1)", false, func(m *StepMetrics) *Value { return &m.InitialValue }},
	{FinalValue, "final value", ResponseUnit, false, "GUM §4.2.3: σ/√N over the final window (σ from second differences), with the resolution q/√12 where the noise does not dither the encoder (GUM F.2.2.1)", false, func(m *StepMetrics) *Value { return &m.FinalValue }},
	{DeadTime, "dead time", Seconds, true, "GUM §5.1.2 through the crossing slope, as IEC 62754:2017 does for reference-level instants: level, sample noise and interpolation; Monte Carlo (JCGM 101:2008) where the noise spans more than a quarter of a sample's rise", false, func(m *StepMetrics) *Value { return &m.DeadTime }},
	{RiseTime, "rise time", Seconds, true, "GUM §5.1.2 through both crossing slopes, the shared state levels correlated (IEC 62754:2017); Monte Carlo (JCGM 101:2008) where the noise spans more than a quarter of a sample's rise", false, func(m *StepMetrics) *Value { return &m.RiseTime }},
	{PeakValue, "peak value", ResponseUnit, false, "Monte Carlo on the trace (JCGM 101:2008), with the sampled peak's shortfall |ÿ|Δt²/8 taken as rectangular (GUM §4.3.7)", false, func(m *StepMetrics) *Value { return &m.PeakValue }},
	{PeakTime, "peak time", Seconds, true, "Monte Carlo on the trace (JCGM 101:2008), with the sample period Δt/√12 (GUM F.2.2.1)", false, func(m *StepMetrics) *Value { return &m.PeakTime }},
	{Overshoot, "overshoot", Percent, true, "Monte Carlo on the trace and the state levels (JCGM 101:2008), with the sampled peak's shortfall (GUM §4.3.7)", false, func(m *StepMetrics) *Value { return &m.Overshoot }},
	{SettlingTime, "settling time", Seconds, true, "Monte Carlo on the trace and the band's centre (JCGM 101:2008), with the interpolation of the last exit (GUM §4.3.7)", false, func(m *StepMetrics) *Value { return &m.SettlingTime }},
	{SteadyStateError, "steady-state error", ResponseUnit, true, "GUM §5.1.2: that of the final value (the command is exact)", false, func(m *StepMetrics) *Value { return &m.SteadyStateError }},
	{SteadyStateErrorPct, "steady-state error (rel.)", Percent, true, "GUM §5.1.2: that of the final value over the step size", false, func(m *StepMetrics) *Value { return &m.SteadyStateErrorPct }},
	{MoveTime, "move time", Seconds, true, "none: the move's start and end are samples of the command, which is set, not measured (u = 0)", true, func(m *StepMetrics) *Value { return &m.MoveTime }},
	{SettlingAfterMove, "settling after move end", Seconds, true, "GUM §5.1.2: that of the settling time (the move time is exact)", true, func(m *StepMetrics) *Value { return &m.SettlingAfterMove }},
	{MaxFollowingError, "max. following error", ResponseUnit, true, "GUM §5.1.2: the amplitude uncertainty of the one sample that sets the largest error, the larger of its noise and the resolution q/√12 (GUM F.2.2.1); the command is exact", true, func(m *StepMetrics) *Value { return &m.MaxFollowingError }},
}

// NumNames is the number of metrics, len(Names).
const NumNames = len(catalogue)

// Names lists every metric in report order.
var Names = func() []Name {
	n := make([]Name, NumNames)
	for i, m := range catalogue {
		n[i] = m.Name
	}
	return n
}()

// index maps a name to its position in Names.
var index = func() map[Name]int {
	x := make(map[Name]int, NumNames)
	for i, m := range catalogue {
		x[m.Name] = i
	}
	return x
}()

// Catalogue returns the row of every metric in report order. The slice is
// a copy; changing it changes nothing.
func Catalogue() []Metric {
	c := catalogue
	return c[:]
}

// Index returns the position of n in Names, or -1 for an unknown name.
func Index(n Name) int {
	if i, ok := index[n]; ok {
		return i
	}
	return -1
}

// Lookup returns the catalogue row of n; ok is false for a name stepgate
// does not measure.
func Lookup(n Name) (m Metric, ok bool) {
	i, ok := index[n]
	if !ok {
		return Metric{}, false
	}
	return catalogue[i], true
}

// At returns the catalogue row of metric i of Names.
func At(i int) Metric { return catalogue[i] }

// Label returns the readable name of n, e.g. "rise time" for rise_time_s;
// a name stepgate does not measure is returned with its underscores as
// spaces.
func (n Name) Label() string {
	if m, ok := Lookup(n); ok {
		return m.Label
	}
	return strings.ReplaceAll(string(n), "_", " ")
}

// Unit returns the unit n's values are printed with: "s" for times, "%" for
// percentages and responseUnit for levels and errors. A name stepgate does
// not measure has no unit ("").
func (n Name) Unit(responseUnit string) string {
	if m, ok := Lookup(n); ok {
		return m.Unit.Symbol(responseUnit)
	}
	return ""
}
