package pdfreport

import (
	"fmt"

	"github.com/stepgate/stepgate/acceptance/report/chart"
	"github.com/stepgate/stepgate/acceptance/report/digest"
)

// Histogram grid: two columns, two rows per page.
const (
	histCols = 2
	histRows = 2
	histGap  = 6.0
	histH    = 92.0
)

// histograms draws one histogram per limited metric, four to a page.
func (r *report) histograms() error {
	st := r.d.Stats
	if len(st) == 0 {
		return nil
	}
	p := r.pdf
	w := (contentW - histGap*(histCols-1)) / histCols
	for i, s := range st {
		if i%(histCols*histRows) == 0 {
			p.AddPage()
			title := "Distribution of the limited metrics"
			if i > 0 {
				r.headingMore(title+" (continued)", histH)
			} else {
				r.heading(title, histH)
			}
			if i == 0 {
				r.para(textHistogramKey, 8.5, 4.3, grey)
				p.Ln(1)
			}
		}
		cell := i % (histCols * histRows)
		col, row := cell%histCols, cell/histCols
		if cell == 0 {
			r.histTop = p.GetY()
		}
		x := marginL + float64(col)*(w+histGap)
		y := r.histTop + float64(row)*(histH+histGap)
		if err := r.histogram(s, x, y, w); err != nil {
			return err
		}
	}
	rows := (len(st)-1)%(histCols*histRows)/histCols + 1
	p.SetXY(marginL, r.histTop+float64(rows)*(histH+histGap))
	r.para(digest.Phrase("capability"), 8, 4.2, grey)
	return nil
}

// histogram draws one metric's histogram with its numbers under it.
func (r *report) histogram(s digest.MetricStats, x, y, w float64) error {
	p := r.pdf
	plotH := histH - 10
	pl, err := chart.Histogram(s)
	if err != nil {
		r.drawColour(ruleGrey)
		p.SetLineWidth(0.2)
		p.Rect(x, y, w, plotH, "D")
		p.SetXY(x+3, y+plotH/2-3)
		r.font("B", 9)
		p.CellFormat(w-6, 5, r.fit(s.Label, w-6), "", 2, "C", false, 0, "")
		p.SetX(x + 3)
		r.font("", 8.5)
		r.textColour(invalidText)
		p.CellFormat(w-6, 5, r.fit("not measured on any step: no histogram", w-6), "", 0, "C", false, 0, "")
		r.textColour(black)
	} else {
		r.drawPlot(pl, x, y, w, plotH)
	}
	r.font("", 7.5)
	r.textColour(grey)
	p.SetXY(x, y+plotH+1)
	line := fmt.Sprintf("n %d · mean %s · sd %s · limit %s · predicted %s", s.N, value(s.Mean), value(s.SD), orDash(s.Limit(num)), value(s.Predicted))
	p.CellFormat(w, 3.8, r.fit(line, w), "", 2, "L", false, 0, "")
	p.SetX(x)
	c := s.Capability
	cap := c.Index + " not computed: " + c.Value.Why
	if c.Value.OK {
		cap = fmt.Sprintf("%s %.2f", c.Index, c.Value.V)
		if c.Cp.OK {
			cap += fmt.Sprintf(" · Cp %.2f", c.Cp.V)
		}
		if c.Indicative {
			cap += " · indicative only, n < 30"
		}
	}
	p.CellFormat(w, 3.8, r.fit(cap, w), "", 0, "L", false, 0, "")
	r.textColour(black)
	return nil
}

func orDash(s string) string {
	if s == "" {
		return "—"
	}
	return s
}
