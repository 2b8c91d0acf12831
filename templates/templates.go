// Package templates owns the embedded default texts: the commented spec
// template printed by `stepgate spec init`, the safety cautions for moving
// machinery carried by every report and the README, and report wording.
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
