package pdfreport

import (
	"strings"

	"github.com/stepgate/stepgate/templates"
)

// cautions prints the safety cautions and marks the end of the report.
func (r *report) cautions() {
	p := r.pdf
	p.AddPage()
	for _, blk := range textBlocks(templates.Cautions) {
		switch blk.Kind {
		case blockHeading:
			r.heading(blk.Lines[0], 15)
		case blockList:
			for _, item := range blk.Lines {
				r.bullet(item, 9, 4.5)
			}
			p.Ln(1.5)
		default:
			r.para(strings.Join(blk.Lines, " "), 9, 4.5, black)
			p.Ln(1.2)
		}
	}
	r.ensure(16)
	p.Ln(4)
	r.drawColour(ruleGrey)
	p.SetLineWidth(0.3)
	p.Line(marginL, p.GetY(), pageW-marginR, p.GetY())
	p.Ln(2)
	r.font("B", 10)
	r.textColour(black)
	p.CellFormat(contentW, 5.5, r.fit("— "+EndMark+" "+r.id+" —", contentW), "", 1, "C", false, 0, "")
	r.font("", 8.5)
	r.textColour(grey)
	p.CellFormat(contentW, 4.5, "This report has {nb} pages; this is the last.", "", 1, "C", false, 0, "")
	r.textColour(black)
}
