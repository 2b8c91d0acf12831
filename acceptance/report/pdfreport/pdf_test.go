package pdfreport

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"unicode/utf16"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/internal/pdfenc"
	"github.com/stepgate/stepgate/acceptance/report/digest"
)

// pdfString is a string as gofpdf writes it into a content stream or the
// document information with a UTF-8 font: UTF-16BE (with a byte-order mark
// for document information) and the escapes of a PDF literal string
// (ISO 32000-1:2008, §7.3.4.2 and §7.9.2.2).
func pdfString(s string, bom bool) string {
	var b []byte
	if bom {
		b = append(b, 0xFE, 0xFF)
	}
	for _, u := range utf16.Encode([]rune(s)) {
		b = append(b, byte(u>>8), byte(u))
	}
	r := strings.NewReplacer(`\`, `\\`, "(", `\(`, ")", `\)`, "\r", `\r`)
	return r.Replace(string(b))
}

// textShown decodes the strings of the text-showing operators "(…) Tj" in
// uncompressed page contents (ISO 32000-1:2008, §9.4.3; gofpdf writes
// "BT x y Td (…) Tj ET", with or without a space before Tj) from UTF-16BE.
func textShown(pdf []byte) []string {
	var out []string
	for _, m := range textOp.FindAllSubmatch(pdf, -1) {
		out = append(out, decodeUTF16BE(unescapeLiteral(string(m[1]))))
	}
	return out
}

// unescapeLiteral undoes the backslash escapes of a PDF literal string
// (§7.3.4.2) as gofpdf writes them.
func unescapeLiteral(lit string) []byte {
	var raw []byte
	for i := 0; i < len(lit); i++ {
		c := lit[i]
		if c == '\\' && i+1 < len(lit) {
			i++
			switch lit[i] {
			case 'r':
				c = '\r'
			case 'n':
				c = '\n'
			default:
				c = lit[i]
			}
		}
		raw = append(raw, c)
	}
	return raw
}

// decodeUTF16BE decodes big-endian UTF-16 bytes.
func decodeUTF16BE(raw []byte) string {
	u := make([]uint16, 0, len(raw)/2)
	for i := 0; i+1 < len(raw); i += 2 {
		u = append(u, uint16(raw[i])<<8|uint16(raw[i+1]))
	}
	return string(utf16.Decode(u))
}

var textOp = regexp.MustCompile(`(?s)BT [0-9.\-]+ [0-9.\-]+ Td \(((?:[^\\)]|\\.)*)\) ?Tj ET`)

func write(t *testing.T, b *acceptance.Batch, o Options) []byte {
	t.Helper()
	var buf bytes.Buffer
	if err := writeBatch(&buf, b, o); err != nil {
		t.Fatalf("Write: %v", err)
	}
	return buf.Bytes()
}

// pageObjects counts the page objects: "/Type /Page" not followed by "s"
// (ISO 32000-1:2008, §7.7.3.3: a page object's /Type is /Page, the page
// tree's nodes are /Pages).
var pageObject = regexp.MustCompile(`/Type /Page([^s]|$)`)
var pagesCount = regexp.MustCompile(`/Type /Pages\s*/Kids \[[^\]]*\]\s*/Count (\d+)`)

func TestWriteStructure(t *testing.T) {
	b := testBatch()
	notPassed := 0
	for _, u := range b.Units {
		if u.Verdict != acceptance.Pass {
			notPassed++
		}
	}
	tests := []struct {
		name     string
		opt      Options
		minPages int
	}{
		// summary, histograms, method, model against the line, step
		// responses, unit table, one page per unit that did not pass, cautions
		{"units that did not pass", Options{Uncompressed: true}, 6 + notPassed + 1},
		{"every unit", Options{Uncompressed: true, AllUnits: true}, 6 + len(b.Units) + 1},
	}
	pages := map[string]int{}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			out := write(t, b, tc.opt)
			if !bytes.HasPrefix(out, []byte("%PDF-1.")) {
				t.Fatalf("output starts %q, want %%PDF-1.x", out[:8])
			}
			if !bytes.HasSuffix(bytes.TrimSpace(out), []byte("%%EOF")) {
				t.Errorf("output does not end with %%%%EOF")
			}
			n := len(pageObject.FindAll(out, -1))
			if n < tc.minPages {
				t.Errorf("%d page objects, want at least %d", n, tc.minPages)
			}
			m := pagesCount.FindSubmatch(out)
			if m == nil {
				t.Fatalf("no page tree with /Count")
			}
			if c, _ := strconv.Atoi(string(m[1])); c != n {
				t.Errorf("page tree /Count %d, page objects %d", c, n)
			}
			// The footer's total comes from the page-count alias.
			if want := pdfString(" of "+strconv.Itoa(n), false); !bytes.Contains(out, []byte(want)) {
				t.Errorf("footer does not say \"of %d\"", n)
			}
			if bytes.Contains(out, []byte(pdfString("{nb}", false))) {
				t.Errorf("page-count alias left unreplaced")
			}
			pages[tc.name] = n
		})
	}
	if pages["every unit"] <= pages["units that did not pass"] {
		t.Errorf("AllUnits gave %d pages, default %d: want more", pages["every unit"], pages["units that did not pass"])
	}
}

func TestWriteText(t *testing.T) {
	b := testBatch()
	out := write(t, b, Options{Uncompressed: true})
	id := digest.ReportID(b)
	want := []string{
		// Identification, ISO/IEC 17025:2017 §7.8.2.1 (references §7).
		"report " + id,      // header: report id on every page
		"spec ACT-25 rev C", // page header
		"ACT-25, revision C",
		b.Spec.SHA256,
		"2024-05-15 to 2024-05-16", // test dates, earliest to latest
		"2024-05-17",               // date of issue
		"Example Motion Works", "1 Test Street", "Vent Systems Ltd", "Line 3 test bay",
		"stepgate 0.1.0",
		"Prepared by", "Reviewed by", "Approved by", "A. Engineer",
		// Method: definitions with references, and the decision rule.
		"ANSI/ISA-51.1-1979 (R1993)", "IEEE Std 181-2011 (state levels)",
		"Simple acceptance (ISO 14253-1:2017; ILAC-G8:09/2019)",
		// The one-minute summary.
		"2 of 5 units passed", "yield 40.0 %",
		"Why units did not pass (3 of 5 units)", "overshoot above its max", "log cannot be read",
		"Limited metrics over the measured steps", "Distribution of the limited metrics",
		// The model against the line.
		"Predicted against achieved", "Identified loop against the model", "Likely causes: indications, not proof",
		"Gains the model gives, for reference",
		// Units.
		"SN-1002-ζ±µ→", // failing unit, non-ASCII serial
		"SN-1004",      // invalid unit (unreadable file)
		"SN-1005",      // invalid unit, its BEL character removed
		"Units that did not pass (3)",
		"All units (5)",
		"Response, command and prediction",
		// Cautions and the end of the report.
		"Safety when testing moving machinery",
		"— " + EndMark + " " + id + " —",
	}
	for _, w := range want {
		if !bytes.Contains(out, []byte(pdfString(w, false))) {
			t.Errorf("text %q not found in the page contents", w)
		}
	}
	for _, u := range b.Units {
		if u.Verdict != acceptance.Pass && !bytes.Contains(out, []byte(pdfString(pdfenc.Clean("Unit "+u.Unit), false))) {
			t.Errorf("unit %q did not pass but has no page", u.Unit)
		}
	}
	if bytes.Contains(out, []byte(pdfString("SN-9999", false))) {
		t.Errorf("found a serial that is not in the batch: the search proves nothing")
	}
	checkShownText(t, out)
	checkHeadersAndInfo(t, out, b, id)
}

// checkShownText fails when a text shown on a page carries a control
// character, or the serial with a BEL is not shown cleaned.
func checkShownText(t *testing.T, out []byte) {
	t.Helper()
	// No text shown on a page carries a control character.
	shown := textShown(out)
	if len(shown) == 0 {
		t.Fatalf("no text-showing operators found")
	}
	cleaned := false
	for _, s := range shown {
		cleaned = cleaned || s == "SN-1005"
		for _, r := range s {
			if r < 0x20 || r == 0x7f {
				t.Errorf("text %q shows control character U+%04X", s, r)
			}
		}
	}
	if !cleaned {
		t.Errorf("serial \"SN-1005\\x07\" not shown as \"SN-1005\"")
	}
}

// checkHeadersAndInfo checks that the report id heads every page and that
// the document information holds the report's identification.
func checkHeadersAndInfo(t *testing.T, out []byte, b *acceptance.Batch, id string) {
	t.Helper()
	// Header on every page: the report id occurs once per page at least.
	pages := len(pageObject.FindAll(out, -1))
	if n := bytes.Count(out, []byte(pdfString("report "+id, false))); n < pages {
		t.Errorf("report id printed %d times on %d pages", n, pages)
	}
	// Document information (ISO 32000-1:2008, §14.3.3), UTF-16 with BOM.
	info := []string{
		"/Title (" + pdfString(ReportTitle+": "+b.Spec.Title, true) + ")",
		"/Subject (" + pdfString("spec ACT-25 rev C, report "+id, true) + ")",
		"/Producer (" + pdfString("stepgate 0.1.0", true) + ")",
		"/CreationDate (D:20240517000000)",
		"/ModDate (D:20240517000000)",
	}
	for _, w := range info {
		if !bytes.Contains(out, []byte(w)) {
			t.Errorf("document information lacks %q", w)
		}
	}
}

// TestWriteTextExtracted reads the report back with poppler's pdftotext,
// when it is installed, to check the text a reader copies out.
func TestWriteTextExtracted(t *testing.T) {
	tool, err := exec.LookPath("pdftotext")
	if err != nil {
		t.Skip("pdftotext not installed (Debian package poppler-utils)")
	}
	b := testBatch()
	dir := t.TempDir()
	path := filepath.Join(dir, "report.pdf")
	if err := os.WriteFile(path, write(t, b, Options{}), 0o644); err != nil {
		t.Fatal(err)
	}
	raw, err := exec.Command(tool, "-enc", "UTF-8", path, "-").Output()
	if err != nil {
		t.Fatalf("pdftotext: %v", err)
	}
	text := strings.Join(strings.Fields(string(raw)), " ")
	pages := strings.Count(string(raw), "\f")
	for _, w := range []string{
		"ACT-25", "SN-1002-ζ±µ→", "SN-1004", "2 of 5 units passed", "yield 40.0 %",
		"page 1 of " + strconv.Itoa(pages), "page " + strconv.Itoa(pages) + " of " + strconv.Itoa(pages), "report " + digest.ReportID(b),
		"no safety certification", "ISO 12100:2010", "OSHA 29 CFR 1910.147",
		"ζ = 0.25, ωn = 6 rad/s", // the identified loop of SN-1002
		"Test dates 2024-05-15 to 2024-05-16", "Spec SHA-256 " + b.Spec.SHA256,
		"End of report " + digest.ReportID(b), "This report has " + strconv.Itoa(pages) + " pages; this is the last.",
		// The gain caution of templates.GainCaution, which stands for the
		// closing advice after the designed gains.
		"CAUTION: a gain computed from a linear model", "try it on the machine with guards and interlocks in place",
		// Capability of the overshoot limit (max only): Cpu, flagged n < 30.
		"Cpu", "indicative only, n < 30",
	} {
		if !strings.Contains(text, w) {
			t.Errorf("extracted text lacks %q", w)
		}
	}
	// One caution box where the closing advice and the gain caution would
	// say the same thing one after the other.
	if strings.Contains(text, "Reduce it, try it on the machine with the guards") {
		t.Errorf("the closing advice is printed beside the gain caution")
	}
}

func TestWriteDeterministic(t *testing.T) {
	for _, o := range []Options{{}, {Uncompressed: true}, {AllUnits: true}} {
		a := write(t, testBatch(), o)
		b := write(t, testBatch(), o)
		if !bytes.Equal(a, b) {
			i := 0
			for i < len(a) && i < len(b) && a[i] == b[i] {
				i++
			}
			t.Errorf("options %+v: two writes differ from byte %d of %d", o, i, len(a))
		}
	}
}

func TestWriteErrors(t *testing.T) {
	tests := []struct {
		name string
		edit func(b *acceptance.Batch)
		want string
	}{
		{"no date", func(b *acceptance.Batch) { b.ReportDate = "" }, `report date "": want YYYY-MM-DD`},
		{"bad date", func(b *acceptance.Batch) { b.ReportDate = "17.05.2024" }, `report date "17.05.2024": want YYYY-MM-DD`},
		{"missing logo", func(b *acceptance.Batch) { b.SpecDoc.Report.Logo = "no-such-logo.png" }, "no-such-logo.png (report.logo in spec /specs/act-25.yaml)"},
		{"logo kind", func(b *acceptance.Batch) { b.SpecDoc.Report.Logo = "logo.gif" }, "want a .png or .jpg file"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			b := testBatch()
			tc.edit(b)
			err := writeBatch(&bytes.Buffer{}, b, Options{})
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %v, want one containing %q", err, tc.want)
			}
		})
	}
	if err := writeBatch(&bytes.Buffer{}, nil, Options{}); err == nil {
		t.Errorf("nil batch: no error")
	}
}

func TestWriteEmptyBatch(t *testing.T) {
	b := testBatch()
	b.Units = nil
	b.Summary = acceptance.Summary{}
	b.Model = nil
	out := write(t, b, Options{Uncompressed: true})
	for _, w := range []string{"No units were tested", "yield: not defined", "The batch has no units.", "Units",
		"No unit was tested.", "No step response can be drawn: no record of a step was kept for this report.",
		"The spec has no model section, so nothing was predicted",
		"not measured on any step: no histogram", // limited metrics, no step measured
	} {
		if !bytes.Contains(out, []byte(pdfString(w, false))) {
			t.Errorf("empty batch: text %q not found", w)
		}
	}
}

// TestWriteLogo embeds the spec's logo, a PNG named relative to the spec
// file, as an image XObject (ISO 32000-1:2008, §8.9.5) on every page.
func TestWriteLogo(t *testing.T) {
	dir := t.TempDir()
	img := image.NewRGBA(image.Rect(0, 0, 60, 20))
	for x := 0; x < 60; x++ {
		for y := 0; y < 20; y++ {
			img.Set(x, y, color.RGBA{R: uint8(4 * x), G: 80, B: 160, A: 255})
		}
	}
	var buf bytes.Buffer
	if err := png.Encode(&buf, img); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "logo.png"), buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	b := testBatch()
	b.SpecDoc.Source = filepath.Join(dir, "spec.yaml")
	b.SpecDoc.Report.Logo = "logo.png"
	out := write(t, b, Options{Uncompressed: true})
	if n := bytes.Count(out, []byte("/Subtype /Image")); n != 1 {
		t.Errorf("%d image objects, want the logo once", n)
	}
	pages := len(pageObject.FindAll(out, -1))
	if n := bytes.Count(out, []byte(" Do Q")); n < pages {
		t.Errorf("logo drawn %d times on %d pages", n, pages)
	}
}

// TestWriteAllPassed: a batch in which every unit passed has no failure
// reasons to chart and no unit pages.
func TestWriteAllPassed(t *testing.T) {
	b := testBatch()
	var kept []acceptance.UnitResult
	for _, u := range b.Units {
		if u.Verdict == acceptance.Pass {
			kept = append(kept, u)
		}
	}
	b.Units, b.Summary = kept, acceptance.Count(kept)
	out := write(t, b, Options{Uncompressed: true})
	for _, w := range []string{"Every unit passed: there is no failure reason to show.", "2 of 2 units passed", "yield 100.0 %"} {
		if !bytes.Contains(out, []byte(pdfString(w, false))) {
			t.Errorf("text %q not found", w)
		}
	}
	for _, w := range []string{"Units that did not pass", "Unit SN-1001"} {
		if bytes.Contains(out, []byte(pdfString(w, false))) {
			t.Errorf("a batch that passed shows %q", w)
		}
	}
}
