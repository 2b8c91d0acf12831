// Package model owns the engineering model of the position loop: plant and
// controller as transfer functions and state space, closed-loop step
// simulation (ideal continuous-linear and realised sampled-delayed-saturated),
// backing a plant out of a closed-loop reference test, proportional gain
// design for a damping or overshoot target, and identification of an
// effective second-order closed loop from a recorded step.
//
// Simulated responses are returned as metrics.Trace so that the metrics
// package measures predictions with exactly the code that measures rig logs.
//
// References: unity-feedback reduction T = C·H/(1 + C·H) and coefficient
// matching (any control text, e.g. K. Ogata, Modern Control Engineering, 5th
// ed.); zero-order-hold discretisation via the block-matrix exponential
// (G. F. Franklin, J. D. Powell, M. L. Workman, Digital Control of Dynamic
// Systems, 3rd ed.; C. F. Van Loan, IEEE Trans. Automatic Control 23(3),
// 1978).
//
// # What the two predictions include
//
// The ideal loop is continuous and linear: the controller acts on the error
// at every instant, with no sampling, no loop delay, no saturation and no
// deadband. The plant dead time belongs to the plant and is included exactly
// in both predictions, inside the loop (the plant input is the controller
// output θ earlier), so a dead time changes the loop's dynamics and
// stability, it does not merely shift the response.
//
// The realised loop is the loop as the drive runs it: the controller samples
// the error every sample_period_s, the first sample at the step instant; its
// output reaches the drive delay_s later and is held until the next one
// arrives (zero-order hold); the drive's effort is that output clamped to
// ±effort_limit; the plant moves on the effort less the deadband, a
// continuous dead zone (0 for |u| ≤ deadband, u − sign(u)·deadband above,
// the usual static-friction stand-in), and sees it plant_dead_time_s later.
// The controller's own states (integrator, derivative filter) are the
// zero-order-hold discretisation of the continuous controller, so the
// integrator accumulates e·T per sample. Without a loop section the realised
// controller is continuous and is simulated as sampled at 0.1 % of the
// fastest time constant. Without loop and actuator sections the realised
// prediction is the ideal one.
//
// A derivative gain needs a derivative filter (derivative_filter_hz > 0):
// the derivative is kd·s/(1 + s/(2π·f)); an unfiltered derivative is
// improper and Build rejects it.
//
// # Simulation
//
// Every simulation is exact at its sample instants except where noted: the
// delay-free ideal loop is one linear system stepped by its zero-order-hold
// transition (the command is held after the step); the realised plant is
// stepped exactly between events (controller samples, outputs reaching the
// plant, output instants), its input being constant in between; only the
// ideal loop with a plant dead time approximates, by a first-order hold of
// the delayed controller output on a fine grid that divides the dead time
// (error O(h²), h at most 0.1 % of the fastest time constant). A trace
// starts with 10 % of its samples (at least 10) at rest at the initial
// command, at negative times, so the step instant is t = 0; the rest state
// is that of the ideal delay-free loop, which the realised loop shares
// unless a saturation or deadband keeps it from holding that effort.
//
// # Stability
//
// The ideal loop is checked through the roots of its characteristic
// polynomial Dc·Dh + Nc·Nh (companion-matrix eigenvalues), without the plant
// dead time; the realised loop through the eigenvalues of its exact
// one-period map (sampled plant, controller and the outputs still in
// transit), without saturation and deadband, for total delays up to 150
// sample periods. Beyond what these see, for the ideal loop with a dead time
// and for nonlinear effects, a simulation stops with an error once the
// response leaves 10⁶ times the step scale. Instability is always an
// *UnstableError; invalid configuration a *FieldError naming the key.
package model
