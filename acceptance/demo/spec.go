package demo

// Spec is the demo's acceptance spec for the VD-25 vent drive. The model's
// reference test and gain are the engineering team's; the line's delay and
// friction make the hardware fall short of the ideal prediction.
const Spec = `# VD-25 vent drive: end-of-line step test (stepgate demo, invented data)
spec_id: VD25-EOL
revision: B
title: VD-25 vent drive, end-of-line step test
signals:
  time: t
  command: target
  response: position
  effort: drive
time_unit: s
response_unit: mm
effort_unit: "%"
steps:
  min_change: 0.5
metrics:
  rise_levels_pct: [10, 90]
  settling_band_pct: 2
limits:
  overshoot_pct: {max: 10}
  rise_time_s: {max: 0.16}
  settling_time_s: {max: 0.45}
  steady_state_error: {max: 0.05}
model:
  reference_test:
    gain: 10
    static_gain: 1.0
    damping: 0.45
    natural_frequency_rad_s: 22
  plant_dead_time_s: 0
  controller: {kp: 4.5, ki: 0, kd: 0, derivative_filter_hz: 0}
  loop:
    sample_period_s: 0.001
    delay_s: 0.0025
  actuator:
    effort_limit: 100
    deadband: 0.08
report:
  company: Kestrel Flap Drives (invented demo company)
  site: Assembly line 3, end-of-line station EOL-2
  prepared_by: {name: "", role: Test engineer}
  reviewed_by: {name: "", role: Quality engineer}
  approved_by: {name: "", role: Quality manager}
`
