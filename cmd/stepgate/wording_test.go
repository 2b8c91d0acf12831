package main

import (
	"archive/zip"
	"io"
	"os/exec"
	"strings"
	"testing"
)

// testOnlyPhrases are the markers the project's test comments use for a
// value recalled without the source at hand or a rule of thumb without
// one. They belong beside tests, never in a report a customer signs: a
// rule of thumb in a report is cited or stated as the spec owner's rule.
var testOnlyPhrases = []string{"from memory", "no source", "common practice", "rule of thumb"}

// TestReportsCarryNoTestMarkers renders the demo's reports and checks that
// neither the PDF's text (pdftotext) nor any string of the workbook holds
// one of testOnlyPhrases.
func TestReportsCarryNoTestMarkers(t *testing.T) {
	pdftotext, err := exec.LookPath("pdftotext")
	if err != nil {
		t.Skip("pdftotext not installed (poppler-utils)")
	}
	t.Chdir(t.TempDir())
	if code, _, stderr := captureRun(t, "demo", "--out", "demo-report", "--report-date", "2026-12-01"); code != 0 {
		t.Fatalf("demo: exit %d; stderr: %s", code, stderr)
	}
	text, err := exec.Command(pdftotext, "demo-report/report/report.pdf", "-").Output()
	if err != nil {
		t.Fatalf("pdftotext: %v", err)
	}
	// pdftotext breaks lines; a phrase may span two.
	checkNoMarkers(t, "report.pdf", strings.Join(strings.Fields(string(text)), " "))

	zr, err := zip.OpenReader("demo-report/report/report.xlsx")
	if err != nil {
		t.Fatal(err)
	}
	defer zr.Close()
	for _, f := range zr.File {
		if !strings.HasSuffix(f.Name, ".xml") {
			continue
		}
		rc, err := f.Open()
		if err != nil {
			t.Fatal(err)
		}
		b, err := io.ReadAll(rc)
		rc.Close()
		if err != nil {
			t.Fatal(err)
		}
		checkNoMarkers(t, "report.xlsx "+f.Name, string(b))
	}
}

// checkNoMarkers reports every test-only phrase found in text.
func checkNoMarkers(t *testing.T, where, text string) {
	t.Helper()
	low := strings.ToLower(text)
	for _, p := range testOnlyPhrases {
		if i := strings.Index(low, p); i >= 0 {
			t.Errorf("%s says %q: …%s…", where, p, text[max(0, i-60):min(len(text), i+len(p)+20)])
		}
	}
}
