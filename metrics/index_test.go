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
