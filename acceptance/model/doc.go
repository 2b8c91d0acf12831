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
package model
