package pdfreport

import (
	"bytes"
	"fmt"
	"io"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/jung-kurt/gofpdf"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg/draw"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/internal/pdfenc"
	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/metrics"
	"github.com/stepgate/stepgate/templates"
)

// Options choose what the PDF report contains.
type Options struct {
	// AllUnits gives every unit a detail page. By default only the units
	// that did not pass get one; the unit table always lists every unit.
	AllUnits bool
	// Uncompressed leaves the page contents uncompressed, so that text
	// tools and tests can read them. The document is otherwise the same.
	Uncompressed bool
}

// ReportTitle is the title printed on every page.
var ReportTitle = digest.Title

// EndMark is the line that closes the last page, so that the end of the
// report is clear (ISO/IEC 17025:2017 §7.8.2.1).
var EndMark = templates.MustPhrase("end-mark")

// Write writes the PDF report of a digested batch to w. The unit pages draw
// the records traces gives; a nil store draws none. The same digest,
// records and options give the same bytes: the document dates are the
// report date and nothing depends on the clock or on map order.
func Write(w io.Writer, d *digest.Digest, traces digest.TraceStore, o Options) error {
	// gofpdf writes the pages uncompressed; pdfenc.Compress compresses
	// them as gofpdf would, at less cost.
	pdf, err := layOut(d, traces, o, false)
	if err != nil {
		return err
	}
	var doc bytes.Buffer
	if err := pdf.Output(&doc); err != nil {
		return fmt.Errorf("pdfreport: writing the report: %w", err)
	}
	if o.Uncompressed {
		_, err = w.Write(doc.Bytes())
	} else {
		err = pdfenc.Compress(w, doc.Bytes())
	}
	if err != nil {
		return fmt.Errorf("pdfreport: writing the report: %w", err)
	}
	return nil
}

// layOut lays the report out in a new document, to be written by its
// Output method; gofpdf compresses the pages when compress is set.
func layOut(d *digest.Digest, traces digest.TraceStore, o Options, compress bool) (*gofpdf.Fpdf, error) {
	if d == nil || d.Batch == nil {
		return nil, fmt.Errorf("pdfreport: no batch to report")
	}
	b := d.Batch
	pdf := gofpdf.New("P", "mm", "A4", "")
	pdf.SetCompression(compress)
	pdf.SetCatalogSort(true)
	pdf.SetCreationDate(d.Date)
	pdf.SetModificationDate(d.Date)
	// The page-count alias must be set before the fonts are added: gofpdf
	// sizes the font subsets by it.
	pdf.AliasNbPages("{nb}")
	pdfenc.AddFonts(pdf)
	if err := pdf.Error(); err != nil {
		return nil, fmt.Errorf("pdfreport: embedding the font: %w", err)
	}

	r := &report{layout: layout{pdf: pdf}, b: b, d: d, o: o, id: d.ID, unit: d.ResponseUnit}
	// The unit tables link to the unit pages, which come after them.
	pages := b.PageUnits(o.AllUnits)
	r.pageLink = make(map[int]int, len(pages))
	for _, i := range pages {
		r.pageLink[i] = pdf.AddLink()
	}
	tool := strings.TrimSpace(b.Tool.Name + " " + b.Tool.Version)
	pdf.SetProducer(pdfenc.Clean(tool), true)
	pdf.SetCreator(pdfenc.Clean(tool), true)
	pdf.SetTitle(pdfenc.Clean(ReportTitle+": "+b.Spec.Title), true)
	pdf.SetSubject(pdfenc.Clean(fmt.Sprintf("spec %s rev %s, report %s", b.Spec.SpecID, b.Spec.Revision, r.id)), true)
	pdf.SetKeywords(pdfenc.Clean(fmt.Sprintf("report %s; spec %s; revision %s; units %d; pass %d; fail %d; invalid %d",
		r.id, b.Spec.SpecID, b.Spec.Revision, b.Summary.Units, b.Summary.Pass, b.Summary.Fail, b.Summary.Invalid)), true)
	if b.SpecDoc != nil && b.SpecDoc.Report.PreparedBy.Name != "" {
		pdf.SetAuthor(pdfenc.Clean(b.SpecDoc.Report.PreparedBy.Name), true)
	}
	pdf.SetMargins(marginL, bodyTop, marginR)
	pdf.SetAutoPageBreak(true, pageH-bodyEnd)
	pdf.SetHeaderFuncMode(r.header, true)
	pdf.SetFooterFunc(r.footer)

	if err := r.logo(); err != nil {
		return nil, fmt.Errorf("pdfreport: %w", err)
	}
	// The one-minute summary first, then the method and the sign-off, then
	// the detail.
	steps := []struct {
		what string
		run  func() error
	}{
		{"summary", r.front},
		{"histograms", r.histograms},
		{"method", func() error { r.method(); return nil }},
		{"model-to-real gap", r.gapSection},
		{"step responses", r.chartPage},
		{"unit table", func() error { r.unitTable(); return nil }},
	}
	for _, s := range steps {
		if err := s.run(); err != nil {
			return nil, fmt.Errorf("pdfreport: %s: %w", s.what, err)
		}
	}
	next, stop := figures(b, traces, pages)
	defer stop()
	for _, i := range pages {
		if err := r.unitPage(i, next()); err != nil {
			return nil, fmt.Errorf("pdfreport: unit %q: %w", b.Units[i].Unit, err)
		}
	}
	r.cautions()
	if err := pdf.Error(); err != nil {
		return nil, fmt.Errorf("pdfreport: laying out the report: %w", err)
	}
	return pdf, nil
}

// report holds what every page needs.
type report struct {
	layout
	b        *acceptance.Batch
	d        *digest.Digest
	o        Options
	id       string
	unit     string // response unit
	logoName string // registered logo image, "" without one
	logoInfo *gofpdf.ImageInfoType
	histTop  float64 // top of the current histogram grid, mm
	// pageLink is the internal link to each unit page, by unit index.
	pageLink map[int]int
	// unitMarks is set once the outline has its entry for the unit pages.
	unitMarks bool
}

func (r *report) header() {
	defer r.keepFont()()
	p := r.pdf
	p.SetXY(marginL, 8)
	r.font("B", 9)
	r.textColour(black)
	left := contentW * 0.62
	right := contentW - left
	if r.logoName != "" {
		// A small logo at the right edge of the header band.
		h := 8.0
		w := h * r.logoInfo.Width() / r.logoInfo.Height()
		if w > 30 {
			w, h = 30, 30*r.logoInfo.Height()/r.logoInfo.Width()
		}
		p.ImageOptions(r.logoName, pageW-marginR-w, 8, w, h, false, gofpdf.ImageOptions{}, 0, "")
		right -= w + 2
	}
	p.CellFormat(left, 5, r.fit(ReportTitle, left), "", 0, "L", false, 0, "")
	p.CellFormat(right, 5, r.fit("spec "+r.b.Spec.SpecID+" rev "+r.b.Spec.Revision, right), "", 1, "R", false, 0, "")
	r.font("", 8)
	r.textColour(grey)
	p.SetX(marginL)
	p.CellFormat(left, 4, r.fit(r.b.Spec.Title, left), "", 0, "L", false, 0, "")
	p.CellFormat(right, 4, r.fit("report "+r.id, right), "", 1, "R", false, 0, "")
	r.drawColour(ruleGrey)
	p.SetLineWidth(0.3)
	p.Line(marginL, 18.5, pageW-marginR, 18.5)
	r.textColour(black)
}

func (r *report) footer() {
	defer r.keepFont()()
	p := r.pdf
	r.drawColour(ruleGrey)
	p.SetLineWidth(0.3)
	p.Line(marginL, 283, pageW-marginR, 283)
	p.SetXY(marginL, 284.5)
	r.font("", 8)
	r.textColour(grey)
	p.CellFormat(contentW*0.7, 4, r.fit("report "+r.id+" · issued "+r.b.ReportDate, contentW*0.7), "", 0, "L", false, 0, "")
	p.CellFormat(contentW*0.3, 4, "page "+strconv.Itoa(p.PageNo())+" of {nb}", "", 0, "R", false, 0, "")
	r.textColour(black)
}

// logo registers the spec's logo image, when it names one.
func (r *report) logo() error {
	if r.b.SpecDoc == nil || r.b.SpecDoc.Report.Logo == "" {
		return nil
	}
	path := r.b.SpecDoc.Report.Logo
	if !filepath.IsAbs(path) && r.b.SpecDoc.Source != "" {
		path = filepath.Join(filepath.Dir(r.b.SpecDoc.Source), path)
	}
	kind := strings.TrimPrefix(strings.ToLower(filepath.Ext(path)), ".")
	if kind == "jpeg" {
		kind = "jpg"
	}
	if kind != "png" && kind != "jpg" {
		return fmt.Errorf("logo %s (report.logo in spec %s): want a .png or .jpg file", path, r.b.SpecDoc.Source)
	}
	info := r.pdf.RegisterImageOptions(path, gofpdf.ImageOptions{ImageType: kind})
	if err := r.pdf.Error(); err != nil || info == nil {
		return fmt.Errorf("logo %s (report.logo in spec %s): %v", path, r.b.SpecDoc.Source, err)
	}
	r.logoName, r.logoInfo = path, info
	return nil
}

// drawPlot renders a gonum plot as vector graphics into the w × h mm
// rectangle at (x, y) and restores the document state the canvas changed.
func (r *report) drawPlot(pl *plot.Plot, x, y, w, h float64) {
	c := pdfenc.NewCanvas(r.pdf, x, y, w, h, pdfenc.FontFamily)
	pl.Draw(draw.New(c))
	r.forgetFont()
	r.pdf.SetDashPattern([]float64{}, 0)
	r.pdf.SetLineWidth(0.2)
	r.pdf.SetAlpha(1, "Normal")
	r.textColour(black)
}

// num formats a number for a table.
func num(v float64) string { return digest.Num(v) }

func bound(v *float64) string {
	if v == nil {
		return "—"
	}
	return num(*v)
}

// value prints a measured value, "—" when it is unknown.
func value(v metrics.Value) string {
	if !v.OK {
		return "—"
	}
	return num(v.V)
}
