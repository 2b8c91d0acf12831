package templates

import (
	"strings"
	"testing"
)

func TestParsePhrases(t *testing.T) {
	in := "# comment\n[a]\nfirst line\n  second   line\n\n# inside comment\n[b]\nonly\n[empty]\n"
	got := parsePhrases(in)
	want := map[string]string{"a": "first line second line", "b": "only", "empty": ""}
	if len(got) != len(want) {
		t.Fatalf("parsePhrases = %q, want %q", got, want)
	}
	for k, v := range want {
		if got[k] != v {
			t.Errorf("phrase %q = %q, want %q", k, got[k], v)
		}
	}
}

// TestPhrases checks that every phrase of wording.txt has text and that the
// capability phrase carries the formulas of ISO 22514-2 and the AIAG SPC
// manual (references §6) and the n < 30 flag.
func TestPhrases(t *testing.T) {
	keys := PhraseKeys()
	if len(keys) < 8 {
		t.Fatalf("wording.txt has %d phrases: %v", len(keys), keys)
	}
	for _, k := range keys {
		if p, ok := Phrase(k); !ok || strings.TrimSpace(p) == "" {
			t.Errorf("phrase %q is empty", k)
		}
	}
	capability, _ := Phrase("capability")
	for _, w := range []string{"Cp = (USL − LSL)/(6σ)", "Cpk = min(USL − μ, μ − LSL)/(3σ)", "Cpu = (USL − μ)/(3σ)",
		"Cpl = (μ − LSL)/(3σ)", "ISO 22514-2", "AIAG", "fewer than 30", "the spec owner's rule"} {
		if !strings.Contains(capability, w) {
			t.Errorf("capability phrase lacks %q", w)
		}
	}
	advice, _ := Phrase("causes-advice")
	for _, w := range []string{"Reduce", "guards", "on the machine"} {
		if !strings.Contains(advice, w) {
			t.Errorf("closing advice lacks %q", w)
		}
	}
	for key, words := range map[string][]string{
		"notice":        {"no safety certification", "machinery-safety standards", "competent, licensed practice"},
		"decision-rule": {"ISO 14253-1:2017", "ILAC-G8:09/2019", "a value on the limit passes", "no guard band"},
	} {
		for _, w := range words {
			if !strings.Contains(MustPhrase(key), w) {
				t.Errorf("phrase %q lacks %q", key, w)
			}
		}
	}
	if _, ok := Phrase("no-such-phrase"); ok {
		t.Errorf("an unknown key gave a phrase")
	}
}
