// Package metrics owns step-response measurement over a sampled trace: the
// Trace type and its validation, segmentation of a record into steps at
// command changes (FindSteps), and one pure function per metric (state
// levels, dead time, rise time, peak, overshoot, settling time, steady-state
// error), which MeasureStep and Measure combine into a StepMetrics per step.
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
// Initial and final values are state levels of a window of samples: the mean
// after rejecting samples more than three scaled MADs from the median, so
// noise, encoder quantisation and single glitches do not move them. A window
// counts as steady only when the levels of its two halves differ, and its
// robust spread is, by at most a quarter of the settling band's full width;
// otherwise the value is unknown, because a band centred on a level that is
// still moving would judge settling against the wrong place.
//
// Times are in seconds from the step instant: the first sample at which the
// command holds its new value. Sampling need not be uniform, but a step
// whose record has a gap (an interval between samples longer than ten
// median sample periods) is not measured: metrics interpolated across
// samples that were never taken are not evidence. A metric that
// cannot be measured is a Value with OK false and a reason, never a zero or a
// sentinel. Peak and overshoot are taken from the samples as recorded:
// measurement noise raises them by about the largest noise excursion near the
// peak, and a monotone response with noise shows a small overshoot.
package metrics
