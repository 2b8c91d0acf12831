// Package templates owns the embedded default texts: the commented spec
// template printed by `stepgate spec init`, the safety cautions for moving
// machinery carried by every report and the README, report wording, and
// the JSON Schema of the tool's JSON outputs.
package templates

import _ "embed"

// SpecTemplate is the commented spec template.
//
//go:embed spec.yaml
var SpecTemplate string

// Cautions is the safety caution text for moving machinery, one paragraph per
// blank-line-separated block; a line starting with "# " is a heading.
//
//go:embed cautions.txt
var Cautions string

// GainCaution is the short caution printed with every predicted response and
// designed gain.
const GainCaution = `CAUTION: a gain computed from a linear model with an infinitely fast loop is
optimistic. A real bench often starts to overshoot at a clearly lower gain
than the calculation gives, because of friction near zero speed and delay
in the loop, which the model leaves out. Reduce
the computed gain, try it on the machine with guards and interlocks in place
and the emergency stop tested, and fine-tune from there. A gain change can
cause unexpected motion and larger overshoot.`

// Schema is the JSON Schema (draft 2020-12) of the JSON documents stepgate
// writes, printed by `stepgate schema`: its root describes results.json;
// its $defs describe a line of units.jsonl ("unit"), `run --json`
// ("run_summary"), `predict --json` ("predict") and `identify --json`
// ("identify"). Objects with fixed keys admit no other key, so a key the
// tool writes but the schema lacks fails the tests that validate every
// output against it.
//
//go:embed schema.json
var Schema []byte
