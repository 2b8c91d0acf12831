// Package causes owns the indications of likely causes of a gap between a
// unit's recorded steps and the model's realised prediction of the same
// steps. Each cause rests on evidence specific to it, measured on the
// record and on the prediction the same way:
//
//   - effort saturation: a flat top in the effort record at whatever level
//     the record holds it (found from the record, not from a spec's
//     limit), longer than the flat top the prediction itself has;
//   - loop delay or sample time: the effort and the response leave their
//     initial levels later than predicted (the fitted dead time alone is no
//     evidence: friction and saturation raise it too);
//   - static friction or deadband: a residual offset beyond the
//     prediction's with a flat final value;
//   - gain or inertia spread: the unit-to-unit spread of the fitted ωn²
//     and static gain beyond the measurement noise (ωn varies as the
//     square root of the gain, so ωn² is compared).
//
// A cause is named only when its gap is beyond the noise; several are named
// together when each has its own evidence. The package never judges a
// unit: its results are indications to be checked on the machine.
package causes
