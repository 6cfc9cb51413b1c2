package render

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"

	"ordplan/internal/words"
	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/fit"
)

// writeOverallFit compares every usable candidate with the thresholds-only
// model of its approach and link.
func writeOverallFit(d *doc, or *runner.OutcomeResult) {
	if len(or.Overall) == 0 {
		return
	}
	d.h(3, "Overall fit")
	lr := "the likelihood-ratio test that every slope is zero"
	if !slices.ContainsFunc(or.Overall, func(o runner.OverallRecord) bool { return o.LR.OK }) {
		lr = "the likelihood-ratio statistic of every slope being zero (not a test here: see below the table)"
	}
	d.p("Each candidate against the model with thresholds only (no predictor) of the same approach and link: %s, and pseudo-R² measures. McFadden: 1 − LL/LL₀; Cox-Snell: 1 − exp(2(LL₀ − LL)/N); Nagelkerke: Cox-Snell divided by its largest value 1 − exp(2 LL₀/N); McKelvey-Zavoina (cumulative models with parallel effects): the share of the latent variable's variance explained, var(x'b)/(var(x'b) + var(e)). None of them is the share of variance explained in the usual sense; compare them between models of the same data only. Sources are listed in the documentation of the models.", lr)
	pooled := false
	for _, o := range or.Overall {
		pooled = pooled || o.LR.OK && o.LR.Pooled != ""
	}
	if or.Imputed != nil && !pooled {
		// No likelihood-ratio statistic is a test (sampling weights), so
		// none was pooled.
		d.p("On imputed data both models were fitted on each of the %d imputed sets. LL₀ and each pseudo-R² are the means over the sets of each set's value, the point estimate of Rubin's rules; they have no pooled standard error.", or.Imputed.M)
	} else if or.Imputed != nil {
		d.p("On imputed data both models were fitted on each of the %d imputed sets. The likelihood-ratio test is pooled by D3 (Meng and Rubin 1992; the thresholds-only model at the mean of the sets' thresholds, the candidate at its pooled estimates): the column shows its F statistic on k and v degrees of freedom, F(k, v) = F, and the p-value is that of F(k, v). LL₀ and each pseudo-R² are the means over the sets of each set's value, the point estimate of Rubin's rules; they have no pooled standard error.", or.Imputed.M)
	}
	var rows [][]string
	for _, o := range or.Overall {
		mz := "—"
		if !math.IsNaN(o.McKelveyZavoina) {
			mz = numfmt.Fixed(o.McKelveyZavoina, 4)
		}
		model := o.Model
		if o.LR.OK && o.LR.Pooled != "" {
			model += " (pooled, " + o.LR.Pooled + ")"
		}
		row := []string{model, numfmt.Fixed(o.NullLogLik, 3)}
		if o.LR.OK {
			row = append(append(row, statCells(o.LR, pooled)...), numfmt.PValue(o.LR.P))
		} else if o.LR.Negative {
			row = append(append(row, statCells(o.LR, pooled)...), "none (below the table)")
		} else {
			row = append(append(row, "not a test"), emptyStat(pooled)[1:]...)
			row = append(row, "")
		}
		row = append(row, numfmt.Fixed(o.McFadden, 4), numfmt.Fixed(o.CoxSnell, 4), numfmt.Fixed(o.Nagelkerke, 4), mz)
		rows = append(rows, row)
	}
	head := []string{"Model", "LL₀", "LR chi-square", "df", "p", "McFadden", "Cox-Snell", "Nagelkerke", "McKelvey-Zavoina"}
	if pooled {
		head = slices.Delete(head, 2, 4)
		head = slices.Insert(head, 2, "LR test")
	}
	d.captioned("Overall fit: each candidate against its thresholds-only model (LL₀ its log-likelihood), and pseudo-R²").table(head, rows)
	for _, o := range or.Overall {
		if !o.LR.OK && !o.LR.Negative && o.LR.Reason != "" {
			d.p("The likelihood-ratio statistics are not tests here: %s.", mdText(o.LR.Reason))
			break
		}
	}
	for _, o := range or.Overall {
		if o.LR.Negative {
			d.p("%s against its thresholds-only model: %s.", o.Model, mdText(o.LR.Reason))
		}
	}
}

// writeOddsRatios writes exp(b) of the chosen model when its link is the
// logit.
func writeOddsRatios(d *doc, r *runner.Result, or *runner.OutcomeResult) {
	res := or.Chosen.Result
	if res.Model.Link != fit.Logit || len(res.Predictors) == 0 {
		return
	}
	level, _ := confidence(r)
	tab, err := runner.OddsRatios(res, or.ColumnReadings(), level)
	if err != nil {
		d.p("Odds ratios not computed: %s.", mdText(err.Error()))
		return
	}
	kind := fit.OddsRatioKind(res.Model)
	d.h(4, "Odds ratios")
	lo, hi := res.Categories[0], res.Categories[1]
	pooled := res.DF != nil
	interval := "exp(b ∓ z·se)"
	if pooled {
		interval = "exp(b ∓ t·se), t the quantile of t on the degrees of freedom in column df (those of b in the estimates above; for a constrained predictor the smallest among b_m's parameters)"
	}
	if len(res.Categories) == 2 {
		// One boundary: no other boundaries, nothing parallel or constrained.
		d.p("exp(b) for a one-unit increase of each model column (what that unit is, in the column Change), with %s intervals %s: the factor by which it multiplies the odds of %s against %s (with two categories, one boundary, the %s is this plain odds ratio); above 1 the outcome moves towards %s.",
			pct(level), interval, hi, lo, kind, hi)
	} else {
		d.p("exp(b) for a one-unit increase of each model column (what that unit is, in the column Change), with %s intervals %s: the %s. At the first boundary (%s/%s) it multiplies the %s, and likewise at the other boundaries; above 1 the outcome moves towards higher categories. A parallel predictor has one value for every boundary; a constrained predictor has exp(φ_m g) at boundary m, its interval from the delta method on b_m = φ_m g.",
			pct(level), interval, kind, lo, hi, fit.OddsRatioMeaning(res.Model, lo, hi))
	}
	where := slices.ContainsFunc(tab.Rows, func(o runner.OddsRatioRow) bool { return o.HoldsAt != "" })
	if res.RefDF > 0 && res.DF == nil {
		d.p("With cluster-robust errors from G = %d clusters, z is the quantile of t on G-1 = %s degrees of freedom, as for the estimates.", res.Clusters, numfmt.Num(res.RefDF))
	}
	if where {
		d.p("A column whose term enters an interaction has its odds ratio where the terms it interacts with have their columns at 0 (column Holds at). The exp(b) of an interaction column is a ratio of odds ratios: the factor by which the odds ratio of one of its components changes with a unit of the other.")
	}
	if len(tab.Omitted) > 0 {
		d.p("Not shown: the columns of %s. A column of a polynomial or spline basis (or a product with one) has no odds ratio of its own, since a unit change of one basis column with the others held fixed is no change of the predictor, and neither has a term whose data column also makes another term (it cannot change with that term held fixed); the effect of such a term is in the marginal effects and the predicted probabilities. Their estimates are in the table above.", mdText(strings.Join(tab.Omitted, ", ")))
	}
	var rows [][]string
	for _, o := range tab.Rows {
		at := boundaryCell(o.Boundary, res.Categories)
		row := []string{o.Predictor, o.Change}
		if where {
			row = append(row, o.HoldsAt)
		}
		row = append(append(row, at), numfmt.Ratios(o.Ratio, o.Low, o.High)...)
		if pooled {
			row = append(row, dfCell(o.DF))
		}
		rows = append(rows, row)
	}
	head := []string{"Predictor", "Change"}
	if where {
		head = append(head, "Holds at")
	}
	head = append(head, "Boundary", capitalize(kind), pct(level)+" low", pct(level)+" high")
	if pooled {
		head = append(head, "df")
	}
	d.captioned(capitalize(kind)+"s of the chosen model").table(head, rows)
	if slices.ContainsFunc(tab.Rows, func(o runner.OddsRatioRow) bool { return math.IsNaN(o.Low) || math.IsNaN(o.High) }) {
		if w := notEstimableWarning(or.Chosen.ID, res); w != "" {
			d.p("%s", w)
		}
	}
	if u := unshownOdds(tab.Rows); u != "" {
		d.p("%s", u)
	}
}

// unshownOdds says, of the predictors whose odds ratios or their bounds lie
// beyond what a number holds (runner.UnshownOdds), why they read inf
// or 0 and what to do; "" when there are none. The report and ordplan fit
// say it alike.
func unshownOdds(rows []runner.OddsRatioRow) string {
	u := runner.UnshownOdds(rows)
	if len(u) == 0 {
		return ""
	}
	return fmt.Sprintf("The odds ratios of %s read inf or 0: exp(b) per unit of the column lies beyond what a number holds, its unit being far larger than its values vary (b itself is in the estimates); rescale the column, multiplying it by a power of 10, for odds ratios per a unit its values span.", words.AndList(u))
}

// cautionText is the sentence that follows a computed test whose pooling
// rule warned (a D3 between-imputation part set to 0), or nothing.
func cautionText(t fit.Test) string {
	if !t.OK || t.Warning == "" {
		return ""
	}
	return " Caution: " + t.Warning + "."
}

// capitalize is s with its first letter, a lower-case ASCII letter,
// written in upper case; s as it is otherwise (a number first).
func capitalize(s string) string {
	if s == "" || s[0] < 'a' || s[0] > 'z' {
		return s
	}
	return string(s[0]-'a'+'A') + s[1:]
}

// writeGoodnessOfFit writes the Lipsitz test of the chosen model, its
// table of observed and expected counts by group of predicted score, and
// the calibration chart.
func writeGoodnessOfFit(d *doc, or *runner.OutcomeResult) {
	lz := or.Lipsitz
	if lz == nil {
		return
	}
	d.h(3, "Goodness of fit of the chosen model")
	t := lz.Table
	if t == nil {
		d.p("Not computed: %s.", mdText(lz.Test.Reason))
		return
	}
	d.p("Rows are sorted by their predicted ordinal score (the expected category, categories scored 1 to %d) and cut into %d groups of about equal size; rows with the same score stay in one group. The Lipsitz test refits the chosen model with an indicator of each group but the first as an extra parallel predictor: if the model describes the data well along its own score, those indicators add nothing.",
		len(t.Categories), t.Groups)
	if pl := or.GOFPooling; pl != nil {
		d.p("On imputed data (%d sets): %s.", or.Imputed.M, pl.Note)
	}
	if lz.Test.Negative && lz.Test.Pooled != "" {
		d.p("Lipsitz test, pooled over the imputed sets by %s (approximate): %s, %s.", lz.Test.Pooled, runner.TestStatistic(lz.Test), mdText(lz.Test.Reason))
	} else if lz.Test.OK && lz.Test.Pooled != "" {
		d.p("Lipsitz test, pooled over the imputed sets by %s (approximate): %s, %s.%s", lz.Test.Pooled, runner.TestStatistic(lz.Test), numfmt.PText(lz.Test.P), cautionText(lz.Test))
	} else if lz.Test.OK {
		d.p("Lipsitz test: chi-square(%d) = %s, %s.", lz.Test.DF, numfmt.Stat(lz.Test.Chi2), numfmt.PText(lz.Test.P))
	} else {
		d.p("Lipsitz test not computed: %s.", mdText(lz.Test.Reason))
	}
	d.p("Observed and expected counts (the sum of the predicted probabilities) of each category in each group:")
	head := []string{"Group", "Score range", "N"}
	for _, l := range t.Categories {
		head = append(head, l+" obs", l+" exp")
	}
	obsText := countText(t.Observed, t.Weight)
	var rows [][]string
	for g := 0; g < t.Groups; g++ {
		row := []string{fmt.Sprint(g + 1), numfmt.Fixed(t.Low[g], 3) + "–" + numfmt.Fixed(t.High[g], 3), obsText(t.Weight[g])}
		for j := range t.Categories {
			row = append(row, obsText(t.Observed[g][j]), numfmt.Fixed(t.Expected[g][j], 1))
		}
		rows = append(rows, row)
	}
	d.captioned("Observed and expected counts by group of predicted score").table(head, rows)
	d.charts("Chart in report.html: observed against expected share of each category by group of predicted score.", calibrationChart(d, or))
	writePatternSplit(d, or)
}

// countText formats the observed counts (and group sizes) of a
// goodness-of-fit table: whole numbers as they are; otherwise (sums of
// sampling weights, or on imputed data the mean of the sets' counts) every
// one with one decimal, as the expected counts beside them, so that 59.6968
// and 59.7 do not sit side by side. The outcome's category counts and the
// counts of the predictors by outcome category take it too.
func countText(counts [][]float64, sizes []float64) func(float64) string {
	whole := !slices.ContainsFunc(sizes, func(v float64) bool { return v != math.Trunc(v) })
	for _, row := range counts {
		whole = whole && !slices.ContainsFunc(row, func(v float64) bool { return v != math.Trunc(v) })
	}
	if whole {
		return numfmt.Num
	}
	return func(v float64) string { return numfmt.Fixed(v, 1) }
}

// writePatternSplit writes the Pulkstenis-Robinson tests of the chosen
// model and their table, or why they were not computed.
func writePatternSplit(d *doc, or *runner.OutcomeResult) {
	rec := or.PatternSplit
	if rec == nil {
		return
	}
	d.h(4, "Tests by covariate pattern (Pulkstenis-Robinson)")
	if rec.PatternSplit == nil {
		d.p("Not applicable: %s.", mdText(rec.NotComputed))
		return
	}
	t := rec.PatternSplit
	split := fmt.Sprintf("the rows of each pattern are cut in two at the pattern's median predicted score (rows with the same score stay together; %d of %d patterns could be cut)", t.Split, t.Patterns)
	df := "(G − 1)(J − 1) − k − 1 degrees of freedom, with G the groups, J the categories and k the model's parameters on the categorical predictors' columns (here k = " + fmt.Sprint(t.CategoricalParams) + ")"
	if t.Split == 0 {
		split = "no pattern could be cut in two, because every row of a pattern has the same predicted score (the model's predictors are all categorical), so each pattern is one group"
		df = "G(J − 1) − P degrees of freedom, the usual count for grouped data (G groups, J categories, P parameters of the model)"
	}
	d.p("The rows are grouped by the combination of the levels of the categorical predictors (%s: %d patterns); %s. The Pearson statistic Σ(O − E)²/E and the deviance 2 Σ O log(O/E) over groups and categories compare the observed counts O with the expected counts E, and are referred to chi-square on %s. The reference distribution is approximate: see the documentation of the models for how it was checked by simulation.",
		mdText(strings.Join(rec.Predictors, ", ")), t.Patterns, split, df)
	for _, ts := range []struct {
		name string
		test fit.Test
	}{{"Pearson", t.Pearson}, {"Deviance", t.Deviance}} {
		switch {
		case ts.test.Negative && ts.test.Pooled != "":
			d.p("%s, pooled over the imputed sets by %s (approximate; each set's statistic on chi-square(%d)): %s, %s.", ts.name, ts.test.Pooled, ts.test.DF, runner.TestStatistic(ts.test), mdText(ts.test.Reason))
		case ts.test.OK && ts.test.Pooled != "":
			d.p("%s, pooled over the imputed sets by %s (approximate; each set's statistic on chi-square(%d)): %s, %s.%s", ts.name, ts.test.Pooled, ts.test.DF, runner.TestStatistic(ts.test), numfmt.PText(ts.test.P), cautionText(ts.test))
		case ts.test.OK:
			d.p("%s: chi-square(%d) = %s, %s.", ts.name, ts.test.DF, numfmt.Stat(ts.test.Chi2), numfmt.PText(ts.test.P))
		default:
			// A test that is not OK carries no statistic (sampling
			// weights, too few degrees of freedom, an undefined cell).
			d.p("%s: not computed, %s.", ts.name, mdText(ts.test.Reason))
		}
	}
	if t.Caution != "" {
		d.p("Caution: %s.", t.Caution)
	} else {
		d.p("Expected counts: %d of %d cells below 5, the smallest %s.", t.CellsBelow5, t.Cells, numfmt.Fixed(t.MinExpected, 2))
	}
	head := []string{"Pattern", "Half", "N"}
	for _, l := range t.Categories {
		head = append(head, l+" obs", l+" exp")
	}
	obsText := countText(t.Observed, t.Weight)
	var rows [][]string
	for g := 0; g < t.Groups; g++ {
		row := []string{t.Pattern[g], t.Half[g], obsText(t.Weight[g])}
		for j := range t.Categories {
			row = append(row, obsText(t.Observed[g][j]), numfmt.Fixed(t.Expected[g][j], 1))
		}
		rows = append(rows, row)
	}
	d.captioned("Observed and expected counts by covariate pattern and half of predicted score").table(head, rows)
}

// observedPointSize is the diameter in pixels of the calibration chart's
// points of observed shares.
const observedPointSize = 8

// calibrationChart draws, per category, the observed share in each group
// (points) against the expected share (line). Its legend names each
// category once, in the category's colour, showing and hiding its line
// and points together (both series carry its name), and then the two
// marks in grey: the line, expected, and the point, observed (series
// without data), so that nine categories make eleven entries, not
// eighteen, and the marks are told apart by their shapes, not colours.
func calibrationChart(d *doc, or *runner.OutcomeResult) *chart {
	t := or.Lipsitz.Table
	shown := suffixedNames(t.Categories)
	expected, observed := calibrationMarks(shown)
	legend := append(slices.Clone(shown), expected, observed)
	// The axis tooltip names each series whole, category and mark, as
	// the series of a category share its name.
	var tooltip []string
	for _, c := range t.Categories {
		tooltip = append(tooltip, c+" expected", c+" observed")
	}
	// The bottom margin: the x axis's name and a one-row legend, some 19
	// pixels apart (as predictionGrid's).
	fr := d.frame(chartFrame{title: "Observed and expected by group of predicted score", subtitle: or.Chosen.ID, height: 406,
		grid: opts.Grid{Left: "6%", Right: "8%", Top: "70", Bottom: "56"}, legend: legend,
		lineOnly: map[string]bool{expected: true}, tooltipNames: append(tooltip, expected, observed)})
	l := charts.NewLine()
	l.SetGlobalOptions(append(fr.opts(),
		charts.WithXAxisOpts(opts.XAxis{Type: "category", Name: "group", NameLocation: "middle", NameGap: 28}),
		charts.WithYAxisOpts(opts.YAxis{Type: "value", Name: "share of the group", Min: 0, Max: shareAxisMax(t)}))...)
	groups := make([]string, t.Groups)
	for g := range groups {
		groups[g] = fmt.Sprint(g + 1)
	}
	l.SetXAxis(groups)
	J := len(t.Categories)
	fig := newFigure("Observed and expected by group of predicted score", "group of predicted score", "share of the group")
	fig.xNames = groups
	fig.yMin = 0
	// The points are twice the library's size: at 4 pixels their colours,
	// which tell the categories apart, could not be told.
	points := func(col string) []charts.SeriesOpts {
		return append(lineStyle(col, 0, false, true),
			charts.WithLineStyleOpts(opts.LineStyle{Color: col, Width: 0, Opacity: opts.Float(0)}),
			charts.WithLineChartOpts(opts.LineChart{ShowSymbol: opts.Bool(true), Symbol: "circle", SymbolSize: observedPointSize}))
	}
	for j, lv := range t.Categories {
		obs, exp := make([]float64, t.Groups), make([]float64, t.Groups)
		for g := 0; g < t.Groups; g++ {
			obs[g] = t.Observed[g][j] / t.Weight[g]
			exp[g] = t.Expected[g][j] / t.Weight[g]
		}
		col := categoryColor(j, J)
		l.AddSeries(shown[j], lineData(exp), lineStyle(col, 2, false, false)...)
		fig.series = append(fig.series, figSeries{name: lv, color: col, ys: exp, legend: true}, figSeries{name: lv + " observed", color: col, ys: obs, points: true, noLine: true})
		l.AddSeries(shown[j], lineData(obs), points(col)...)
	}
	// The marks' entries: series without data, in grey (in the static
	// figure, legend entries alone).
	l.AddSeries(expected, []opts.LineData{}, lineStyle(colorMark, 2, false, false)...)
	l.AddSeries(observed, []opts.LineData{}, points(colorMark)...)
	fig.series = append(fig.series,
		figSeries{name: expected, color: colorMark, legend: true, legendOnly: true},
		figSeries{name: observed, color: colorMark, points: true, noLine: true, legend: true, legendOnly: true})
	caption := "For each category, the expected share of each group (line) and the observed share (points). Points far from their line, in a pattern, show where the model misfits; groups are ordered by predicted score."
	return newChart(fr, caption, l).with(fig)
}

// calibrationMarks are the legend entries of the calibration chart's
// marks: expected (the line) and observed (the points), unless a category
// is shown under one of those names.
func calibrationMarks(shown []string) (expected, observed string) {
	expected, observed = "expected", "observed"
	if slices.Contains(shown, expected) || slices.Contains(shown, observed) {
		expected, observed = "expected (line)", "observed (points)"
	}
	return expected, observed
}

// shareAxisMax is the top of the calibration chart's axis: the largest
// observed or expected share of a group rounded up to a tenth, at most 1.
// With five categories the shares stay below 0.5, and an axis to 1 (as it
// was) pressed the lines and points into its lower half; the static figure
// takes its range from the data too.
func shareAxisMax(t *fit.ScoreGroups) float64 {
	top := 0.0
	for g := 0; g < t.Groups; g++ {
		if t.Weight[g] <= 0 {
			continue
		}
		for j := range t.Categories {
			top = math.Max(top, math.Max(t.Observed[g][j], t.Expected[g][j])/t.Weight[g])
		}
	}
	if m := math.Ceil(top*10-1e-9) / 10; m > 0 && m < 1 {
		return m
	}
	return 1
}

// boundaryCell names where a ratio holds in a table's Boundary column:
// boundary m (1-based) by number and its two categories, 0 (one value for
// all) "every boundary", or with two categories the one boundary "a/b".
func boundaryCell(m int, categories []string) string {
	switch {
	case m > 0:
		return fmt.Sprintf("%d (%s/%s)", m, categories[m-1], categories[m])
	case len(categories) == 2:
		return categories[0] + "/" + categories[1]
	}
	return "every boundary"
}
