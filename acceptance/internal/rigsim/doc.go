// Package rigsim simulates a sampled position loop on a test rig and
// produces what the rig logs: time, command, position and effort. It is
// written for stepgate's tests, independently of the prediction code in
// acceptance/model (it shares no code with it and takes nothing from it),
// so that tests can check the product against a second, separately built
// account of the same physics.
//
// The simulator owns:
//
//   - the plant: a moving mass with viscous damping driven by the effort
//     as a force (Mass), with Coulomb and static friction as a force after
//     Karnopp's velocity-band model, or any strictly proper transfer
//     function (TransferFunc); integrated by fixed-step classical
//     fourth-order Runge–Kutta with Loop.FineSteps steps per sample period
//     (no matrix-exponential discretisation, so the hold, the delay and the
//     friction act on the continuous plant as they do on a machine);
//   - the sampled loop: a parallel-form PID computed each sample period
//     from the encoder reading, a loop delay of whole and fractional sample
//     periods, a zero-order hold of the effort, and the drive's own effort
//     clamp;
//   - the encoder: Gaussian noise from a seeded math/rand/v2 source and
//     quantisation to a count;
//   - command profiles: steps, ramps, trapezoidal and jerk-limited
//     (S-curve) moves, and sequences such as moves out and back;
//   - lots of units with a seeded spread of their parameters and named
//     injected causes (loop delay, static friction, effort saturation,
//     gain spread, and pairs of them), for tests that tabulate which
//     causes a reader of the records names;
//   - writing a record as a delimited log in the layouts rigs use
//     (delimiter, decimal comma, header names, metadata lines).
//
// The tests check it against closed forms from the literature: the
// second-order step and ramp responses (K. Ogata, Modern Control
// Engineering, 5th ed., §5-3; N. S. Nise, Control Systems Engineering,
// Example 4.5), the first-order plant under a zero-order hold (G. F.
// Franklin, J. D. Powell, M. L. Workman, Digital Control of Dynamic
// Systems, 3rd ed.), the damped mass under a constant force, the stall band
// of a proportional loop with static friction, and the quantisation noise
// model (B. Widrow). The values used are listed in testdata/references.md.
package rigsim
