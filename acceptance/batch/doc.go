// Package batch owns the run of a batch: it reads every log through the
// logs package's Source, measures every step with the metrics package,
// judges it with acceptance.JudgeStep and JudgeUnit, attaches the model's
// prediction and the evidence for likely causes, and orders the units into
// one acceptance.Batch. Run spreads the logs over one worker per core;
// judging one log never stops the batch, and the result does not depend on
// the order the workers finish in.
//
// Beside the batch, Run returns Records: the store of the units' full
// records that the reports draw (the PDF's unit pages). While judging, a
// bounded keeper (pagekeep.go) holds the records of the units that will get
// a detail page, within a memory budget; any other record is read again
// from its log, checked against the SHA-256 judged. The overlay chart's
// normalised curves are sampled as the steps are judged (curve.go), and
// predictions are simulated once per step shape (predict.go).
package batch
