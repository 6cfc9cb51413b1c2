package render

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"

	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/fit"
)

// writeBoundaryEffects shows, for the chosen model's approach and link,
// each predictor's slope at every boundary in the nonparallel model with
// its interval, against the one slope of the parallel model: the picture
// of the parallel-lines assumption.
func writeBoundaryEffects(d *doc, r *runner.Result, or *runner.OutcomeResult) {
	if binary(or) {
		return // one boundary: nothing to compare across
	}
	d.h(3, "Effects across boundaries")
	ch := or.Chosen
	if ch == nil {
		d.p("No model was chosen, so there is no approach and link to draw the effects of.")
		return
	}
	level, z := confidence(r)
	approach := ch.Result.Model.ComparisonName()
	npID := fit.ModelID(approach, fit.NonparallelEffects.String(), ch.Link)
	np := or.Cell(ch.Approach, fit.NonparallelEffects, ch.Link)
	switch {
	case np == nil:
		d.p("Not drawn: the plan fitted no %s model.", npID)
		return
	case !np.OK():
		d.p("Not drawn: %s has no usable estimates (%s).", npID, mdText(np.Problem()))
		return
	}
	parID := fit.ModelID(approach, fit.ParallelEffects.String(), ch.Link)
	par := or.Cell(ch.Approach, fit.ParallelEffects, ch.Link)
	if !par.OK() {
		par = nil
	}
	var chosen *fit.Result
	if ch.Effects != fit.ParallelEffects && ch.Effects != fit.NonparallelEffects {
		chosen = ch.Result
	}
	res := np.Result
	q := res.J - 1
	_, z = confidenceOf(r, res)
	width := numfmt.Fixed(z, 3)
	if res.DF != nil {
		width = "the t quantile on its Barnard-Rubin degrees of freedom"
	}
	d.p("Slope of each predictor at each category boundary in %s, with %s intervals (estimate ± %s × standard error), next to the single slope of %s. Boundary slopes close to the parallel slope, within their intervals, are consistent with one slope per predictor, but wide intervals cannot show that the slopes are equal; a trend across boundaries is what the parallel-lines tests detect. Cells give the estimate and, in brackets, its standard error.",
		npID, pct(level), width, parallelName(par, parID))
	bounds := make([]string, q)
	head := []string{"Predictor"}
	for m := 0; m < q; m++ {
		bounds[m] = fit.BoundaryLabel(res.Categories, m)
		head = append(head, fmt.Sprintf("b[%d] %s", m+1, bounds[m]))
	}
	if ch.Effects == fit.ParallelEffects {
		head = append(head, "parallel (chosen)")
	} else {
		head = append(head, "parallel")
	}
	if chosen != nil {
		head = append(head, ch.Effects.String()+" (chosen)")
	}
	// A column whose term enters an interaction has its slopes where the
	// terms it interacts with have their columns at 0, as its odds ratios.
	where := map[string]string{}
	shown := map[string]string{} // the title of a column's chart
	for _, c := range or.ColumnReadings() {
		if c.Where != "" {
			where[c.Column] = c.Where
		}
		shown[c.Column] = levelShown(c)
	}
	if len(where) > 0 {
		head = slices.Insert(head, 1, "Holds at")
	}
	var rows [][]string
	var cs []*chart
	var skipped []string
	for k, pred := range res.Predictors {
		est, se, ok := boundarySlopes(res, k)
		if !ok {
			skipped = append(skipped, pred)
			continue
		}
		row := []string{pred}
		if len(where) > 0 {
			row = append(row, where[pred])
		}
		for m := range est {
			row = append(row, fmt.Sprintf("%s (%s)", numfmt.Est(est[m]), numfmt.Est(se[m])))
		}
		row = append(row, slopeCell(par, pred, k))
		if chosen != nil {
			row = append(row, chosenCell(chosen, k))
		}
		rows = append(rows, row)
		cs = append(cs, boundaryChart(d, pred, shown[pred], where[pred], res.Categories, est, se, boundaryQuantiles(res, k, level), level, par, chosen, ch.Effects.String(), k))
	}
	if len(rows) > 0 {
		if len(where) > 0 {
			d.p("A column whose term enters an interaction has its slopes where the terms it interacts with have their columns at 0 (column Holds at, and the chart's subtitle), as its odds ratios do; a slope of an interaction column is the change of a component's slope with a unit of the other.")
		}
		d.captioned(fmt.Sprintf("Slopes at each boundary, %s", npID)).table(head, rows)
	}
	if len(skipped) > 0 {
		d.p("Not drawn for %s: the nonparallel fit gives no finite standard error for every boundary.", mdText(strings.Join(skipped, ", ")))
	}
	d.charts("Charts in report.html: the slope of each predictor across the boundaries, one chart per predictor.", cs...)
}

func parallelName(par *runner.FitEntry, id string) string {
	if par == nil {
		return "the parallel model (" + id + " has no usable estimates, so its line is missing)"
	}
	return id
}

// boundarySlopes returns the slopes of predictor k at every boundary of a
// nonparallel fit and their standard errors (parameters name[m]); ok is
// false when a standard error is missing or not a positive finite number.
func boundarySlopes(res *fit.Result, k int) (est, se []float64, ok bool) {
	q := res.J - 1
	est, se = make([]float64, q), make([]float64, q)
	for m := 0; m < q; m++ {
		est[m] = res.Effects[m][k]
		i := paramIndex(res, fmt.Sprintf("%s[%d]", res.Predictors[k], m+1))
		if i < 0 {
			return nil, nil, false
		}
		se[m] = res.StdErrors[i]
		if !(se[m] > 0) || math.IsInf(se[m], 0) || math.IsNaN(est[m]) {
			return nil, nil, false
		}
	}
	return est, se, true
}

// boundaryQuantiles is the quantile of each boundary slope's interval
// (with boundarySlopes): the normal's, or on a fit pooled over imputed
// sets t's on that slope's degrees of freedom.
func boundaryQuantiles(res *fit.Result, k int, level float64) []float64 {
	q := res.J - 1
	out := make([]float64, q)
	for m := range out {
		g := make([]float64, len(res.Estimates))
		g[paramIndex(res, fmt.Sprintf("%s[%d]", res.Predictors[k], m+1))] = 1
		out[m] = res.ReferenceQuantile(0.5+level/2, g)
	}
	return out
}

func paramIndex(res *fit.Result, name string) int {
	for i, n := range res.ParamNames {
		if n == name {
			return i
		}
	}
	return -1
}

// slopeCell is the parallel slope of a predictor with its standard error.
func slopeCell(par *runner.FitEntry, pred string, k int) string {
	if par == nil {
		return "n/a"
	}
	i := paramIndex(par.Result, pred)
	if i < 0 {
		return numfmt.Est(par.Result.Effects[0][k])
	}
	return fmt.Sprintf("%s (%s)", numfmt.Est(par.Result.Estimates[i]), numfmt.Est(par.Result.StdErrors[i]))
}

// chosenCell lists the chosen model's slopes of predictor k at every
// boundary.
func chosenCell(res *fit.Result, k int) string {
	parts := make([]string, len(res.Effects))
	for m := range res.Effects {
		parts[m] = numfmt.Est(res.Effects[m][k])
	}
	return strings.Join(parts, ", ")
}

// levelShown names the column of reading c in a chart's title: a column
// of a categorical term whose name does not spell its level (characters
// a name cannot hold, such as accents and spaces, became "_") by its term
// and level, "region = Île-de-France", since the name alone does not say
// which level it is; any other column by its name.
func levelShown(c runner.ColumnReading) string {
	if unspelledLevel(c) == "" {
		return c.Column
	}
	return c.Term + " = " + c.Level
}

// unspelledLevel is the level a column of a categorical term stands for
// when the column's name does not spell it, else "".
func unspelledLevel(c runner.ColumnReading) string {
	if c.Level == "" || c.Column == c.Term+"."+c.Level {
		return ""
	}
	return c.Level
}

// boundaryChart draws one predictor's slopes across the boundaries;
// shown is the predictor's name in the titles (levelShown; "": pred).
func boundaryChart(d *doc, pred, shown, holds string, cats []string, est, se, crit []float64, level float64, par *runner.FitEntry, chosen *fit.Result, chosenLevel string, k int) *chart {
	q := len(cats) - 1
	bounds := make([]string, q)
	for m := range bounds {
		bounds[m] = fit.BoundaryLabel(cats, m)
	}
	lo, hi := make([]float64, q), make([]float64, q)
	for m := range est {
		lo[m], hi[m] = est[m]-crit[m]*se[m], est[m]+crit[m]*se[m]
	}
	band := pct(level) + " interval"
	legend := []string{"nonparallel", band}
	if chosen != nil {
		legend = append(legend, chosenLevel+" (chosen)")
	}
	if par != nil {
		legend = append(legend, "parallel")
	}
	// Long category names make long boundary names: they turn, shortened
	// to an ellipsis beyond a width (the tooltip and the table above give
	// them whole), in two lines, lower and upper category, so that both
	// show, and the axis name moves below them; on a phone, where the
	// chart is narrower, they take two lines or turn where a wider chart
	// has them upright in one (chartFrame.xCategories).
	turned := make([]string, q)
	for m := range turned {
		turned[m] = cats[m] + "/\n" + cats[m+1]
	}
	sub := "slope at each boundary"
	if holds != "" {
		sub += ", holds at " + holds
	}
	if shown == "" {
		shown = pred
	}
	fr := d.frame(chartFrame{title: shown, subtitle: sub, height: 340,
		grid: opts.Grid{Right: "6%", Top: "60", Bottom: "60"}, legend: legend,
		lineOnly:    map[string]bool{band: true, "parallel": true},
		xCategories: &categoryAxis{name: "boundary", names: bounds, turned: turned, size: 10, margin: 50, maxWidth: 130, left: "4%", turns: []float64{30, 45}}})
	l := charts.NewLine()
	l.SetGlobalOptions(append(fr.opts(),
		charts.WithYAxisOpts(opts.YAxis{Type: "value", Name: "slope", Scale: opts.Bool(true)}))...)
	axisNames := fr.xNames
	l.SetXAxis(axisNames)
	l.AddSeries("nonparallel", lineData(est), lineStyle(colorEstimate, 2.5, false, true)...)
	// Both bounds carry the same name, so the legend shows one entry.
	l.AddSeries(band, lineData(lo), lineStyle(colorEstimate, 1, true, false)...)
	l.AddSeries(band, lineData(hi), lineStyle(colorEstimate, 1, true, false)...)
	named := pred
	if shown != pred {
		named = fmt.Sprintf("%s (%s)", pred, shown)
	}
	caption := fmt.Sprintf("%s: nonparallel slope at each boundary with its %s (dashed)", named, band)
	if holds != "" {
		caption = fmt.Sprintf("%s at %s (where its slopes hold, since it enters an interaction): nonparallel slope at each boundary with its %s (dashed)", named, holds, band)
	}
	if chosen != nil {
		cv := make([]float64, q)
		for m := range cv {
			cv[m] = chosen.Effects[m][k]
		}
		l.AddSeries(chosenLevel+" (chosen)", lineData(cv), lineStyle(colorChosen, 2, true, true)...)
		caption += ", the slopes of the chosen " + chosenLevel + " model (black, dashed)"
	}
	// The parallel line comes last so that it is drawn on top.
	if par != nil {
		flat := make([]float64, q)
		for m := range flat {
			flat[m] = par.Result.Effects[m][k]
		}
		l.AddSeries("parallel", lineData(flat), lineStyle(colorParallel, 2, false, false)...)
		caption += ", and the parallel slope (flat line)"
	}
	title := shown + ": slope at each boundary"
	if holds != "" {
		title += " (at " + holds + ")"
	}
	fig := newFigure(title, "boundary", "slope")
	fig.xNames = axisNames
	fig.series = append([]figSeries{
		{name: band, color: colorEstimate, ys: lo, dashed: true, width: 1, legend: true},
		{name: band, color: colorEstimate, ys: hi, dashed: true, width: 1},
		{name: "nonparallel", color: colorEstimate, ys: est, points: true, width: 2, legend: true},
	}, fig.series...)
	if chosen != nil {
		cv := make([]float64, q)
		for m := range cv {
			cv[m] = chosen.Effects[m][k]
		}
		fig.series = append(fig.series, figSeries{name: chosenLevel + " (chosen)", color: colorChosen, ys: cv, dashed: true, points: true, legend: true})
	}
	if par != nil {
		flat := make([]float64, q)
		for m := range flat {
			flat[m] = par.Result.Effects[m][k]
		}
		fig.series = append(fig.series, figSeries{name: "parallel", color: colorParallel, ys: flat, legend: true})
	}
	return newChart(fr, caption+".", l).with(fig)
}
