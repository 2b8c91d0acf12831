package xlsxreport

import (
	"strings"

	"github.com/xuri/excelize/v2"

	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/templates"
)

// SheetSafety holds the safety cautions for moving machinery that every
// report carries.
const SheetSafety = "Safety"

// safety writes the caution text, one paragraph per row, headings bold.
func safety(f *excelize.File, st *styles, d *digest.Digest) error {
	const sh = SheetSafety
	if _, err := f.NewSheet(sh); err != nil {
		return err
	}
	w := &sheetWriter{f: f, sh: sh, st: st, row: 1}
	for _, block := range strings.Split(templates.Cautions, "\n\n") {
		block = strings.TrimSpace(block)
		if block == "" {
			continue
		}
		if strings.HasPrefix(block, "# ") {
			w.row++
			w.set(1, cellText(strings.TrimPrefix(block, "# ")), st.bold)
			w.row++
			continue
		}
		w.set(1, cellText(strings.Join(strings.Fields(block), " ")), st.wrap)
		w.row++
	}
	if w.err != nil {
		return w.err
	}
	return widths(f, sh, []float64{120})
}
