package render

import (
	"fmt"
	"math"
	"strings"

	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"

	"gonum.org/v1/plot/vg"

	"ordplan/runner"
)

// criteriaChart draws AIC and BIC of every candidate with a finite
// maximum, in the order of the model table; the chosen model is a larger
// diamond, a model a rule rejected a hollow circle. It returns nil when no candidate has one. Under sampling weights
// the caption says the criteria are descriptive only.
func criteriaChart(d *doc, or *runner.OutcomeResult, sampling bool) *chart {
	var names []string
	var aic, bic []opts.ScatterData
	var aicV, bicV []float64
	var verdicts []string
	var missing []string
	rejected := false
	for _, f := range or.Fits {
		if f.Auxiliary {
			continue
		}
		if f.Result == nil || !f.Result.LikelihoodUsable() {
			missing = append(missing, f.ID)
			continue
		}
		name := f.ID
		// The chosen model is a large diamond, a model a rule rejected a
		// hollow circle (its criteria may be the smallest), the others
		// filled circles; the static figure draws the same marks.
		sym, size := "circle", 9
		switch f.Verdict {
		case "chosen":
			name += " (chosen)"
			sym, size = "diamond", 18
		case "rejected":
			sym = "emptyCircle"
			rejected = true
		}
		names = append(names, name)
		verdicts = append(verdicts, f.Verdict)
		aic = append(aic, opts.ScatterData{Value: val(f.Result.AIC), Symbol: sym, SymbolSize: size})
		aicV, bicV = append(aicV, f.Result.AIC), append(bicV, f.Result.BIC)
		bic = append(bic, opts.ScatterData{Value: val(f.Result.BIC), Symbol: sym, SymbolSize: size})
	}
	if len(names) == 0 {
		return nil
	}
	chosen := "the chosen model is the large diamond"
	if or.Chosen == nil {
		chosen = "no model was chosen"
	}
	caption := "AIC and BIC of each candidate model (smaller is better); " + chosen + "."
	if rejected {
		caption += " Hollow circles are models a decision rule rejected, which could not be chosen however small their criteria."
	}
	caption += " BIC charges more for each parameter than AIC once there are more than seven observations."
	if sampling {
		caption += " Under sampling weights both are descriptive only: the log-likelihood is a pseudo-likelihood."
	}
	if len(missing) > 0 {
		caption += fmt.Sprintf(" Not shown, for want of a finite maximum or a fit: %s.", strings.Join(missing, ", "))
	}
	legend := []string{"AIC", "BIC"}
	if or.Chosen != nil {
		legend = append(legend, legendChosen)
	}
	if rejected {
		legend = append(legend, legendRejected)
	}
	// The model names turn when they crowd the axis; the first one's
	// reach to the left sets the left margin. The bottom margin holds the
	// legend some 22 pixels below the turned names. On a phone the chart
	// is narrower: the names stand straight up, a little smaller, each
	// in its own slot (turned 30 degrees, the library thinned them out and
	// the first reached far to the left of the plot), and the chart grows
	// by their length, so that the plot keeps its size.
	axis := &categoryAxis{names: names, size: 11, margin: 60, maxWidth: 240, left: "4%", turns: []float64{30},
		phoneSize: 10, phoneTurns: []float64{90}}
	_, usual := axis.at(chartTextWidth)
	fr := d.frame(chartFrame{title: "Information criteria of the candidate models", subtitle: or.Outcome.Label,
		height: 426 - int(usual.extent-usual.upright(axis.size)),
		grid:   opts.Grid{Right: "4%", Top: "70", Bottom: "36"}, legend: legend, xCategories: axis})
	s := charts.NewScatter()
	s.SetGlobalOptions(append(fr.opts(),
		charts.WithYAxisOpts(opts.YAxis{Name: "criterion", Type: "value", Scale: opts.Bool(true)}))...)
	s.SetXAxis(fr.xNames)
	s.AddSeries("AIC", aic, charts.WithItemStyleOpts(opts.ItemStyle{Color: colorEstimate}))
	s.AddSeries("BIC", bic, charts.WithItemStyleOpts(opts.ItemStyle{Color: colorParallel}))
	// Entries of the legend alone: series without points, in grey, whose
	// symbols are the marks of the chosen and the rejected models.
	for _, e := range legend[2:] {
		sym, size := "diamond", 14
		if e == legendRejected {
			sym, size = "emptyCircle", 9
		}
		s.AddSeries(e, []opts.ScatterData{}, charts.WithScatterChartOpts(opts.ScatterChart{Symbol: sym, SymbolSize: size}),
			charts.WithItemStyleOpts(opts.ItemStyle{Color: colorMark}))
	}
	fig := newFigure("Information criteria of the candidate models", "", "criterion")
	fig.xNames = names
	fig.xNameMax = 7 * vg.Centimeter // model names are not long
	for _, c := range []struct {
		name, color string
		ys          []float64
	}{{"AIC", colorEstimate, aicV}, {"BIC", colorParallel, bicV}} {
		fig.series = append(fig.series, figSeries{name: c.name, color: c.color, points: true, noLine: true, legend: true, legendOnly: true})
		for _, mark := range []string{"", "diamond", "ring"} {
			ys := make([]float64, len(c.ys))
			for i, y := range c.ys {
				ys[i] = math.NaN()
				if verdictMark(verdicts[i]) == mark {
					ys[i] = y
				}
			}
			fig.series = append(fig.series, figSeries{name: c.name, color: c.color, ys: ys, points: true, noLine: true, shape: mark})
		}
	}
	for _, e := range legend[2:] {
		mark := "diamond"
		if e == legendRejected {
			mark = "ring"
		}
		fig.series = append(fig.series, figSeries{name: e, color: colorMark, points: true, noLine: true, shape: mark, legend: true, legendOnly: true})
	}
	return newChart(fr, caption, s).with(fig)
}

// The legend's entries of the marks of the information criteria chart.
const (
	legendChosen   = "chosen model"
	legendRejected = "rejected by a rule"
)

// verdictMark is the static figure's mark of a model's points: a diamond
// for the chosen model, a ring for one a rule rejected, else "" (a
// filled circle).
func verdictMark(verdict string) string {
	switch verdict {
	case "chosen":
		return "diamond"
	case "rejected":
		return "ring"
	}
	return ""
}
