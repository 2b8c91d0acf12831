package templates

import (
	"os"
	"strings"
	"testing"
)

// TestReadmeCarriesCautions keeps the README's safety section identical to
// the caution text every report prints.
func TestReadmeCarriesCautions(t *testing.T) {
	readme, err := os.ReadFile("../README.md")
	if err != nil {
		t.Fatal(err)
	}
	for _, block := range strings.Split(Cautions, "\n\n") {
		block = strings.TrimSpace(block)
		if strings.HasPrefix(block, "# ") {
			block = "### " + block[2:]
		}
		if block != "" && !strings.Contains(string(readme), block) {
			t.Errorf("README lacks the caution block:\n%s", block)
		}
	}
}

// TestCautionsNameTheStandards checks that the cautions defer to the
// machinery-safety standards listed in references.md §8 and disclaim
// certification.
func TestCautionsNameTheStandards(t *testing.T) {
	for _, s := range []string{"ISO 12100", "IEC 60204-1", "ISO 13850", "ISO 14118", "ISO 14120", "ISO 13849-1", "IEC 61800-5-2", "29 CFR 1910.147", "no safety certification", "competent, licensed practice"} {
		if !strings.Contains(Cautions, s) {
			t.Errorf("cautions do not mention %q", s)
		}
	}
}
