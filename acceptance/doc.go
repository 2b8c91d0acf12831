// Package acceptance owns the acceptance decision and the result model.
// JudgeStep and JudgeUnit turn measured step metrics into pass, fail or
// invalid verdicts against a spec's limits, each verdict that is not a
// pass with typed Reasons (kind, metric, step, values) whose text the
// reports print. The result model (Batch, UnitResult, StepResult, Check,
// MetricSet, GapSet) is the one input every report writer is fed; its JSON
// names are the contract of results.json.
//
// The spec is loaded and validated by acceptance/spec, the logs are read by
// acceptance/logs, and a batch is run by acceptance/batch.
//
// Decision rule: simple acceptance (ISO 14253-1:2017, ILAC-G8:09/2019): a
// measured value is compared with its limit, no guard band. A unit passes
// only when it has at least one step and every limited metric of every step
// was measured and lies within its limits. A limited metric that could not be
// measured makes the step invalid, unless the record already proves a
// failure.
package acceptance
