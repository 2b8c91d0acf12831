package pdfreport

import (
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/internal/pdfenc"
)

// pdfObjects maps the object numbers of an uncompressed PDF to their bodies
// ("N 0 obj … endobj", ISO 32000-1:2008, §7.3.10).
func pdfObjects(pdf []byte) map[int]string {
	objs := map[int]string{}
	for _, m := range indirectObj.FindAllSubmatch(pdf, -1) {
		n, _ := strconv.Atoi(string(m[1]))
		objs[n] = string(m[2])
	}
	return objs
}

var (
	indirectObj = regexp.MustCompile(`(?s)(?:^|\n)(\d+) 0 obj\n(.*?)\nendobj`)
	kidsRef     = regexp.MustCompile(`(\d+) 0 R`)
	pageKids    = regexp.MustCompile(`/Type /Pages\s*/Kids \[([^\]]*)\]`)
	contentsRef = regexp.MustCompile(`/Contents (\d+) 0 R`)
	destRef     = regexp.MustCompile(`/Dest \[(\d+) 0 R /XYZ`)
	parentRef   = regexp.MustCompile(`/Parent (\d+) 0 R`)
	outlineRoot = regexp.MustCompile(`/Type /Outlines /First (\d+) 0 R`)
	titleLit    = regexp.MustCompile(`(?s)^<</Title \(((?:[^\\)]|\\.)*)\)`)
)

// literalText decodes a PDF literal string (§7.3.4.2) holding UTF-16BE
// text after a byte-order mark (§7.9.2.2), as an outline title is written.
func literalText(lit string) string {
	raw := unescapeLiteral(lit)
	if len(raw) < 2 || raw[0] != 0xFE || raw[1] != 0xFF {
		return string(raw)
	}
	return decodeUTF16BE(raw[2:])
}

// outlineItem is one entry of the document outline read back (§12.3.3).
type outlineItem struct {
	title string
	level int // 0 under the outline root, 1 under an entry
	page  int // destination page, 1-based
}

// readDoc reads back the pages (object numbers in page order), the text each
// page shows, the outline entries in order and each page's link
// destinations (pages, 1-based).
type readDoc struct {
	pageOf  map[int]int // page object number → page number
	text    [][]string  // text shown, by page (0-based)
	outline []outlineItem
	links   [][]int // link destination pages, by page (0-based)
}

func readBack(t *testing.T, pdf []byte) readDoc {
	t.Helper()
	objs := pdfObjects(pdf)
	var d readDoc
	d.pageOf = map[int]int{}
	var kids string
	for _, body := range objs {
		if m := pageKids.FindStringSubmatch(body); m != nil {
			kids = m[1]
		}
	}
	if kids == "" {
		t.Fatal("no page tree")
	}
	for k, m := range kidsRef.FindAllStringSubmatch(kids, -1) {
		n, _ := strconv.Atoi(m[1])
		d.pageOf[n] = k + 1
		body := objs[n]
		var shown []string
		if c := contentsRef.FindStringSubmatch(body); c != nil {
			cn, _ := strconv.Atoi(c[1])
			shown = textShown([]byte(objs[cn]))
		}
		d.text = append(d.text, shown)
		var dests []int
		for _, dm := range destRef.FindAllStringSubmatch(body, -1) {
			dn, _ := strconv.Atoi(dm[1])
			dests = append(dests, dn)
		}
		d.links = append(d.links, dests)
	}
	for k := range d.links {
		for j, dn := range d.links[k] {
			d.links[k][j] = d.pageOf[dn]
		}
	}
	root := 0
	for n, body := range objs {
		if outlineRoot.MatchString(body) {
			root = n
		}
	}
	if root == 0 {
		t.Fatal("no document outline")
	}
	var nums []int
	for n, body := range objs {
		if titleLit.MatchString(body) {
			nums = append(nums, n)
		}
	}
	slices.Sort(nums) // gofpdf writes the entries in outline order
	for _, n := range nums {
		body := objs[n]
		it := outlineItem{title: literalText(titleLit.FindStringSubmatch(body)[1])}
		if p := parentRef.FindStringSubmatch(body); p != nil && p[1] != strconv.Itoa(root) {
			it.level = 1
		}
		if dm := destRef.FindStringSubmatch(body); dm != nil {
			dn, _ := strconv.Atoi(dm[1])
			it.page = d.pageOf[dn]
		}
		d.outline = append(d.outline, it)
	}
	return d
}

// TestOutlineAndLinks reads the document outline and the unit table's links
// back from the PDF objects (ISO 32000-1:2008, §12.3.3 document outline,
// §12.5.6.5 link annotations with a /Dest, §12.3.2.2 explicit
// destinations): every section and every unit page has an entry pointing at
// the page that shows it, and each unit with a page is linked from the unit
// tables.
func TestOutlineAndLinks(t *testing.T) {
	b := testBatch()
	out := write(t, b, Options{Uncompressed: true})
	d := readBack(t, out)

	at := map[string]outlineItem{}
	for _, it := range d.outline {
		if it.page < 1 || it.page > len(d.text) {
			t.Errorf("outline entry %q points at page %d of %d", it.title, it.page, len(d.text))
			continue
		}
		at[it.title] = it
		if it.title == "Summary" || it.title == "Unit pages" {
			continue
		}
		// The entry's page shows its title (a heading, or the unit page's
		// name line).
		want := it.title
		if it.level == 1 {
			want = strings.SplitN(it.title, ":", 2)[0]
		}
		if !slices.Contains(d.text[it.page-1], want) {
			t.Errorf("outline entry %q: page %d does not show %q", it.title, it.page, want)
		}
	}
	for _, s := range []string{"Summary", "Identification", "Method", "Decision rule", "Limits",
		"Authorisation", "Model against the line", "Step responses", "Distribution of the limited metrics",
		"Unit pages"} {
		if _, ok := at[s]; !ok {
			t.Errorf("outline has no entry %q; it has %v", s, d.outline)
		}
	}
	if at["Summary"].page != 1 {
		t.Errorf("Summary points at page %d, want 1", at["Summary"].page)
	}

	// One level-1 entry per unit page, in batch order, under "Unit pages";
	// each linked from the unit tables.
	pages := b.PageUnits(false)
	var units []outlineItem
	for _, it := range d.outline {
		if it.level == 1 {
			units = append(units, it)
		}
	}
	if len(units) != len(pages) {
		t.Fatalf("%d unit entries in the outline, want %d", len(units), len(pages))
	}
	linked := map[int]int{}
	for _, dests := range d.links {
		for _, p := range dests {
			linked[p]++
		}
	}
	for k, i := range pages {
		u := &b.Units[i]
		want := pdfenc.Clean("Unit " + u.Unit + ": " + verdictWord(u.Verdict))
		if units[k].title != want {
			t.Errorf("unit entry %d is %q, want %q", k, units[k].title, want)
		}
		// A unit that did not pass is listed in both tables, so two links.
		if n := linked[units[k].page]; n != 2 && u.Verdict != acceptance.Pass {
			t.Errorf("unit %s: %d links to its page %d, want 2 (both unit tables)", u.Unit, n, units[k].page)
		}
	}
}
