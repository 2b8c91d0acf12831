package metrics

import "testing"

// Index and NumNames must agree with Names.
func TestIndexMatchesNames(t *testing.T) {
	if len(Names) != NumNames {
		t.Fatalf("len(Names) = %d, NumNames = %d", len(Names), NumNames)
	}
	for i, n := range Names {
		if got := Index(n); got != i {
			t.Errorf("Index(%q) = %d, want %d", n, got, i)
		}
	}
	if Index("no_such_metric") != -1 {
		t.Error("an unknown name must give -1")
	}
}

// Every catalogue row reads its own StepMetrics field, and the labels and
// units are those the reports print.
func TestCatalogueRows(t *testing.T) {
	var m StepMetrics
	seen := map[*Value]Name{}
	for i, c := range Catalogue() {
		p := catalogue[i].field(&m)
		if other, dup := seen[p]; dup {
			t.Errorf("%s reads the field of %s", c.Name, other)
		}
		seen[p] = c.Name
		*p = Known(float64(i))
		if v, ok := m.Get(c.Name); !ok || v.V != float64(i) {
			t.Errorf("Get(%s) = %v, %v; want %d", c.Name, v, ok, i)
		}
		if c.Label == "" {
			t.Errorf("%s has no label", c.Name)
		}
	}
	for _, tc := range []struct {
		n           Name
		label, unit string
	}{
		{RiseTime, "rise time", "s"},
		{Overshoot, "overshoot", "%"},
		{FinalValue, "final value", "mm"},
		{SteadyStateErrorPct, "steady-state error (rel.)", "%"},
		{"no_such_metric", "no such metric", ""},
	} {
		if got := tc.n.Label(); got != tc.label {
			t.Errorf("%s.Label() = %q, want %q", tc.n, got, tc.label)
		}
		if got := tc.n.Unit("mm"); got != tc.unit {
			t.Errorf("%s.Unit(mm) = %q, want %q", tc.n, got, tc.unit)
		}
	}
}
