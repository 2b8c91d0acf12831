package digest

import (
	"fmt"
	"math"
	"strings"

	"github.com/stepgate/stepgate/metrics"
	"github.com/stepgate/stepgate/templates"
)

// Thresholds of the cause notes: stepgate's choices (common practice, no
// source). A note is an indication drawn from the evidence, never proof.
const (
	// OvershootExcessPts is how far, in percentage points, the batch's mean
	// overshoot must lie above the prediction for the loop-delay note.
	OvershootExcessPts = 1.0
	// DeadTimeExcessShare and DeadTimeExcessFloor: the batch's mean
	// identified dead time must exceed the model's by more than this share
	// of the model's, and by more than one sample period of the loop (this
	// floor, in seconds, without a loop section).
	DeadTimeExcessShare = 0.25
	DeadTimeExcessFloor = 0.001
	// OffsetBandShare: a step shows a residual offset when its
	// steady-state error exceeds the prediction by more than this share of
	// the settling band (band × |step size|).
	OffsetBandShare = 0.10
	// FlatBandShare: its final value is flat when the drift over the final
	// window is at most this share of the settling band.
	FlatBandShare = 0.05
	// SaturationPct: a step saturates when the effort sat at its limit for
	// more than this share of the rise, in %.
	SaturationPct = 20.0
	// FrequencyCV is the coefficient of variation of the identified natural
	// frequency above which the units spread; MinFitsForSpread the fewest
	// fitted units for which a spread is judged.
	FrequencyCV      = 0.05
	MinFitsForSpread = 3
	// noteExamples is how many unit ids a note names.
	noteExamples = 3
)

// Note is one indication of a likely cause.
type Note struct {
	// Rule identifies the rule: "loop delay", "friction", "saturation" or
	// "spread".
	Rule string
	// Title names the likely cause, e.g. "Loop delay or sample time".
	Title string
	// Evidence gives the numbers the note rests on.
	Evidence string
	// Meaning says, as an indication, what the evidence points at.
	Meaning string
}

// Phrase returns the report phrase filed under key in templates/wording.txt;
// it panics on a key the file lacks, which the package's tests rule out.
func Phrase(key string) string {
	p, ok := templates.Phrase(key)
	if !ok {
		panic("templates/wording.txt has no phrase [" + key + "]")
	}
	return p
}

// notes applies the rules in a fixed order.
func notes(d *Digest) []Note {
	var out []Note
	for _, rule := range []func(*Digest) (Note, bool){delayNote, frictionNote, saturationNote, spreadNote} {
		if n, ok := rule(d); ok {
			out = append(out, n)
		}
	}
	return out
}

// delayNote: overshoot above the prediction together with an identified
// dead time above the model's.
func delayNote(d *Digest) (Note, bool) {
	os, ok := d.all[metrics.Overshoot]
	if !ok || !os.Gap.OK || os.Gap.V <= OvershootExcessPts || d.Loop == nil {
		return Note{}, false
	}
	dt := d.Loop.DeadTime
	if !dt.Mean.OK {
		return Note{}, false
	}
	ref, how := dt.ModelFit, "for the model's "+d.Loop.FitKind+" prediction fitted the same way"
	if !ref.OK {
		ref, how = dt.Model, "in the model (plant dead time and loop delay)"
	}
	if !ref.OK {
		return Note{}, false
	}
	floor := DeadTimeExcessFloor
	if l := d.Batch.Model.Config.Loop; l != nil && l.SamplePeriod > 0 {
		floor = l.SamplePeriod
	}
	excess := dt.Mean.V - ref.V
	if excess <= math.Max(DeadTimeExcessShare*ref.V, floor) {
		return Note{}, false
	}
	ev := fmt.Sprintf("Overshoot averages %s over %s against %s predicted (%s percentage points); "+
		"the identified dead time averages %s over %s against %s %s.",
		withUnit(os.Mean.V, "%"), plural(os.N, "step"), withUnit(os.Predicted.V, "%"), signed(os.Gap.V),
		withUnit(dt.Mean.V, "s"), plural(dt.N, "unit"), withUnit(ref.V, "s"), how)
	return Note{Rule: "loop delay", Title: "Loop delay or sample time", Evidence: ev, Meaning: Phrase("cause-delay")}, true
}

// frictionNote: steps whose steady-state error exceeds the prediction while
// their final value is flat.
func frictionNote(d *Digest) (Note, bool) {
	var steps, units int
	var worst, drift float64
	var names []string
	for i := range d.Batch.Units {
		u := &d.Batch.Units[i]
		hit := false
		for k := range u.Steps {
			s := &u.Steps[k]
			e := s.Metrics.Get(metrics.SteadyStateError)
			if !e.OK || s.Predicted == nil || s.Evidence == nil {
				continue
			}
			p := s.Predicted.Metrics.Get(metrics.SteadyStateError)
			fd := s.Evidence.FinalDrift
			band := d.Band * math.Abs(s.To-s.From)
			if !p.OK || !fd.OK || band == 0 {
				continue
			}
			if e.V-p.V > OffsetBandShare*band && math.Abs(fd.V) <= FlatBandShare*band {
				steps++
				hit = true
				worst = math.Max(worst, e.V-p.V)
				drift = math.Max(drift, math.Abs(fd.V))
			}
		}
		if hit {
			units++
			if len(names) < noteExamples {
				names = append(names, u.Unit)
			}
		}
	}
	if steps == 0 {
		return Note{}, false
	}
	ev := fmt.Sprintf("In %s of %s (%s) the steady-state error exceeds the prediction by more than %s\u00a0%% of the settling band, by up to %s, "+
		"while the final value drifts by at most %s over the final window.",
		plural(steps, "step"), plural(units, "unit"), examples(names, units), Num(OffsetBandShare*100),
		withUnit(worst, d.ResponseUnit), withUnit(drift, d.ResponseUnit))
	return Note{Rule: "friction", Title: "Static friction or deadband", Evidence: ev, Meaning: Phrase("cause-friction")}, true
}

// saturationNote: steps whose effort sat at its limit for much of the rise.
func saturationNote(d *Digest) (Note, bool) {
	var steps, units, judged int
	var worst float64
	limit := metrics.Unknown("")
	var names []string
	for i := range d.Batch.Units {
		u := &d.Batch.Units[i]
		hit := false
		for k := range u.Steps {
			ev := u.Steps[k].Evidence
			if ev == nil || !ev.EffortSaturatedPct.OK {
				continue
			}
			judged++
			if ev.EffortSaturatedPct.V > SaturationPct {
				steps++
				hit = true
				worst = math.Max(worst, ev.EffortSaturatedPct.V)
				if !limit.OK && ev.EffortLimit.OK {
					limit = ev.EffortLimit
				}
			}
		}
		if hit {
			units++
			if len(names) < noteExamples {
				names = append(names, u.Unit)
			}
		}
	}
	if steps == 0 {
		return Note{}, false
	}
	at := ""
	if limit.OK {
		eu := ""
		if d.Batch.SpecDoc != nil {
			eu = d.Batch.SpecDoc.EffortUnit
		}
		at = " (" + withUnit(limit.V, eu) + ")"
	}
	ev := fmt.Sprintf("In %d of the %s with an effort record (%s: %s) the drive effort sat at its limit%s for more than %s\u00a0%% of the rise, for up to %s\u00a0%% of it.",
		steps, plural(judged, "step"), plural(units, "unit"), examples(names, units), at, Num(SaturationPct), Num(worst))
	meaning := Phrase("cause-saturation")
	if m := d.Batch.Model; m != nil && m.Config.Actuator != nil && m.Config.Actuator.EffortLimit > 0 {
		meaning += fmt.Sprintf(" The realised prediction includes the spec's effort limit of %s; the ideal one does not.", Num(m.Config.Actuator.EffortLimit))
	}
	return Note{Rule: "saturation", Title: "Effort saturation", Evidence: ev, Meaning: meaning}, true
}

// spreadNote: the identified natural frequency varies from unit to unit.
func spreadNote(d *Digest) (Note, bool) {
	if d.Loop == nil {
		return Note{}, false
	}
	wn := d.Loop.NaturalFrequency
	if wn.N < MinFitsForSpread || !wn.CV.OK || wn.CV.V <= FrequencyCV {
		return Note{}, false
	}
	ev := fmt.Sprintf("The identified natural frequency ranges from %s to %s over %s (mean %s, coefficient of variation %s\u00a0%%, above %s\u00a0%%).",
		Num(wn.Min.V), withUnit(wn.Max.V, "rad/s"), plural(wn.N, "unit"), withUnit(wn.Mean.V, "rad/s"), Num(100*wn.CV.V), Num(100*FrequencyCV))
	return Note{Rule: "spread", Title: "Gain or inertia spread", Evidence: ev, Meaning: Phrase("cause-spread")}, true
}

// signed writes a number with its sign, "+1.371" or "−0.2".
func signed(v float64) string {
	if v >= 0 {
		return "+" + Num(v)
	}
	return "−" + Num(-v)
}

// examples names the first units of a note: "A, B, C and 4 more".
func examples(names []string, total int) string {
	s := strings.Join(names, ", ")
	if more := total - len(names); more > 0 {
		s += fmt.Sprintf(" and %d more", more)
	}
	return s
}
