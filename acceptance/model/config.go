package model

// Config is the model section of a spec: the plant (directly, or backed out
// of a closed-loop reference test), the controller gains under test, and how
// the loop is realised on the drive. Exactly one of ReferenceTest and Plant is
// set in a valid config.
type Config struct {
	ReferenceTest *ReferenceTest `yaml:"reference_test" json:"reference_test,omitempty"`
	Plant         *TransferFunc  `yaml:"plant" json:"plant,omitempty"`
	PlantDeadTime float64        `yaml:"plant_dead_time_s" json:"plant_dead_time_s"`
	Controller    Controller     `yaml:"controller" json:"controller"`
	Loop          *Loop          `yaml:"loop" json:"loop,omitempty"`
	Actuator      *Actuator      `yaml:"actuator" json:"actuator,omitempty"`
}

// ReferenceTest describes a second-order closed-loop step response measured
// at a known proportional gain, G·ωn²/(s² + 2ζωn s + ωn²).
type ReferenceTest struct {
	Gain             float64 `yaml:"gain" json:"gain"`                                       // proportional gain during the test
	StaticGain       float64 `yaml:"static_gain" json:"static_gain"`                         // closed-loop steady-state gain G
	Damping          float64 `yaml:"damping" json:"damping"`                                 // ζ
	NaturalFrequency float64 `yaml:"natural_frequency_rad_s" json:"natural_frequency_rad_s"` // ωn, rad/s
}

// TransferFunc is a rational transfer function in s, coefficients highest
// power first.
type TransferFunc struct {
	Numerator   []float64 `yaml:"numerator" json:"numerator"`
	Denominator []float64 `yaml:"denominator" json:"denominator"`
}

// Controller holds parallel-form PID gains: u = kp·e + ki·∫e + kd·de/dt, the
// derivative filtered by a first-order low-pass at DerivativeFilterHz. The
// filter is required when Kd > 0 (an unfiltered derivative is improper); 0
// means no derivative filter and is valid only with Kd = 0.
type Controller struct {
	Kp                 float64 `yaml:"kp" json:"kp"`
	Ki                 float64 `yaml:"ki" json:"ki"`
	Kd                 float64 `yaml:"kd" json:"kd"`
	DerivativeFilterHz float64 `yaml:"derivative_filter_hz" json:"derivative_filter_hz"`
}

// Loop describes the digital realisation: the controller samples every
// SamplePeriod and its output reaches the plant Delay later, held.
type Loop struct {
	SamplePeriod float64 `yaml:"sample_period_s" json:"sample_period_s"`
	Delay        float64 `yaml:"delay_s" json:"delay_s"`
}

// Actuator describes the drive's limits: the controller output saturates at
// ±EffortLimit (0: no limit) and |effort| below Deadband produces no motion.
type Actuator struct {
	EffortLimit float64 `yaml:"effort_limit" json:"effort_limit"`
	Deadband    float64 `yaml:"deadband" json:"deadband"`
}
