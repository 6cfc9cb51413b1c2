package render

import (
	"fmt"

	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"

	"ordplan/render/numfmt"
	"ordplan/runner"
)

// Points of the focus predictor in the table and in the chart.
const (
	tablePoints = 7
	chartPoints = 41
)

// writePredictions writes the predicted category probabilities of the
// chosen model over the focus predictor, as a table and a chart.
func writePredictions(d *doc, r *runner.Result, or *runner.OutcomeResult) {
	d.h(3, "Predicted probabilities")
	by := r.Plan.Report.PanelsBy
	if by == "" || or.Design == nil || or.Design.Source(by) < 0 {
		writePredictionPanel(d, r, or, nil, "")
		return
	}
	levels, _ := or.Design.Coded(or.Design.Source(by))
	d.p("One panel per level of `%s` (report.panels_by), so that the predictions can be compared across its levels, as an interaction needs.", by)
	for _, l := range levels {
		d.h(4, fmt.Sprintf("%s = %s", by, l))
		writePredictionPanel(d, r, or, map[string]string{by: l}, fmt.Sprintf("%s = %s", by, l))
	}
}

// writePredictionPanel writes the predictions with the categorical
// columns in fixed held at the given levels (label names them, or "").
func writePredictionPanel(d *doc, r *runner.Result, or *runner.OutcomeResult, fixed map[string]string, label string) {
	res := or.Chosen.Result
	pf, err := newProfile(or, focusName(r), fixed)
	if err != nil {
		d.p("Not computed: %s.", err)
		return
	}
	xs := pf.grid(tablePoints)
	pred, err := pf.predict(res, xs)
	if err != nil {
		d.p("Not computed: %s.", err)
		return
	}
	span := fmt.Sprintf("goes over %d evenly spaced values from its smallest to its largest value in the data", len(xs))
	if pf.Categorical {
		span = "goes over its levels"
	} else if pf.binary {
		span = "is 0 and 1"
	} else if len(xs) == 1 {
		span = "is at its only value in the data"
	}
	d.p("Probability of each category under the chosen model when `%s` %s, with %s. Standard errors, in brackets, are delta-method approximations from the model's covariance matrix.",
		pf.focus, span, pf.heldAt())
	head := []string{pf.focus}
	for _, l := range res.Levels {
		head = append(head, "P("+l+")")
	}
	head = append(head, "Negative?")
	var rows [][]string
	neg := 0
	for i, x := range xs {
		row := []string{pf.Label(x)}
		for j := 0; j < pred.J; j++ {
			row = append(row, fmt.Sprintf("%s (%s)", numfmt.Prob(pred.Prob[i*pred.J+j]), numfmt.Prob(pred.SE[i*pred.J+j])))
		}
		flag := "no"
		if pred.Negative[i] {
			flag = "**yes**"
			neg++
		}
		rows = append(rows, append(row, flag))
	}
	d.captioned("Predicted probabilities by "+pf.focus).table(head, rows)
	if neg == 0 {
		d.p("No predicted probability in this table is negative.")
	} else {
		d.p("**Warning:** at %d of these %d values of `%s` the model predicts a negative probability for some category (its cumulative probabilities cross there). Those rows are not valid probability distributions; read the model with care in that region.", neg, len(xs), pf.focus)
	}
	c, err := predictionChart(d, or, pf, label)
	if err != nil {
		d.p("The chart of these predictions was not drawn: %s.", err)
		return
	}
	d.charts(fmt.Sprintf("Chart in report.html: predicted probability of each category against `%s`.", pf.focus), c)
}

var predictionGrid = opts.Grid{Left: "6%", Right: "8%", Top: "70", Bottom: "70"}

// predictionChart draws the predicted probabilities against the focus
// predictor: stacked bars at 0 and 1 for a 0/1 predictor, else one line
// per category over a finer grid than the table's.
func predictionChart(d *doc, or *runner.OutcomeResult, pf *profile, label string) (*chart, error) {
	res := or.Chosen.Result
	xs := pf.grid(chartPoints)
	pred, err := pf.predict(res, xs)
	if err != nil {
		return nil, err
	}
	neg := 0
	for _, n := range pred.Negative {
		if n {
			neg++
		}
	}
	id := d.chartID()
	title := "Predicted probabilities by " + pf.focus
	sub := or.Chosen.ID + "; other predictors at their means"
	if label != "" {
		title += " (" + label + ")"
		sub = or.Chosen.ID + "; " + label + ", other predictors at their means"
	}
	caption := fmt.Sprintf("Predicted probability of each category of %s under %s as %s varies, other predictors at their means.", or.Outcome.Column, or.Chosen.ID, pf.focus)
	if label != "" {
		caption = fmt.Sprintf("Predicted probability of each category of %s under %s as %s varies, with %s, other predictors at their means.", or.Outcome.Column, or.Chosen.ID, pf.focus, label)
	}
	if neg > 0 {
		caption += fmt.Sprintf(" At %d of the %d points drawn some probability is negative.", neg, len(xs))
	}
	probs := func(j int) []float64 {
		out := make([]float64, len(xs))
		for i := range xs {
			out[i] = pred.Prob[i*pred.J+j]
		}
		return out
	}
	yAxis := opts.YAxis{Name: "probability", Type: "value"}
	if pf.binary {
		caption += " Each bar is the whole distribution at one value, split by category."
		b := charts.NewBar()
		b.SetGlobalOptions(append(baseOpts(id, title, sub, 420, predictionGrid),
			charts.WithXAxisOpts(opts.XAxis{Name: pf.focus, Type: "category"}),
			charts.WithYAxisOpts(opts.YAxis{Name: "probability", Type: "value", Max: 1}))...)
		var labels []string
		for _, x := range xs {
			labels = append(labels, pf.Label(x))
		}
		b.SetXAxis(labels)
		for j, l := range res.Levels {
			data := make([]opts.BarData, len(xs))
			for i, p := range probs(j) {
				data[i] = opts.BarData{Value: val(p)}
			}
			b.AddSeries(l, data, charts.WithBarChartOpts(opts.BarChart{Stack: "probability", BarWidth: "40%"}),
				charts.WithItemStyleOpts(opts.ItemStyle{Color: categoryColor(j, len(res.Levels))}))
		}
		return newChart(id, 420, caption, b), nil
	}
	l := charts.NewLine()
	l.SetGlobalOptions(append(baseOpts(id, title, sub, 420, predictionGrid),
		charts.WithXAxisOpts(opts.XAxis{Name: pf.focus, Type: "value", Min: val(xs[0]), Max: val(xs[len(xs)-1]),
			// The ends of the range are not round numbers: no labels there,
			// so they do not crowd the nearest round tick.
			AxisLabel: &opts.AxisLabel{ShowMinLabel: opts.Bool(false), ShowMaxLabel: opts.Bool(false)}}),
		charts.WithYAxisOpts(yAxis))...)
	for j, lv := range res.Levels {
		l.AddSeries(lv, xyData(xs, probs(j)), lineStyle(categoryColor(j, len(res.Levels)), 2, false, false)...)
	}
	return newChart(id, 420, caption, l), nil
}
