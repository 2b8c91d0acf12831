package pdfreport

import "github.com/stepgate/stepgate/templates"

// The PDF's fixed paragraphs, from templates/wording.txt. They are read
// when the package starts, so a phrase missing from the file fails at once.
var (
	textCausesKey     = templates.MustPhrase("pdf-causes-key")
	textStatsKey      = templates.MustPhrase("pdf-stats-key")
	textHistogramKey  = templates.MustPhrase("pdf-histogram-key")
	textNoModel       = templates.MustPhrase("pdf-no-model")
	textNoComparison  = templates.MustPhrase("pdf-no-comparison")
	textModelDeadTime = templates.MustPhrase("pdf-model-dead-time")
	textMeasuredHow   = templates.MustPhrase("pdf-measured-how")
	textNoOverlay     = templates.MustPhrase("pdf-no-overlay")
	textNoChartKept   = templates.MustPhrase("pdf-no-chart-kept")
	textNoChartUnread = templates.MustPhrase("pdf-no-chart-unread")
	textNoChartSteps  = templates.MustPhrase("pdf-no-chart-steps")
	textNoChartAxes   = templates.MustPhrase("pdf-no-chart-axes")
)
