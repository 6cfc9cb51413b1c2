package render

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"

	"ordplan/internal/words"
	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/fit"
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
	if or.Imputed != nil {
		d.p("On imputed data the curves and the table below are at the pooled estimates, with delta-method errors from the total (within + between) covariance; to first order this equals pooling the predictions of each set. The predictions for new rows are pooled set by set.")
	}
	by, panels := predictionPanels(r, or)
	heldShare(d, r, or, panels[0].fixed, by)
	if by == "" {
		writePredictionPanel(d, r, or, nil, "")
		return
	}
	if _, zeroOne := or.PanelValues(by); zeroOne {
		d.p("One panel for each value of %s (report.panels_by), 0 and 1, so that the predictions can be compared between them, as an interaction needs.", mdCode(by))
	} else {
		d.p("One panel per level of %s (report.panels_by), so that the predictions can be compared across its levels, as an interaction needs.", mdCode(by))
	}
	for _, p := range panels {
		d.h(4, mdText(p.label))
		writePredictionPanel(d, r, or, p.fixed, p.label)
	}
}

// heldShare says, before the predictions, which numeric columns holding
// only 0 and 1 the predictions hold at their mean, the share of rows at
// 1: a value no single row has, so that the predictions are of no one
// who exists and, the model not being linear, not the average of the
// predictions at 0 and at 1 either. It points at report.panels_by, and
// names the columns the plan's dictionary says were assigned by chance,
// whose panels are the arms of the trial. Nothing when there is none.
func heldShare(d *doc, r *runner.Result, or *runner.OutcomeResult, fixed map[string]string, by string) {
	pf, err := newProfile(or, focusName(r), fixed)
	if err != nil {
		return
	}
	names, held := pf.HeldTwoValued()
	if len(names) == 0 {
		return
	}
	cols, it, at, zeroOne := heldColumns(or, names)
	s := fmt.Sprintf("In these predictions the %s held at %s (%s): no person (no row of the data) has such a value, so the predictions are for no one who exists, and, the model not being linear, they are not the mix of the predictions %s in those shares either.", cols, it, mdText(strings.Join(held, ", ")), at)
	if !zeroOne {
		// report.panels_by draws panels of a 0/1 column only.
		d.p("%s To compare the predictions at each value of such a column, declare it under categorical with its two values as levels, for a panel per level in report.panels_by, or code it 0 and 1.", s)
		return
	}
	var chance []string
	if r.Plan != nil {
		for _, n := range names {
			if slices.Contains(r.Plan.ByChanceColumns(), n) {
				chance = append(chance, n)
			}
		}
	}
	if len(chance) > 0 {
		var code []string
		for _, n := range chance {
			code = append(code, mdCode(n))
		}
		was := " was"
		if len(chance) > 1 {
			was = " were"
		}
		its := "its"
		if len(chance) > 1 {
			its = "their"
		}
		s += " " + words.AndList(code) + was + " assigned by chance (the dictionary's assigned_by_chance), so " + its + " values are the arms of the trial:"
		if by == "" {
			s += fmt.Sprintf(" to see the predictions in each arm, name it in report.panels_by (%s), which draws a panel at 0 and one at 1.", mdCode("panels_by: "+chance[0]))
		} else {
			s += fmt.Sprintf(" report.panels_by can name it in place of %s (%s), for a panel in each arm.", mdCode(by), mdCode("panels_by: "+chance[0]))
		}
	} else if by == "" {
		s += " To compare the predictions at 0 and at 1 of such a column, name it in report.panels_by, which draws a panel for each value."
	} else {
		s += fmt.Sprintf(" report.panels_by, %s here, can name such a column instead, for a panel at 0 and one at 1.", mdCode(by))
	}
	d.p("%s", s)
}

// predictionPanel is one panel of predictions: the value of the column
// of report.panels_by it holds (fixed), its label (street_type =
// residential, pilot = 1) and the value alone.
type predictionPanel struct {
	fixed        map[string]string
	label, level string
}

// predictionPanels gives the column of report.panels_by and a panel per
// value of it (runner.OutcomeResult.PanelValues: each level of a
// categorical column, or 0 and 1), or "" and one panel holding nothing
// when the plan asks for no panels (or names no column of the
// predictors).
func predictionPanels(r *runner.Result, or *runner.OutcomeResult) (string, []predictionPanel) {
	by := r.Plan.Report.PanelsBy
	values, _ := or.PanelValues(by)
	if values == nil {
		return "", []predictionPanel{{}}
	}
	out := make([]predictionPanel, len(values))
	for i, v := range values {
		out[i] = predictionPanel{fixed: map[string]string{by: v}, label: fmt.Sprintf("%s = %s", by, v), level: v}
	}
	return by, out
}

// writePredictionPanel writes the predictions with the categorical
// columns in fixed held at the given levels (label names them, or "").
func writePredictionPanel(d *doc, r *runner.Result, or *runner.OutcomeResult, fixed map[string]string, label string) {
	res := or.Chosen.Result
	pf, err := newProfile(or, focusName(r), fixed)
	if err != nil {
		d.p("Not computed: %s.", mdText(err.Error()))
		return
	}
	pf.axis = axisTitle(r.Plan, pf.focus)
	xs := pf.grid(tablePoints)
	pred, err := pf.predict(res, xs)
	if err != nil {
		d.p("Not computed: %s.", mdText(err.Error()))
		return
	}
	span := fmt.Sprintf("goes over %d evenly spaced values from its smallest to its largest value in the data", len(xs))
	if pf.Categorical {
		span = "goes over its levels"
	} else if pf.binary {
		span = fmt.Sprintf("is %s and %s", numfmt.Num(pf.Min), numfmt.Num(pf.Max))
	} else if len(xs) == 1 {
		span = "is at its only value in the data"
	}
	na := ""
	if res.NotEstimable != nil && slices.ContainsFunc(pred.SE, math.IsNaN) {
		na = fmt.Sprintf(" An error shown as n/a is not available: at that point the prediction depends on parameters of %s whose clustered standard errors are not estimable (see the warning under the chosen model); the probability itself stands.", or.Chosen.ID)
	}
	d.p("Probability of each category under the chosen model when %s %s, with %s. Standard errors, in brackets, are delta-method approximations from the model's covariance matrix.%s",
		mdCode(pf.focus), span, mdText(pf.heldAt()), na)
	head := []string{pf.axis} // with its unit, as the chart's axis
	for _, l := range res.Categories {
		head = append(head, "P("+l+")")
	}
	head = append(head, "Negative?")
	var rows [][]string
	neg := 0
	labels := pf.Labels(xs)
	for i := range xs {
		row := []string{labels[i]}
		for j := 0; j < pred.J; j++ {
			row = append(row, fmt.Sprintf("%s (%s)", numfmt.Prob(pred.Prob[i*pred.J+j]), numfmt.Prob(pred.SE[i*pred.J+j])))
		}
		flag := "no"
		if pred.Negative[i] {
			flag = md("**yes**")
			neg++
		}
		rows = append(rows, append(row, flag))
	}
	d.captioned("Predicted probabilities by "+mdText(pf.focus)).table(head, rows)
	if neg == 0 {
		d.p("No predicted probability in this table is negative.")
	} else {
		d.p("**Warning:** at %d of these %d values of %s the model predicts a negative probability for some category (its cumulative probabilities cross there). Those rows are not valid probability distributions; read the model with care in that region.", neg, len(xs), mdCode(pf.focus))
	}
	level, z := chosenConfidence(r, or)
	c, err := predictionChart(d, or, pf, label, level, z)
	if err != nil {
		d.p("The chart of these predictions was not drawn: %s.", mdText(err.Error()))
		return
	}
	cs := []*chart{c}
	if !pf.binary {
		if cc, err := cumulativeChart(d, or, pf, label); err == nil {
			cs = append(cs, cc)
		}
	}
	d.charts(fmt.Sprintf("Charts in report.html: predicted probability of each category against %s.", mdCode(pf.focus)), cs...)
}

// heldWords says where a panel's predictions hold, after sep: the
// panel's label (street_type = residential), then where the other
// predictors are held; "" when nothing is held.
func heldWords(pf *profile, label, sep string) string {
	var parts []string
	for _, p := range []string{label, pf.HeldShort()} {
		if p != "" {
			parts = append(parts, p)
		}
	}
	if len(parts) == 0 {
		return ""
	}
	return sep + strings.Join(parts, ", ")
}

// predictionGrid and predictionHeight are the frame of the prediction
// charts. The bottom margin holds the x axis's name and a one-row legend
// with some 16 pixels between them (at 70, as it was, 30).
var predictionGrid = opts.Grid{Left: "6%", Right: "8%", Top: "70", Bottom: "56"}

const predictionHeight = 406

// predictionChart draws the predicted probabilities against the focus
// predictor: stacked bars at 0 and 1 for a 0/1 predictor, else one line
// per category over a finer grid than the table's.
func predictionChart(d *doc, or *runner.OutcomeResult, pf *profile, label string, level, z float64) (*chart, error) {
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
	title := "Predicted probabilities by " + pf.focus
	if label != "" {
		title += " (" + label + ")"
	}
	sub := or.Chosen.ID + heldWords(pf, label, "; ")
	caption := fmt.Sprintf("Predicted probability of each category of %s under %s as %s varies%s", or.Outcome.Column, or.Chosen.ID, pf.focus, heldWords(pf, label, ", with "))
	band := pct(level) + " pointwise intervals (delta method on the log-odds scale of each probability)"
	if pf.binary {
		caption += "; each bar is the whole distribution at one value, split by category, lightest the lowest category."
	} else {
		caption += fmt.Sprintf("; shaded bands are %s, colours from light (lowest category) to dark (highest).", band)
	}
	if neg > 0 {
		caption += fmt.Sprintf(" At %d of the %d points drawn some probability is negative.", neg, len(xs))
	}
	J := len(res.Categories)
	probs := func(j int) []float64 {
		out := make([]float64, len(xs))
		for i := range xs {
			out[i] = pred.Prob[i*pred.J+j]
		}
		return out
	}
	fig := newFigure(title, pf.axis, "probability")
	fig.yMin = 0
	fr := d.frame(chartFrame{title: title, subtitle: sub, height: predictionHeight, grid: predictionGrid, legend: res.Categories})
	if pf.binary {
		b := charts.NewBar()
		b.SetGlobalOptions(append(fr.opts(),
			charts.WithXAxisOpts(opts.XAxis{Name: axisName(pf.axis), Type: "category"}),
			charts.WithYAxisOpts(opts.YAxis{Name: "probability", Type: "value", Max: 1}))...)
		labels := pf.Labels(xs)
		b.SetXAxis(labels)
		fig.xNames, fig.yMax = labels, 1
		bottom := make([]float64, len(xs))
		for j, l := range res.Categories {
			data := make([]opts.BarData, len(xs))
			top := make([]float64, len(xs))
			for i, p := range probs(j) {
				data[i] = opts.BarData{Value: val(p)}
				top[i] = bottom[i] + p
			}
			col := categoryColor(j, J)
			b.AddSeries(l, data, charts.WithBarChartOpts(opts.BarChart{Stack: "probability", BarWidth: "40%"}),
				charts.WithItemStyleOpts(opts.ItemStyle{Color: col}))
			fig.series = append(fig.series, figSeries{name: l, color: col, lo: append([]float64(nil), bottom...), hi: top, alpha: 1, bars: true, legend: true})
			bottom = top
		}
		return newChart(fr, caption, b).with(fig), nil
	}
	l := charts.NewLine()
	l.SetGlobalOptions(append(fr.opts(),
		charts.WithXAxisOpts(focusAxis(pf.axis)),
		charts.WithYAxisOpts(opts.YAxis{Name: "probability", Type: "value", Min: 0}))...)
	for j, lv := range res.Categories {
		col := categoryColor(j, J)
		p := probs(j)
		lo, width := make([]float64, len(xs)), make([]float64, len(xs))
		for i := range xs {
			l, h := fit.ProbInterval(p[i], pred.SE[i*pred.J+j], z)
			if math.IsNaN(l) { // a negative probability: no band there
				l, h = p[i], p[i]
			}
			lo[i], width[i] = l, h-l
		}
		// The band: an invisible line at the lower bound with the width
		// stacked on it and filled. All three series carry the category's
		// name, so its legend entry shows and hides line and band together.
		stack := fmt.Sprintf("band-%d", j+1)
		hidden := charts.WithLineStyleOpts(opts.LineStyle{Opacity: opts.Float(0)})
		l.AddSeries(lv, stackData(xs, lo), charts.WithLineChartOpts(opts.LineChart{Stack: stack, ShowSymbol: opts.Bool(false)}), hidden,
			charts.WithItemStyleOpts(opts.ItemStyle{Color: col}), stackEncode)
		l.AddSeries(lv, stackData(xs, width), charts.WithLineChartOpts(opts.LineChart{Stack: stack, ShowSymbol: opts.Bool(false)}), hidden,
			charts.WithAreaStyleOpts(opts.AreaStyle{Color: col, Opacity: opts.Float(0.18)}), charts.WithItemStyleOpts(opts.ItemStyle{Color: col}), stackEncode)
		l.AddSeries(lv, xyData(xs, p), lineStyle(col, 2, false, false)...)
		hi := make([]float64, len(xs))
		for i := range xs {
			hi[i] = lo[i] + width[i]
		}
		fig.series = append(fig.series, figSeries{name: lv, color: col, lo: lo, hi: hi, alpha: 0.18},
			figSeries{name: lv, color: col, xs: xs, ys: p, width: 2, legend: true})
	}
	for i := range fig.series {
		if fig.series[i].lo != nil {
			fig.series[i].xs = xs
		}
	}
	return newChart(fr, caption, l).with(fig), nil
}

// cumulativeChart stacks the category probabilities over the focus
// predictor: the upper edge of the layer of category m is P(y <= m).
func cumulativeChart(d *doc, or *runner.OutcomeResult, pf *profile, label string) (*chart, error) {
	res := or.Chosen.Result
	xs := pf.grid(chartPoints)
	pred, err := pf.predict(res, xs)
	if err != nil {
		return nil, err
	}
	title := "Cumulative probabilities by " + pf.focus
	if label != "" {
		title += " (" + label + ")"
	}
	sub := or.Chosen.ID + heldWords(pf, label, "; ")
	caption := fmt.Sprintf("The category probabilities of %s stacked, lowest category at the bottom: the upper edge of each layer is the cumulative probability P(%s <= category) as %s varies.", or.Outcome.Column, or.Outcome.Column, pf.focus)
	J := len(res.Categories)
	l := charts.NewLine()
	// The legend stands right of the plot, one entry per line, the
	// categories in their order from the bottom up as the layers are: the
	// highest at the top (the static figure lists them so too). Long
	// names are shortened with an ellipsis (the tooltip gives them whole)
	// so that the legend leaves the plot most of the chart's width.
	widest := 0.0
	for _, c := range res.Categories {
		widest = max(widest, min(textWidth(c, legendSize), legendRightMax))
	}
	legend := slices.Clone(res.Categories)
	slices.Reverse(legend)
	grid := predictionGrid
	grid.Left = "40" // room for the y axis's name, turned beside the axis (a long one over the axis would meet the subtitle)
	right := 40 + int(math.Ceil(widest))
	grid.Right = strconv.Itoa(right)
	fr := d.frame(chartFrame{title: title, subtitle: sub, height: predictionHeight, grid: grid, legend: legend, legendRight: true, rightBelow: predictionGrid.Right, yNameBeside: true})
	l.SetGlobalOptions(append(fr.opts(),
		charts.WithXAxisOpts(focusAxis(pf.axis)),
		charts.WithYAxisOpts(opts.YAxis{Name: "cumulative probability", Type: "value", Min: 0, Max: 1, NameLocation: "middle", NameGap: 32}),
		// Each entry's icon is a square of its layer's colour, beside the
		// plot and below it alike, as the static figure draws it: the
		// library's icon of a line series (a line through a circle)
		// showed a line the chart does not draw.
		charts.WithLegendOpts(opts.Legend{Show: opts.Bool(true), Orient: "vertical", Right: "0", Top: "middle",
			Data: legend, Icon: "rect", ItemWidth: 14, ItemHeight: 14}))...)
	fig := newFigure(title, pf.axis, "cumulative probability")
	fig.yMin, fig.yMax = 0, 1
	fig.legendUp = true
	bottom := make([]float64, len(xs))
	for j, lv := range res.Categories {
		col := categoryColor(j, J)
		p := make([]float64, len(xs))
		top := make([]float64, len(xs))
		for i := range xs {
			p[i] = pred.Prob[i*pred.J+j]
			top[i] = bottom[i] + p[i]
		}
		l.AddSeries(lv, stackData(xs, p), stackEncode, charts.WithLineChartOpts(opts.LineChart{Stack: "cumulative", ShowSymbol: opts.Bool(false)}),
			charts.WithLineStyleOpts(opts.LineStyle{Color: col, Width: 1}),
			charts.WithAreaStyleOpts(opts.AreaStyle{Color: col, Opacity: opts.Float(0.85)}), charts.WithItemStyleOpts(opts.ItemStyle{Color: col}))
		fig.series = append(fig.series, figSeries{name: lv, color: col, xs: xs, lo: append([]float64(nil), bottom...), hi: top, alpha: 0.85, legend: true})
		bottom = top
	}
	return newChart(fr, caption, l).with(fig), nil
}

// focusAxis is the x axis of the charts over the focus grid: a value
// axis, whose ticks the library puts at round values and whose ends it
// rounds outwards to them (scale: not from 0). The library stacks the
// bands' series point by point on it, as their points share the grid.
func focusAxis(name string) opts.XAxis {
	return opts.XAxis{Name: axisName(name), Type: "value", Scale: opts.Bool(true), NameLocation: "middle", NameGap: 28}
}

// axisName is the name of an x axis, shortened with an ellipsis to the
// chart's width (the caption gives it whole).
func axisName(name string) string {
	return fitWidth(name, chartTextWidth-40, widthAt(12))
}

// heldColumns names the columns taking two values that a point holds at
// their mean, for a sentence: "column `pilot`, which holds only 0 and 1,
// is" held at "its mean, the share of rows at 1" (plural for several), or,
// when some column is not 0/1, "column `sex12`, which holds only 1 and 2,
// is" held at "its mean"; at, where the predictions or effects of such a
// column are ("at 0 and at 1", "at its two values"); zeroOne, whether
// every column holds 0 and 1.
func heldColumns(or *runner.OutcomeResult, names []string) (cols, it, at string, zeroOne bool) {
	var code, valued []string
	zeroOne = true
	for _, n := range names {
		lo, hi, _ := or.TwoValues(n)
		zeroOne = zeroOne && lo == 0 && hi == 1
		code = append(code, mdCode(n))
		valued = append(valued, fmt.Sprintf("%s (%s and %s)", mdCode(n), numfmt.Num(lo), numfmt.Num(hi)))
	}
	switch {
	case zeroOne && len(names) > 1:
		return "columns " + words.AndList(code) + ", which hold only 0 and 1, are", "their means, the shares of rows at 1", "at 0 and at 1", true
	case zeroOne:
		return "column " + code[0] + ", which holds only 0 and 1, is", "its mean, the share of rows at 1", "at 0 and at 1", true
	case len(names) > 1:
		return "columns " + words.AndList(valued) + ", which hold only two values each, are", "their means", "at their two values", false
	}
	lo, hi, _ := or.TwoValues(names[0])
	return fmt.Sprintf("column %s, which holds only %s and %s, is", code[0], numfmt.Num(lo), numfmt.Num(hi)), "its mean", "at its two values", false
}
