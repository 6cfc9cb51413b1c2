package render

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"ordplan/internal/words"
	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/data"
)

// descriptive is the summary of one predictor (or one level of a
// categorical predictor) in each outcome category and over all rows: mean
// and standard deviation, or, for a 0/1 predictor and a level, the count
// and share of rows with 1 (with that level).
type descriptive struct {
	Label  string
	Counts bool      // show counts and shares
	N      []float64 // per category, then all: observations (sum of weights)
	Mean   []float64 // per category, then all (the share for counts)
	SD     []float64 // per category, then all (divisor: observations - 1)
	Ones   []float64 // counts: observations with 1 (with the level, with the higher value)
	// Higher: a numeric predictor of two values other than 0 and 1,
	// counted at its higher value (Label "sex12 = 2").
	Higher bool
}

// describe summarizes every raw predictor column of ds by outcome
// category, weighted by the frequency weights, or by sampling weights
// as read, rescaled to sum to the rows (data.Options.Sampling), so that the
// numbers do not depend on the sampling weights' scale. levels gives the levels of
// a categorical column (its cells hold the level index), nil for a
// numeric one. A row whose outcome is missing (-1, the original data of an
// imputed run) is left out, and so is a missing predictor value (NaN) from
// that predictor's summary: each predictor over the rows where it and the
// outcome are observed.
func describe(ds *data.Dataset, levels [][]string) []descriptive {
	K, J := ds.K, len(ds.Categories)
	weights := ds.Weights
	var out []descriptive
	one := func(label string, k int, counts bool, value func(i int) float64) *descriptive {
		s := descriptive{Label: label, Counts: counts, N: make([]float64, J+1), Mean: make([]float64, J+1),
			SD: make([]float64, J+1), Ones: make([]float64, J+1)}
		m2 := make([]float64, J+1)
		for i := 0; i < ds.N; i++ {
			w := 1.0
			if weights != nil {
				w = weights[i]
			}
			if w == 0 || ds.Y[i] < 0 || math.IsNaN(ds.X[i*K+k]) {
				continue
			}
			x := value(i)
			for _, c := range []int{ds.Y[i], J} {
				// Weighted running mean and sum of squares (West's update).
				s.N[c] += w
				delta := x - s.Mean[c]
				s.Mean[c] += w / s.N[c] * delta
				m2[c] += w * delta * (x - s.Mean[c])
				if x == 1 {
					s.Ones[c] += w
				}
			}
		}
		for c := range m2 {
			s.SD[c] = math.NaN()
			if s.N[c] > 1 {
				s.SD[c] = math.Sqrt(m2[c] / (s.N[c] - 1))
			}
		}
		out = append(out, s)
		return &out[len(out)-1]
	}
	for k := 0; k < K; k++ {
		name := ds.Predictors[k]
		if k < len(levels) && levels[k] != nil {
			for l, lv := range levels[k] {
				one(name+" = "+lv, k, true, func(i int) float64 {
					if int(ds.X[i*K+k]) == l {
						return 1
					}
					return 0
				})
			}
			continue
		}
		binary := true
		for i := 0; i < ds.N; i++ {
			if x := ds.X[i*K+k]; x != 0 && x != 1 && !math.IsNaN(x) {
				binary = false
				break
			}
		}
		if _, hi, two := runner.TwoValuesOf(ds.X, K, k); two && !binary {
			// Two other values (1 and 2): counted at the higher, as a 0/1
			// column at 1 (runner's two-values rule).
			one(name+" = "+numfmt.Num(hi), k, true, func(i int) float64 {
				if ds.X[i*K+k] == hi {
					return 1
				}
				return 0
			}).Higher = true
			continue
		}
		one(name, k, binary, func(i int) float64 { return ds.X[i*K+k] })
	}
	return out
}

// sourceLevels lists the levels of each raw predictor column of an
// outcome (nil for a numeric one).
func sourceLevels(or *runner.OutcomeResult) [][]string {
	if or.Design == nil {
		return nil
	}
	out := make([][]string, len(or.Design.Sources))
	for i, s := range or.Design.Sources {
		if s.Cat != nil {
			out[i] = s.Cat.Levels
		}
	}
	return out
}

// writeDescriptives writes the predictors by outcome category and the
// missing-value pattern of the used columns.
func writeDescriptives(d *doc, or *runner.OutcomeResult, sampling bool) {
	ds := describe(describedData(or), sourceLevels(or))
	if len(ds) > 0 {
		lv := or.Data.Categories
		weighted := ""
		rowsWord := "rows" // what the n of a partly observed predictor counts
		switch {
		case describedData(or).Weights == nil:
		case sampling:
			weighted = " Counts, means and SDs are weighted by the sampling weights, rescaled to sum to the number of rows."
			rowsWord = "weighted rows"
		default:
			weighted = " Counts, means and SDs are weighted by the frequency weights."
			rowsWord = "observations"
		}
		total := categoryTotals(describedData(or))
		partly := false // some predictor is missing in rows of some category
		for _, s := range ds {
			for c := range s.N {
				partly = partly || s.N[c] != total[c]
			}
		}
		counted := ""
		if partly {
			counted = fmt.Sprintf(" A predictor is summarized over the rows where it is observed: where it is missing in some rows of a category, the cell names the %[1]s it counts, \"k of n (share)\" for a count (n the %[1]s with the predictor observed, the share's denominator) and \"mean (SD), n %[1]s\" for a mean.", rowsWord)
		}
		higher := ""
		if i := slices.IndexFunc(ds, func(s descriptive) bool { return s.Higher }); i >= 0 {
			higher = fmt.Sprintf("; for a numeric predictor of two other values, the number with the higher value (%s)", mdText(ds[i].Label))
		}
		d.p("Each predictor in each outcome category: mean (SD) for a numeric predictor; for a 0/1 predictor and for each level of a categorical one, the number of observations with 1 (with that level)%s and their share of the category's observations.%s%s", higher, counted, weighted)
		head := []string{"Predictor"}
		for _, l := range lv {
			head = append(head, l)
		}
		head = append(head, "All")
		var counts [][]float64
		for _, s := range ds {
			counts = append(counts, s.N)
			if s.Counts {
				counts = append(counts, s.Ones)
			}
		}
		count := countText(counts, nil) // weighted counts to one decimal, all alike
		var rows [][]string
		for _, s := range ds {
			row := []string{s.Label}
			for c := range s.N {
				missing := s.N[c] != total[c]
				switch {
				case s.Counts && missing:
					row = append(row, fmt.Sprintf("%s of %s (%s%%)", count(s.Ones[c]), count(s.N[c]), numfmt.Fixed(100*s.Mean[c], 1)))
				case s.Counts:
					row = append(row, fmt.Sprintf("%s (%s%%)", count(s.Ones[c]), numfmt.Fixed(100*s.Mean[c], 1)))
				case missing:
					row = append(row, fmt.Sprintf("%s (%s), %s %s", numfmt.Summary(s.Mean[c]), numfmt.Summary(s.SD[c]), count(s.N[c]), rowsWord))
				default:
					row = append(row, fmt.Sprintf("%s (%s)", numfmt.Summary(s.Mean[c]), numfmt.Summary(s.SD[c])))
				}
			}
			rows = append(rows, row)
		}
		d.captioned("Predictors by outcome category").table(head, rows)
	}
	writeMissing(d, or)
}

// fewDFText says why a pooled estimate's degrees of freedom can be few:
// the complete-data degrees of freedom of clustered errors (g clusters),
// else few observations for the parameters.
func fewDFText(g int) string {
	if g > 0 {
		return fmt.Sprintf("here no more than about G-1 = %d, the complete-data degrees of freedom of %d clusters", g-1, g)
	}
	return "few observations for the parameters, or much missing information"
}

// categoryTotals are the observations (sum of weights, as describe weighs
// them) of each outcome category of ds, then of all: the rows a
// predictor observed in every row is summarized over.
func categoryTotals(ds *data.Dataset) []float64 {
	J := len(ds.Categories)
	out := make([]float64, J+1)
	for i, y := range ds.Y {
		w := 1.0
		if ds.Weights != nil {
			w = ds.Weights[i]
		}
		if w == 0 || y < 0 {
			continue
		}
		out[y] += w
		out[J] += w
	}
	return out
}

// describedData is the data the descriptive tables summarize: on imputed
// data the original file's observed values, otherwise the rows used.
func describedData(or *runner.OutcomeResult) *data.Dataset {
	if or.Observed != nil {
		return or.Observed
	}
	return or.Data
}

// sharePct writes a share of rows as a percentage with one decimal.
func sharePct(n, of int) string {
	if of == 0 {
		return "0.0%"
	}
	return numfmt.Fixed(100*float64(n)/float64(of), 1) + "%"
}

// missingRows counts the complete and the incomplete rows of the rows the
// missing-value table describes (or.Data.Missing, not nil): on imputed
// data those of the original data.
func missingRows(or *runner.OutcomeResult) (complete, incomplete int) {
	mt := or.Data.Missing
	complete = or.Data.N
	if or.Imputed != nil {
		complete = mt.Rows
		for _, p := range mt.Patterns {
			complete -= p.Rows
		}
	}
	return complete, mt.Rows - complete
}

// incompleteWords says how many rows miss a used column: "Of N rows, n
// (s%) miss at least one used column". The one wording of the count, in
// the Data section and in the Methods draft.
func incompleteWords(or *runner.OutcomeResult) string {
	mt := or.Data.Missing
	_, incomplete := missingRows(or)
	of := fmt.Sprintf("Of %d rows", mt.Rows)
	if or.AsRead().RowsOutside > 0 {
		of = fmt.Sprintf("Of the %d rows the subset does not exclude", mt.Rows)
	}
	return fmt.Sprintf("%s, %d (%s) miss at least one used column", of, incomplete, sharePct(incomplete, mt.Rows))
}

// missingByColumnWords lists the used columns with missing values and the
// rows that miss each, as the table of missing values per used column
// gives them: "`dose` 132 (18.3%) and `smoker` 55 (7.6%)".
func missingByColumnWords(mt *data.MissingTable) string {
	var cols []string
	for j, c := range mt.Columns {
		if mt.ByColumn[j] > 0 {
			cols = append(cols, fmt.Sprintf("%s %d (%s)", mdCode(c), mt.ByColumn[j], sharePct(mt.ByColumn[j], mt.Rows)))
		}
	}
	return words.AndList(cols)
}

// writeMissing writes the missingness of the used columns: per column,
// the joint patterns and by outcome category.
func writeMissing(d *doc, or *runner.OutcomeResult) {
	mt := or.Data.Missing
	if mt == nil {
		return
	}
	if len(mt.Patterns) == 0 {
		d.p("No used column (%s) has a missing value.", mdText(strings.Join(mt.Columns, ", ")))
		return
	}
	complete, incomplete := missingRows(or)
	if or.Imputed != nil {
		dropped := ""
		if obs := or.Observed; obs != nil && obs.Incomplete < incomplete {
			n := incomplete - obs.Incomplete
			dropped = fmt.Sprintf("; %d of them miss a column that imputation does not fill (weights, offset, cluster, or a column the subset's conditions read, without which whether the row belongs to the subset is unknown) and were dropped whole, as a complete-case analysis drops them (see Assumptions and limits), the %d others were imputed", n, obs.Incomplete)
		}
		d.p("Missing values in the columns the analysis uses, in the original data %s. %s%s; the analysis uses the %d imputed data sets instead (see Multiple imputation).",
			mdCode(originalFile(or)), incompleteWords(or), dropped, or.Imputed.M)
	} else {
		d.p("Missing values in the columns the analysis uses. %s; they were dropped before any fit, and the %d complete rows (%s) are analysed.",
			incompleteWords(or), complete, sharePct(complete, mt.Rows))
	}
	var rows [][]string
	for j, c := range mt.Columns {
		rows = append(rows, []string{md(mdCode(c)), fmt.Sprint(mt.ByColumn[j]), sharePct(mt.ByColumn[j], mt.Rows)})
	}
	d.captioned("Missing values per used column").table([]string{"Column", "Rows missing", "Share"}, rows)

	d.p("Each combination of used columns missing together and how many rows have it: an x in a column's cell marks that column missing in those rows; the last row is the complete rows.")
	head := append([]string{"Rows", "Share"}, mt.Columns...)
	rows = nil
	for _, p := range mt.Patterns {
		r := []string{fmt.Sprint(p.Rows), sharePct(p.Rows, mt.Rows)}
		for _, m := range p.Missing {
			if m {
				r = append(r, "x")
			} else {
				r = append(r, "")
			}
		}
		rows = append(rows, r)
	}
	rows = append(rows, append([]string{fmt.Sprint(complete), sharePct(complete, mt.Rows)}, make([]string, len(mt.Columns))...))
	d.captioned("Missing-value patterns of the used columns").table(head, rows)

	if len(mt.ByCategory) > 0 {
		var shown []int // columns other than the outcome with a missing value
		for j := 1; j < len(mt.Columns); j++ {
			if mt.ByColumn[j] > 0 {
				shown = append(shown, j)
			}
		}
		d.p("Rows of each outcome category that miss each other used column with missing values, and that miss any: count (share of the category's rows). Rows whose outcome is missing (%d) belong to no category.", mt.ByColumn[0])
		head = []string{"Category", "Rows"}
		for _, j := range shown {
			head = append(head, md(mdCode(mt.Columns[j])))
		}
		head = append(head, "Any")
		rows = nil
		for _, cm := range mt.ByCategory {
			r := []string{cm.Category, fmt.Sprint(cm.Rows)}
			for _, j := range shown {
				r = append(r, fmt.Sprintf("%d (%s)", cm.ByColumn[j], sharePct(cm.ByColumn[j], cm.Rows)))
			}
			r = append(r, fmt.Sprintf("%d (%s)", cm.Incomplete, sharePct(cm.Incomplete, cm.Rows)))
			rows = append(rows, r)
		}
		d.captioned("Missing values by outcome category").table(head, rows)
	}
	if or.Imputed != nil {
		return
	}
	d.p("Dropping incomplete rows (complete-case analysis) gives unbiased effects when the chance that a row is incomplete does not depend on the outcome once the predictors are taken into account; it loses precision whenever rows are dropped. Shares that differ between outcome categories suggest that missingness is related to the outcome, and call for an analysis of multiply imputed data as a check.")
}

// writeImputation states how imputed data were analysed: the method, the
// number of imputed sets, the fraction of missing information of the key
// estimates, and what imputation assumes.
// pooledTestsText says how the tests are pooled over the imputed sets;
// under sampling weights only Wald tests are tests, pooled by D1. g is
// the clusters of a cluster-robust covariance (0: none).
func pooledTestsText(sampling bool, g int) string {
	if sampling {
		return "Under sampling weights " + runner.SamplingPoolingText() + ". D1 (Li, Raghunathan and Rubin 1991) is an F test on k and v degrees of freedom, shown in the test tables as F(k, v) = F with the p-value of that F distribution; " + d1DenominatorText(g) + ". The plan's test rules use the pooled Wald tests."
	}
	return "Likelihood-ratio tests are pooled by the D3 statistic (Meng and Rubin 1992), Wald tests (of parallel lines and of the plan's hypotheses) by D1 (Li, Raghunathan and Rubin 1991); both are F tests on k and v degrees of freedom, shown in the test tables as F(k, v) = F with the p-values of those F distributions; " + d1DenominatorText(g) + ". The Brant test is pooled by D1 too, from the binary logits' stacked slopes and their joint covariance in each set; score and Wolfe-Gould tests, known only by their chi-square statistics, and the goodness-of-fit tests of the chosen model (Lipsitz, Pulkstenis-Robinson; each set's rows grouped by that set's own fit), by D2 (Li, Meng, Raghunathan and Rubin 1991), which is less powerful and only approximately calibrated. The plan's test rules use these pooled tests."
}

// pooledCriteriaText says what the log-likelihoods and criteria of the
// pooled fits are.
func pooledCriteriaText(sampling bool) string {
	if sampling {
		return "Log-likelihoods, AIC and BIC are means over the imputed sets of each set's pseudo-log-likelihood and its criteria: descriptive only; a rule on TIC compares the means over the sets of each set's TIC."
	}
	return "Log-likelihoods, AIC and BIC are means over the imputed sets: they are not the likelihood of one model, and rules on AIC or BIC compare these means; a rule on TIC compares the means over the sets of each set's TIC."
}

// d1DenominatorText says which denominator degrees of freedom D1 takes
// (impute.D1): the small-sample one for the complete-data degrees of
// freedom, under a cluster-robust covariance from g clusters (g > 0) with
// its statistic scaled as on one data set.
func d1DenominatorText(g int) string {
	if g > 0 {
		return fmt.Sprintf("D1's v is the small-sample denominator for a complete-data F test on G-k degrees of freedom, and its statistic is multiplied by (G-k)/(G-1) (G = %d clusters), as a cluster-robust Wald test of one data set is referred to F(k, G-k); with one restriction D1 is the square of the pooled estimate's t on its Barnard-Rubin degrees of freedom; D3 keeps its large-sample v (a likelihood-ratio test takes every observation as independent, as on one data set)", g)
	}
	return "D1's v is the small-sample denominator for a complete-data F test on the observations less the parameters; with one restriction D1 is the square of the pooled estimate's t on its Barnard-Rubin degrees of freedom"
}

// completeDFText says which complete-data degrees of freedom the
// Barnard-Rubin degrees of freedom of the pooled estimates adjust
// (runner's completeDF): G-1 under a cluster-robust covariance from g
// clusters of column cluster (g > 0), else the observations less the
// parameters.
func completeDFText(g int, cluster string) string {
	if g > 0 {
		return fmt.Sprintf("with the complete-data degrees of freedom taken as G-1 = %d, the clusters of %s less one, which a cluster-robust covariance of one data set refers its single estimates to", g-1, mdCode(cluster))
	}
	return "with the complete-data degrees of freedom taken as the observations less the parameters"
}

// pooledClusters is the number of clusters of the cluster-robust
// covariance of an outcome's fits pooled over imputed sets (0: the
// covariance is not cluster-robust).
func pooledClusters(or *runner.OutcomeResult) int {
	for _, f := range or.Fits {
		if f.OK() && f.Pooled != nil && f.Result.RefDF > 0 {
			return f.Result.Clusters
		}
	}
	return 0
}

func writeImputation(d *doc, or *runner.OutcomeResult, sampling bool, cluster string) {
	im := or.Imputed
	if im == nil {
		return
	}
	d.h(3, "Multiple imputation")
	g := pooledClusters(or)
	src := fmt.Sprintf("stacked in %s by the imputation number in column %s", mdCode(im.Files[0]), mdCode(im.Column))
	switch im.Source {
	case "files":
		src = "one file each: " + codeList(im.Files)
	case "chained":
		src = "imputed by this run from `" + im.Files[0] + "`, as described below"
	}
	d.p("Every model was fitted on each of the %d imputed data sets (%s; %d rows each) and the fits were pooled by Rubin's rules (Rubin 1987): the estimate is the mean over the sets, its variance the mean within-set variance plus (1 + 1/%d) times the between-set variance. The estimates tables show the pooled estimates with their total standard errors; their p-values and intervals, and those of the odds ratios and of the slopes across boundaries, refer to t on the degrees of freedom of Barnard and Rubin (1999), %s (the table below gives them for one model). %s The chosen model's marginal effects and its predictions for new rows are computed on each imputed set with that set's fit and rows, and pooled quantity by quantity by the same rules, with t-based intervals. %s",
		im.M, src, im.Rows, im.M, completeDFText(g, cluster), pooledTestsText(sampling, g), pooledCriteriaText(sampling))
	f := or.Chosen
	if f == nil || f.Pooled == nil {
		for _, c := range or.Fits {
			if !c.Auxiliary && c.Pooled != nil {
				f = c
				break
			}
		}
	}
	if f != nil && f.Pooled != nil {
		pl := f.Pooled
		var rows [][]string
		for j, n := range f.Result.ParamNames {
			w, b, _ := runner.PooledVariances(pl, j)
			rows = append(rows, []string{ParamLabel(f.Result, n), numfmt.Est(pl.Estimate[j]), numfmt.Est(math.Sqrt(w)), numfmt.Est(math.Sqrt(b)), numfmt.Est(pl.SE[j]), dfCell(runner.PooledDF(pl, j)), numfmt.Fixed(pl.RIV[j], 3), numfmt.Fixed(pl.Lambda[j], 3), numfmt.Fixed(pl.FMI[j], 3)})
		}
		d.p("The pooled estimates of %s with the within-set and between-set standard deviations, the total standard error, the degrees of freedom (df), the relative increase in variance due to missing values (RIV, (1 + 1/m) B/W, B the between-set and W the mean within-set variance), λ = (1 + 1/m) B/T, the share of the total variance T due to the missing values, and the fraction of missing information FMI = (RIV + 2/(df + 3))/(RIV + 1) = λ (df + 1)/(df + 3) + 2/(df + 3). FMI adds to λ a term for the finite degrees of freedom: where df are few (%s) it stays near 2/(df + 3) even for a parameter the sets agree on (B near 0), so it is not compared with the share of missing values. A λ well above the share of incomplete rows, or degrees of freedom below about 10, say that the number of imputed sets (%d) is too small for stable p-values.", f.ID, fewDFText(g), im.M)
		d.captioned("Pooling of "+f.ID).table([]string{"Parameter", "Estimate", "Within SD", "Between SD", "SE", "df", "RIV", "λ", "FMI"}, rows)
	}
	if im.Chained != nil {
		setsFile := ""
		if im.WritesSets() {
			setsFile = imputedSetsFile(or)
		}
		writeChained(d, im.Chained, im.Rows, or.Design, setsFile, cluster)
		return
	}
	d.p("%s The imputation model must include the outcome and every term of these models (their transformations and interactions too); otherwise the pooled effects are biased towards zero. %s", marWords, outsideImputationWords)
}

// The assumption of an analysis of imputed sets made outside ordplan, and
// what ordplan does not know of them: the report's section on multiple
// imputation and the Methods draft say it in these words.
const (
	marWords               = "Multiple imputation assumes that the values are missing at random given the variables used to impute them: whether a value is missing may depend on what was observed, not on the missing value itself."
	outsideImputationWords = "The imputed sets were made outside ordplan, so their imputation model is not known to ordplan and is not checked by it."
)

// importedMissingMethods is the Methods draft's account of the rows of
// imputed sets made outside ordplan: the incomplete rows of the original
// data, in all and by column (when the original data were read), and the
// rows of each set.
func importedMissingMethods(or *runner.OutcomeResult, within string) string {
	held := fmt.Sprintf("Each of the %d imputed data sets held %d rows%s, all used.", or.Imputed.M, or.Imputed.Rows, within)
	mt := or.Data.Missing
	if mt == nil {
		return held
	}
	by := ""
	if w := missingByColumnWords(mt); w != "" {
		by = ": " + w
	}
	return fmt.Sprintf("%s in the original data %s%s. %s", incompleteWords(or), mdCode(originalFile(or)), by, held)
}

// dfCell writes pooled degrees of freedom for a table: one decimal, or
// "inf" when the imputed sets agree.
func dfCell(df float64) string {
	if math.IsInf(df, 1) {
		return "inf"
	}
	return numfmt.Fixed(df, 1)
}

// originalFile names the data file whose missing values an imputed run
// describes: the original data (Observed), not the file of an imputed set.
func originalFile(or *runner.OutcomeResult) string {
	if or.Observed != nil && or.Observed.File != "" {
		return or.Observed.File
	}
	return or.Data.File
}
