package batch_test

import (
	"context"
	"slices"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/batch"
	"github.com/stepgate/stepgate/acceptance/demo"
	"github.com/stepgate/stepgate/acceptance/logs"
	"github.com/stepgate/stepgate/acceptance/spec"
)

// Every measured unit of a run with a model carries its indicated causes;
// in the invented demo the unit built with a sticky screw (the ninth) is
// the one named for static friction, and no unit for a loop delay or an
// effort saturation the model does not already predict.
func TestRunCauses(t *testing.T) {
	dir := t.TempDir()
	specPath, logDir, err := demo.Write(dir, demo.Options{Units: 13})
	if err != nil {
		t.Fatal(err)
	}
	sp, err := spec.Load(specPath)
	if err != nil {
		t.Fatal(err)
	}
	files, err := logs.FindLogs([]string{logDir}, nil)
	if err != nil {
		t.Fatal(err)
	}
	b, _, err := batch.Run(context.Background(), sp, files, batch.DefaultOptions())
	if err != nil {
		t.Fatal(err)
	}
	for _, u := range b.Units {
		if u.Verdict == acceptance.Invalid {
			continue
		}
		if u.Causes == nil {
			t.Errorf("%s: no causes judged", u.Unit)
		}
		friction := slices.Contains(u.Causes, "static_friction")
		if want := u.Unit == "VD25-261109"; friction != want {
			t.Errorf("%s: static friction named %v, want %v (causes %v)", u.Unit, friction, want, u.Causes)
		}
		if slices.Contains(u.Causes, "loop_delay") || slices.Contains(u.Causes, "effort_saturation") {
			t.Errorf("%s: causes %v", u.Unit, u.Causes)
		}
	}
}
