package xlsxreport

import (
	"fmt"
	"math"

	"github.com/xuri/excelize/v2"

	"github.com/stepgate/stepgate/acceptance/report/digest"
	"github.com/stepgate/stepgate/metrics"
)

// Chart line data on the Limits sheet: columns H (line), I (x), J (y).
const (
	lineNameCol = 8
	lineXCol    = 9
	lineYCol    = 10
)

// scatter adds a native scatter chart of overshoot against settling time
// per unit step to the Summary sheet, read from the Units sheet, with the
// limits as lines drawn from points on the Limits sheet. Without a step on
// which both were measured there is nothing to plot and no chart.
func scatter(f *excelize.File, d *digest.Digest) error {
	os, ok1 := d.Metric(metrics.Overshoot)
	ts, ok2 := d.Metric(metrics.SettlingTime)
	if !ok1 || !ok2 || !os.Highest.OK || !ts.Highest.OK {
		return nil
	}
	rows := unitRows(d.Batch)
	if rows == 0 {
		return nil
	}
	xc, yc := unitsMetricCol(metrics.SettlingTime), unitsMetricCol(metrics.Overshoot)
	c := &chartData{f: f, row: 1}
	c.series = []excelize.ChartSeries{{
		Name:       c.nameRef(2),
		Categories: rangeRef(SheetUnits, xc, 2, rows+1),
		Values:     rangeRef(SheetUnits, yc, 2, rows+1),
		Marker:     excelize.ChartMarker{Symbol: "circle", Size: 5, Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"4477AA"}}},
		Line:       excelize.LineOptions{Type: excelize.LineNone},
	}}
	xTop := math.Max(ts.Highest.V, 0) * 1.1
	yTop := math.Max(os.Highest.V, 0) * 1.1
	if l := ts.Max; l != nil {
		xTop = math.Max(xTop, *l*1.1)
	}
	if l := os.Max; l != nil {
		yTop = math.Max(yTop, *l*1.1)
	}
	if err := c.limitLines(ts.Max, os.Max, xTop, yTop); err != nil {
		return err
	}
	zero := 0.0
	return f.AddChart(SheetSummary, summaryChartCell(), &excelize.Chart{
		Type:      excelize.Scatter,
		Series:    c.series,
		Dimension: excelize.ChartDimension{Width: 640, Height: 400},
		Title:     excelize.ChartTitle{Paragraph: []excelize.RichTextRun{{Text: "Overshoot against settling time, every unit step"}}},
		Legend:    excelize.ChartLegend{Position: "bottom"},
		XAxis: excelize.ChartAxis{Minimum: &zero, Maximum: &xTop, MajorGridLines: true,
			Title: excelize.ChartTitle{Paragraph: []excelize.RichTextRun{{Text: "settling time (s)"}}}},
		YAxis: excelize.ChartAxis{Minimum: &zero, Maximum: &yTop, MajorGridLines: true,
			Title: excelize.ChartTitle{Paragraph: []excelize.RichTextRun{{Text: "overshoot (%)"}}}},
		Format: excelize.GraphicOptions{AltText: "Overshoot against settling time of every unit step, with the limits"},
	})
}

// rangeRef refers to rows first to last of one column of a sheet.
func rangeRef(sheet string, col, first, last int) string {
	return fmt.Sprintf("'%s'!$%s$%d:$%s$%d", sheet, colName(col), first, colName(col), last)
}

// chartData writes the chart's series names and limit lines to the Limits
// sheet, from its first row down, and collects the series.
type chartData struct {
	f      *excelize.File
	row    int
	series []excelize.ChartSeries
}

// nameRef refers to a series name on the Limits sheet: excelize writes a
// series name as a cell reference (a c:strRef in the chart part), so every
// name is written to a cell and referred to.
func (c *chartData) nameRef(row int) string {
	return fmt.Sprintf("'%s'!$%s$%d", SheetLimits, colName(lineNameCol), row)
}

func (c *chartData) put(col int, v interface{}) error {
	if s, ok := v.(string); ok {
		return c.f.SetCellStr(SheetLimits, cellRef(col, c.row), s)
	}
	return c.f.SetCellValue(SheetLimits, cellRef(col, c.row), v)
}

// limitLines writes the header, the unit steps' series name and a line per
// limit that is set: the settling-time maximum as a vertical line, the
// overshoot maximum as a horizontal one.
func (c *chartData) limitLines(settleMax, overMax *float64, xTop, yTop float64) error {
	for i, h := range []string{"chart series", "x", "y"} {
		if err := c.put(lineNameCol+i, h); err != nil {
			return err
		}
	}
	c.row++
	if err := c.put(lineNameCol, "unit steps"); err != nil {
		return err
	}
	c.row++
	if l := settleMax; l != nil {
		if err := c.line("settling-time limit "+digest.Num(*l)+" s", *l, 0, *l, yTop, "228833"); err != nil {
			return err
		}
	}
	if l := overMax; l != nil {
		if err := c.line("overshoot limit "+digest.Num(*l)+" %", 0, *l, xTop, *l, "CC3311"); err != nil {
			return err
		}
	}
	return c.f.SetColWidth(SheetLimits, colName(lineNameCol), colName(lineNameCol), 26)
}

// line writes the two points of a limit line and adds its series.
func (c *chartData) line(name string, x0, y0, x1, y1 float64, colour string) error {
	first := c.row
	for _, p := range [][2]float64{{x0, y0}, {x1, y1}} {
		if err := c.put(lineNameCol, name); err != nil {
			return err
		}
		if err := c.put(lineXCol, p[0]); err != nil {
			return err
		}
		if err := c.put(lineYCol, p[1]); err != nil {
			return err
		}
		c.row++
	}
	c.series = append(c.series, excelize.ChartSeries{
		Name:       c.nameRef(first),
		Categories: rangeRef(SheetLimits, lineXCol, first, first+1),
		Values:     rangeRef(SheetLimits, lineYCol, first, first+1),
		Marker:     excelize.ChartMarker{Symbol: "none"},
		Line:       excelize.LineOptions{Type: excelize.LineSolid, Width: 1.5, Dash: excelize.LineDashDash},
		Fill:       excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{colour}},
	})
	return nil
}
