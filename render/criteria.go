package render

import (
	"fmt"
	"strings"

	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"

	"gonum.org/v1/plot/vg"

	"ordplan/runner"
)

// criteriaChart draws AIC and BIC of every candidate with a finite
// maximum, in the order of the model table; the chosen model is a larger
// diamond. It returns nil when no candidate has one. Under sampling weights
// the caption says the criteria are descriptive only.
func criteriaChart(d *doc, or *runner.OutcomeResult, sampling bool) *chart {
	var names []string
	var aic, bic []opts.ScatterData
	var aicV, bicV []float64
	var missing []string
	for _, f := range or.Fits {
		if f.Auxiliary {
			continue
		}
		if f.Result == nil || !f.Result.LikelihoodUsable() {
			missing = append(missing, f.ID)
			continue
		}
		name := f.ID
		sym, size := "circle", 9
		if f.Verdict == "chosen" {
			name += " (chosen)"
			sym, size = "diamond", 18
		}
		names = append(names, name)
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
	caption := "AIC and BIC of each candidate model (smaller is better); " + chosen + ". BIC charges more for each parameter than AIC once there are more than seven observations."
	if sampling {
		caption += " Under sampling weights both are descriptive only: the log-likelihood is a pseudo-likelihood."
	}
	if len(missing) > 0 {
		caption += fmt.Sprintf(" Not shown, for want of a finite maximum or a fit: %s.", strings.Join(missing, ", "))
	}
	// The model names turn when they crowd the axis; the first one's
	// reach to the left sets the left margin.
	labels := layoutCategories(names, 11, chartTextWidth-60, 240)
	fr := &chartFrame{id: d.chartID(), title: "Information criteria of the candidate models", subtitle: or.Outcome.Label, height: 440,
		grid: opts.Grid{Left: leftFor(labels, "4%"), Right: "4%", Top: "70", Bottom: "50"}, legend: []string{"AIC", "BIC"}}
	s := charts.NewScatter()
	s.SetGlobalOptions(append(fr.opts(),
		charts.WithXAxisOpts(opts.XAxis{Type: "category", AxisLabel: labels.axisLabel(11)}),
		charts.WithYAxisOpts(opts.YAxis{Name: "criterion", Type: "value", Scale: opts.Bool(true)}))...)
	s.SetXAxis(names)
	s.AddSeries("AIC", aic, charts.WithItemStyleOpts(opts.ItemStyle{Color: colorEstimate}))
	s.AddSeries("BIC", bic, charts.WithItemStyleOpts(opts.ItemStyle{Color: colorParallel}))
	fig := newFigure("Information criteria of the candidate models", "", "criterion")
	fig.xNames = names
	fig.xNameMax = 7 * vg.Centimeter // model names are not long
	fig.series = []figSeries{
		{name: "AIC", color: colorEstimate, ys: aicV, points: true, noLine: true, legend: true},
		{name: "BIC", color: colorParallel, ys: bicV, points: true, noLine: true, legend: true},
	}
	return newChart(fr, caption, s).with(fig)
}
