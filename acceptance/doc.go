// Package acceptance owns the acceptance decision: turning measured step
// metrics into pass, fail or invalid verdicts against a spec's limits
// (JudgeStep, JudgeUnit), running a batch of logs concurrently, and the one
// report model (Batch) that every report writer is fed. The spec itself is
// loaded and validated by package acceptance/spec.
//
// Decision rule: simple acceptance (ISO 14253-1:2017, ILAC-G8:09/2019): a
// measured value is compared with its limit, no guard band. A unit passes
// only when it has at least one step and every limited metric of every step
// was measured and lies within its limits. A limited metric that could not be
// measured makes the step invalid, unless the record already proves a
// failure.
package acceptance
