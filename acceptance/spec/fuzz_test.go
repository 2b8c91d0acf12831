package spec_test

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
	"github.com/stepgate/stepgate/templates"
)

// FuzzParse checks the spec parser on arbitrary bytes. It never panics
// and is deterministic. A refused spec is a *Error whose every problem
// has a message and a position that exists in the file (1-based line and
// column, or 0 when not known). An accepted spec keeps every rule the
// loader promises: an identity, three distinct signal columns, a positive
// step threshold, measurement levels the metrics package accepts, a log
// format the reader accepts, limits on known metrics with min ≤ max and a
// bound each, and a model the model package builds. Its summary can be
// written, and parsing its own bytes again gives the same digest.
func FuzzParse(f *testing.F) {
	f.Add([]byte(templates.SpecTemplate))
	for _, glob := range []string{"../../testdata/specs/*.yaml", "../../testdata/e2e/*.yaml", "../../testdata/bad/specs/*.yaml"} {
		paths, _ := filepath.Glob(glob)
		for _, p := range paths {
			data, err := os.ReadFile(p)
			if err != nil {
				f.Fatal(err)
			}
			f.Add(data)
		}
	}
	f.Add([]byte(""))
	f.Add([]byte("spec_id: &a x\nrevision: *a\n<<: {limits: {}}\n"))
	f.Add([]byte("- [\n"))

	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := spec.Parse(data, "f.yaml")
		_, err2 := spec.Parse(data, "f.yaml")
		if (err == nil) != (err2 == nil) || (err != nil && err.Error() != err2.Error()) {
			t.Fatalf("two parses differ: %v / %v", err, err2)
		}
		if err != nil {
			var se *spec.Error
			if !errors.As(err, &se) {
				t.Fatalf("error %T is not a *Error: %v", err, err)
			}
			if s != nil {
				t.Fatal("spec returned with an error")
			}
			lines := yamlLines(data)
			for _, p := range se.Problems {
				if p.Msg == "" || p.Line < 0 || p.Column < 0 || p.Line > lines || (p.Line == 0 && p.Column != 0) {
					t.Fatalf("problem %+v does not point into the %d-line file", p, lines)
				}
			}
			if len(se.Problems) == 0 || !strings.HasPrefix(err.Error(), "f.yaml") {
				t.Fatalf("error without problems or file name: %q", err)
			}
			return
		}
		checkAcceptedSpec(t, s)
	})
}

// checkAcceptedSpec checks the rules an accepted spec keeps.
func checkAcceptedSpec(t *testing.T, s *spec.Spec) {
	t.Helper()
	if strings.TrimSpace(s.SpecID) == "" || strings.TrimSpace(s.Revision) == "" {
		t.Fatalf("accepted without an identity: %q %q", s.SpecID, s.Revision)
	}
	sig := s.Signals
	if sig.Time == "" || sig.Command == "" || sig.Response == "" ||
		sig.Time == sig.Command || sig.Time == sig.Response || sig.Command == sig.Response {
		t.Fatalf("accepted signals %+v", sig)
	}
	if !(s.Steps.MinChange > 0) {
		t.Fatalf("accepted min_change %v", s.Steps.MinChange)
	}
	if err := s.Options().Validate(); err != nil {
		t.Fatalf("accepted levels the metrics package refuses: %v", err)
	}
	if err := s.Format().Validate(); err != nil {
		t.Fatalf("accepted a log format the reader refuses: %v", err)
	}
	if len(s.Limits) == 0 {
		t.Fatal("accepted without limits")
	}
	for name, l := range s.Limits {
		if metrics.Index(name) < 0 || (l.Min == nil && l.Max == nil) || (l.Min != nil && l.Max != nil && *l.Min > *l.Max) {
			t.Fatalf("accepted limit %s %+v", name, l)
		}
	}
	if s.Model != nil {
		if _, err := model.Build(*s.Model); err != nil {
			t.Fatalf("accepted a model the model package refuses: %v", err)
		}
	}
	if s.Explain() == "" || len(s.SHA256) != 64 {
		t.Fatalf("no summary or digest")
	}
}

// yamlLines counts the lines of data the way a YAML parser does: CR LF, CR
// and LF each end a line (YAML 1.2 §5.4), and so do NEL, LS and PS, which
// YAML 1.1 also counts as line breaks and go.yaml.in/yaml/v3 follows.
func yamlLines(data []byte) int {
	s := string(data)
	s = strings.ReplaceAll(s, "\r\n", "\n")
	n := 1
	for _, r := range s {
		switch r {
		case '\n', '\r', '\u0085', '\u2028', '\u2029':
			n++
		}
	}
	return n
}
