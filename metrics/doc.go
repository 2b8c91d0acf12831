// Package metrics owns step-response measurement over a sampled trace: the
// Trace type, segmentation of a record into steps at command changes, and one
// pure function per metric (initial and final value, dead time, rise time,
// peak, overshoot, settling time, steady-state error).
//
// The same functions measure recorded rig logs and simulated predictions, so
// a gap between the two is never an artefact of two different measuring
// codes.
//
// Definitions follow IEEE Std 181-2011 (state levels estimated from the
// waveform, reference-level instants found by linear interpolation between
// the two samples around a crossing) and ANSI/ISA-51.1-1979 (dead time, rise
// time, settling time, overshoot as a percentage of the increment). Settling
// time is measured from the step instant, as control texts do (K. Ogata,
// Modern Control Engineering, 5th ed., §5-3), not from the 50 % instant as
// IEEE Std 181-2011 does.
//
// Times are in seconds from the step instant: the first sample at which the
// command holds its new value. A metric that cannot be measured is a Value
// with OK false and a reason, never a zero or a sentinel.
package metrics
