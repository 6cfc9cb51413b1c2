package render

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"ordplan/runner"
	"ordplan/runner/fit"
)

// The report's tables as CSV files with full-precision numbers, one set per
// outcome, for reuse in other software. Each file is listed, with what it
// holds, in the report and with its hash in run.json.

// csvFile is one table file of an outcome.
type csvFile struct {
	name  string // file name
	about string // what it holds, for the report
	data  []byte
}

// csvNum writes a number with up to 12 significant digits; a value that
// does not exist is an empty cell.
func csvNum(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return ""
	}
	if x == 0 {
		return "0"
	}
	return strconv.FormatFloat(x, 'g', 12, 64)
}

// csvShare writes n/of, or 0 when of is 0.
func csvShare(n, of int) string {
	if of == 0 {
		return "0"
	}
	return csvNum(float64(n) / float64(of))
}

// csvStat is a test's statistic in a CSV table: the chi-square, or on
// imputed data (imputed) a pooled test's F statistic, empty for a test
// there that is not pooled (the note gives its chi-square).
func csvStat(t fit.Test, imputed bool) string {
	switch {
	case !imputed:
		return csvNum(t.Chi2)
	case t.Pooled != "":
		return csvNum(t.Chi2 / float64(t.DF))
	}
	return ""
}

// csvDF writes degrees of freedom in a CSV table: "inf" when infinite
// (a t or F reference that is the normal or the chi-square), empty when
// not a number. The one writer of every df and df2 cell.
func csvDF(x float64) string {
	if math.IsInf(x, 1) {
		return "inf"
	}
	return csvNum(x)
}

// csvDFOf is csvDF of the degrees of freedom of a pooled quantity, which
// its record leaves nil when they are infinite (runner.PoolingParam).
func csvDFOf(df *float64) string {
	if df == nil {
		return csvDF(math.Inf(1))
	}
	return csvDF(*df)
}

// csvDF2 is the denominator degrees of freedom of a test referred to an F
// distribution: a test pooled over imputed sets (its record's DF2 0 when
// infinite: "inf") or a Wald test on a cluster-robust covariance (FRef);
// empty for a chi-square test, which has none.
func csvDF2(t fit.Test) string {
	switch {
	case t.Pooled != "" && t.DF2 <= 0:
		return csvDF(math.Inf(1))
	case t.Pooled != "" || t.FRef:
		return csvDF(t.DF2)
	}
	return ""
}

func csvBytes(head []string, rows [][]string) []byte {
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	w.Write(head)
	w.WriteAll(rows) // flushes; writing to a buffer does not fail
	return b.Bytes()
}

// tableFiles returns the CSV tables of one outcome, in a fixed order.
func tableFiles(r *runner.Result, or *runner.OutcomeResult) []csvFile {
	o := outcomePart(or.Outcome.Column)
	level, _ := confidence(r)
	var out []csvFile
	add := func(kind, about string, head []string, rows [][]string) {
		if rows == nil {
			rows = [][]string{}
		}
		out = append(out, csvFile{name: fmt.Sprintf("table-%s-%s.csv", kind, o), about: about, data: csvBytes(head, rows)})
	}

	// Predictors by outcome category.
	var rows [][]string
	for _, s := range describe(describedData(or), sourceLevels(or)) {
		for c := range s.N {
			cat := "all"
			if c < len(or.Data.Categories) {
				cat = or.Data.Categories[c]
			}
			row := []string{s.Label, cat, csvNum(s.N[c])}
			if s.Counts {
				row = append(row, csvNum(s.Ones[c]), csvNum(s.Mean[c]), "", "")
			} else {
				row = append(row, "", "", csvNum(s.Mean[c]), csvNum(s.SD[c]))
			}
			rows = append(rows, row)
		}
	}
	about := "each predictor (each level of a categorical one) by outcome category"
	if or.Observed != nil {
		about += ", over the observed values of the original data (each predictor where it and the outcome are observed)"
	}
	add("descriptives", about, []string{"predictor", "category", "n", "count", "share", "mean", "sd"}, rows)

	// Missing values.
	if mt := or.Data.Missing; mt != nil {
		rows = nil
		for j, c := range mt.Columns {
			rows = append(rows, []string{c, "all", strconv.Itoa(mt.Rows), strconv.Itoa(mt.ByColumn[j]), csvShare(mt.ByColumn[j], mt.Rows)})
		}
		for _, cm := range mt.ByCategory {
			for j := 1; j < len(mt.Columns); j++ {
				rows = append(rows, []string{mt.Columns[j], cm.Category, strconv.Itoa(cm.Rows), strconv.Itoa(cm.ByColumn[j]), csvShare(cm.ByColumn[j], cm.Rows)})
			}
			rows = append(rows, []string{"(any)", cm.Category, strconv.Itoa(cm.Rows), strconv.Itoa(cm.Incomplete), csvShare(cm.Incomplete, cm.Rows)})
		}
		add("missing", "missing values of each used column, over all rows and by outcome category (column (any): rows missing at least one)",
			[]string{"column", "category", "rows", "missing", "share"}, rows)
		rows = nil
		for _, p := range mt.Patterns {
			r := []string{strconv.Itoa(p.Rows), csvShare(p.Rows, mt.Rows)}
			for _, m := range p.Missing {
				r = append(r, map[bool]string{true: "1", false: "0"}[m])
			}
			rows = append(rows, r)
		}
		r := []string{strconv.Itoa(or.Data.N), csvShare(or.Data.N, mt.Rows)}
		for range mt.Columns {
			r = append(r, "0")
		}
		rows = append(rows, r)
		add("missing-patterns", "each combination of used columns missing together (1 = missing) and its rows; the last line is the complete rows",
			append([]string{"rows", "share"}, mt.Columns...), rows)
	}

	// Every candidate fit with its overall fit. On imputed data every test
	// is an F test on two degrees of freedom (csvStat).
	imputed := or.Imputed != nil
	lrHead := []string{"lr_chi2", "lr_df", "lr_p"}
	if imputed {
		lrHead = []string{"lr_f", "lr_df", "lr_df2", "lr_p"}
	}
	rows = nil
	for _, f := range or.Fits {
		if f.Auxiliary {
			continue
		}
		row := []string{f.ID, f.Verdict}
		if f.Result == nil {
			row = append(row, "not fitted", "", "", "", "", "")
			rows = append(rows, append(row, make([]string, 5+len(lrHead))...))
			continue
		}
		res := f.Result
		if !res.MaximumKnown() {
			// No finite maximum: no log-likelihood, criteria or
			// predictions to count, as the report's table of models says.
			row = append(row, string(res.Status), "", strconv.Itoa(res.NParams), "", "", "")
			rows = append(rows, append(row, make([]string, 5+len(lrHead))...))
			continue
		}
		row = append(row, string(res.Status), csvNum(res.LogLik), strconv.Itoa(res.NParams), csvNum(res.AIC), csvNum(res.BIC), strconv.Itoa(res.NegativeRows))
		if ov := or.OverallOf(f.ID); ov != nil {
			lr := make([]string, len(lrHead))
			if ov.LR.OK {
				lr = []string{csvStat(ov.LR, imputed), strconv.Itoa(ov.LR.DF), csvNum(ov.LR.P)}
				if imputed {
					lr = slices.Insert(lr, 2, csvDF2(ov.LR))
				}
			}
			row = append(row, csvNum(ov.NullLogLik))
			row = append(row, lr...)
			row = append(row, csvNum(ov.McFadden), csvNum(ov.CoxSnell), csvNum(ov.Nagelkerke), csvNum(ov.McKelveyZavoina))
		} else {
			row = append(row, make([]string, 5+len(lrHead))...)
		}
		rows = append(rows, row)
	}
	about = "every candidate model: status, log-likelihood, criteria, likelihood-ratio test against its thresholds-only model, pseudo-R2"
	if imputed && slices.ContainsFunc(or.Overall, func(o runner.OverallRecord) bool { return o.LR.Pooled != "" }) {
		about += " (on imputed data the test is pooled by D3: lr_f its F statistic on lr_df and lr_df2 degrees of freedom, lr_df2 inf when infinite, lr_p from that F distribution; log-likelihoods, criteria and pseudo-R2 are means over the sets)"
	} else if imputed {
		about += " (on imputed data log-likelihoods, criteria and pseudo-R2 are means over the sets; lr_f, lr_df2 and lr_p are empty: the statistic is not a test here)"
	}
	add("models", about,
		append(append([]string{"model", "verdict", "status", "loglik", "n_params", "aic", "bic", "rows_negative_probability", "null_loglik"}, lrHead...), "mcfadden_r2", "cox_snell_r2", "nagelkerke_r2", "mckelvey_zavoina_r2"), rows)

	// Estimates of every usable candidate.
	rows = nil
	stat := "z"
	if or.Imputed != nil {
		stat = "t" // pooled: t on the Barnard-Rubin degrees of freedom (refStat)
	}
	for _, f := range or.Fits {
		if f.Auxiliary || !f.OK() {
			continue
		}
		res := f.Result
		for i, n := range res.ParamNames {
			inf := res.ParamInference(i, level)
			row := []string{f.ID, f.Verdict, ParamLabel(res, n), csvNum(res.Estimates[i]), csvNum(res.StdErrors[i]), csvNum(inf.Stat),
				csvNum(inf.P), csvNum(inf.Low), csvNum(inf.High)}
			if or.Imputed != nil {
				row = append(row, csvDF(inf.DF))
			}
			if clusterRef(res) {
				stat = "t"
				row = append(row, csvDF(res.RefDF))
			}
			rows = append(rows, row)
		}
	}
	lv := fmt.Sprintf("%g", 100*level)
	about = "the estimates of every usable candidate model with standard errors, " + stat + ", p and " + lv + "% intervals"
	head := []string{"model", "verdict", "parameter", "estimate", "std_error", stat, "p", "low_" + lv, "high_" + lv}
	if or.Imputed != nil {
		head = append(head, "df")
		about += ", pooled over the imputed sets (t is the estimate over its standard error; p and the intervals from t on df, the Barnard-Rubin degrees of freedom" + pooledCSVDF(or) + "; df inf when infinite)"
	} else if stat == "t" {
		head = append(head, "df")
		about += " (t: the estimate over its standard error, p and the intervals from t on df = G-1 degrees of freedom, G the clusters of the cluster-robust covariance)"
	}
	if r.Analysis != nil && r.Analysis.Errors.Jackknife() {
		about += "; standard errors from the delete-one-cluster jackknife"
	}
	add("estimates", about, head, rows)

	// Odds ratios of the chosen model.
	if or.Chosen != nil && or.Chosen.OK() && or.Chosen.Result.Model.Link == fit.Logit {
		res := or.Chosen.Result
		if tab, err := runner.OddsRatios(res, or.ColumnReadings(), level); err == nil {
			rows = nil
			withDF := or.Imputed != nil || refStat(res) == "t" // as the estimates' df
			for _, x := range tab.Rows {
				b := ""
				if x.Boundary > 0 {
					b = res.Categories[x.Boundary-1] + "/" + res.Categories[x.Boundary]
				}
				row := []string{or.Chosen.ID, x.Predictor, x.Change, x.HoldsAt, strconv.Itoa(x.Boundary), b, x.Kind, csvNum(x.Log), csvNum(x.LogSE), csvNum(x.Ratio), csvNum(x.Low), csvNum(x.High)}
				if withDF {
					row = append(row, csvDF(x.DF))
				}
				rows = append(rows, row)
			}
			about := "exp(b) of the chosen model with " + lv + "% intervals (boundary 0: the same at every boundary; change: what one unit of the column is; holds_at: where the terms the column's term interacts with have their columns at 0)"
			head := []string{"model", "predictor", "change", "holds_at", "boundary", "categories", "kind", "log_estimate", "log_se", "ratio", "low_" + lv, "high_" + lv}
			if withDF {
				head = append(head, "df")
				if or.Imputed != nil {
					about += "; pooled over the imputed sets, the intervals exp(log_estimate -+ t log_se) with t the quantile of t on df, the Barnard-Rubin degrees of freedom of the column's slope in table-estimates" + pooledCSVDF(or) + " (for a constrained predictor the smallest among the parameters involved; df inf when infinite)"
				} else {
					about += "; the intervals exp(log_estimate -+ t log_se) with t the quantile of t on df = G-1 degrees of freedom, G the clusters of the cluster-robust covariance"
				}
			}
			if len(tab.Omitted) > 0 {
				about += "; the columns of " + strings.Join(tab.Omitted, ", ") + " (polynomial or spline bases, or terms sharing a data column with another term) have no odds ratio of their own and are left out"
			}
			add("odds-ratios", about, head, rows)
		}
	}

	// Tests: parallel lines, nested, overall, goodness of fit, hypotheses.
	rows = nil
	testsHead := []string{"family", "approach", "link", "scope", "test", "chi2", "df", "p", "note"}
	testsAbout := "every test of the report: parallel lines, nested likelihood ratios, each model against its thresholds-only model, the Lipsitz and Pulkstenis-Robinson tests, the plan's hypotheses, the tests of each term of the chosen model"
	if imputed {
		testsHead = []string{"family", "approach", "link", "scope", "test", "f", "df", "df2", "p", "note"}
		testsAbout += "; on imputed data each test is pooled over the sets (D1, D2 or D3, in note): f its F statistic on df and df2 degrees of freedom (df2 inf when infinite), p from that F distribution; p empty where note says there is none (a D2 statistic below zero set to 0)"
	}
	testRow := func(family, approach, link, scope string, t fit.Test) {
		row := []string{family, approach, link, scope, t.Name}
		if !t.OK && !(t.Negative && t.Pooled != "") { // a pooled statistic below zero keeps its row
			rows = append(rows, append(append(row, make([]string, len(testsHead)-6)...), t.Reason))
			return
		}
		note := ""
		if t.Pooled != "" {
			note = "pooled over imputed sets (" + t.Pooled + ")"
		} else if imputed {
			note = fmt.Sprintf("not pooled: chi2 = %s on df", csvNum(t.Chi2))
		}
		if t.Warning != "" {
			note += "; " + t.Warning
		}
		if t.Negative { // the statistic kept, p empty
			note = strings.TrimPrefix(note+"; "+t.Reason, "; ")
		}
		if t.FRef {
			note = fRefNote(t)
		}
		row = append(row, csvStat(t, imputed), strconv.Itoa(t.DF))
		if imputed {
			row = append(row, csvDF2(t))
		}
		rows = append(rows, append(row, csvNum(t.P), note))
	}
	for _, tb := range or.Tests {
		approach := blockApproach(r.Plan.Models.Backward(), tb.Approach)
		for _, t := range tb.Global {
			testRow("parallel_lines", approach, tb.Link.String(), "all predictors", t)
		}
		for _, vt := range tb.PerVariable {
			for _, t := range vt.Tests {
				testRow("parallel_lines", approach, tb.Link.String(), vt.Predictor, t)
			}
		}
		for _, nt := range tb.Nested {
			testRow("nested_lr", approach, tb.Link.String(), nt.Restricted+" within "+nt.Full, nt.Test)
		}
	}
	for _, ov := range or.Overall {
		testRow("lr_vs_thresholds_only", "", "", ov.Model, ov.LR)
	}
	if or.Lipsitz != nil && or.Chosen != nil {
		testRow("goodness_of_fit", "", "", or.Chosen.ID, or.Lipsitz.Test)
	}
	if ps := or.PatternSplit; ps != nil && ps.PatternSplit != nil && or.Chosen != nil {
		testRow("goodness_of_fit", "", "", or.Chosen.ID, ps.Pearson)
		testRow("goodness_of_fit", "", "", or.Chosen.ID, ps.Deviance)
	}
	for _, h := range or.Hypotheses {
		testRow("hypothesis", "", "", h.Model+": "+h.Text, h.Test)
	}
	for _, tt := range or.TermTests {
		testRow("term", "", "", or.Chosen.ID+": "+tt.Term, tt.Wald)
		testRow("term", "", "", or.Chosen.ID+": "+tt.Term, tt.LR)
	}
	add("tests", testsAbout, testsHead, rows)

	// The decision log: first the models no rule saw (order 0), then
	// each rule's verdicts.
	rows = nil
	for _, f := range unusableFits(or) {
		rows = append(rows, []string{"0", "before_rules", "", f[0], "false", f[1]})
	}
	for i, ro := range or.Rules {
		for _, v := range ro.Verdicts {
			rows = append(rows, []string{strconv.Itoa(i + 1), ro.Rule.Kind, strconv.Itoa(ro.Rule.Line), v.Model, strconv.FormatBool(v.Kept), v.Reason})
		}
	}
	add("decision-log", "each decision rule's verdict on each model, rules in plan order (order 0: the models no rule saw, not fitted or without a covariance)", []string{"order", "rule", "plan_line", "model", "kept", "reason"}, rows)

	if or.Chosen == nil || !or.Chosen.OK() {
		return out
	}
	if len(or.TermTests) > 0 {
		about := "the Wald and likelihood-ratio tests of each term of the chosen model (tested_with: the interactions containing the term, tested with it, or for a row column COL every term reading that data column; restricted_model: the refit without them; note: why a test was not computed)"
		if imputed {
			about = strings.TrimSuffix(about, ")") + "; on imputed data f is the pooled F statistic on df and df2 degrees of freedom, df2 inf when infinite, p from that F distribution)"
		}
		if or.Chosen.Result.RefDF > 0 && or.Chosen.Result.DF == nil {
			about = strings.TrimSuffix(about, ")") + "; on the cluster-robust covariance of G clusters a Wald chi2 is referred as chi2 (G-df)/((G-1) df) to F(df, df2), df2 = G-df, and note says so)"
		}
		add("term-tests", about, termTestHead(imputed), termTestRows(or))
	}
	// Marginal effects.
	if len(or.Marginal) > 0 {
		rows = nil
		mstat := refStat(or.Chosen.Result)
		head := []string{"kind", "predictor", "change", "category", "discrete_change", "effect", "std_error", mstat, "p", "low_" + lv, "high_" + lv}
		about := "marginal effects of the chosen model with " + lv + "% intervals"
		if or.Imputed != nil {
			head = append(head, "df", "fmi")
			about += ", pooled over the imputed sets (t: the effect over its standard error, p and the intervals from t on df, the Barnard-Rubin degrees of freedom" + pooledCSVDF(or) + "; df inf when infinite)"
		} else if mstat == "t" {
			head = append(head, "df")
			about += " (t: the effect over its standard error, p and the intervals from t on df = G-1 degrees of freedom, G the clusters of the cluster-robust covariance)"
		}
		for _, set := range or.Marginal {
			for e, me := range set.Effects {
				row := []string{set.Kind, me.Predictor, me.Change, me.Category, strconv.FormatBool(me.Discrete), csvNum(me.Effect), csvNum(me.SE), csvNum(me.Z), csvNum(me.P), csvNum(me.Low), csvNum(me.High)}
				if or.Imputed == nil && mstat == "t" {
					row = append(row, csvDF(or.Chosen.Result.RefDF))
				}
				if or.Imputed != nil {
					row = append(row, "", "")
					if e < len(set.Pooling) {
						pp := set.Pooling[e]
						row[len(row)-2] = csvDFOf(pp.DF)
						row[len(row)-1] = csvNum(pp.FMI)
					}
				}
				at, outside := "", ""
				if set.Point != nil {
					at = pointList(or, set.Point)
					outside = strconv.FormatBool(set.Kind == "profile" && len(or.ProfileOutside) > 0)
				}
				rows = append(rows, append(row, at, outside))
			}
		}
		head = append(head, "at", "at_outside")
		about += "; at: the point of effects at the means or at the plan's profile (every column the predictors read; a column holding only 0 and 1 whose value there lies between 0 and 1 is held at its mean, the share of rows at 1, a value no row has: the average effects are the reading to prefer for 0/1 predictors); at_outside: true where that point is the plan's profile and it lies outside the population the model was fitted to (why: decisions.json's profile_outside and the report; the means are inside by construction)"
		add("marginal-effects", about, head, rows)
	}
	if len(or.LevelPairs) > 0 {
		pairStat := "z"
		if or.Imputed != nil {
			pairStat = "t"
		}
		about := "comparisons between every pair of levels of the categorical predictors of inference.level_pairs in the chosen model with " + lv + "% intervals: differences of average marginal effects (change a to b: the probability with the predictor at b less that at a, averaged over the rows used) and odds ratios of one level against another (estimate: the ratio; std_error and " + pairStat + ": of its log; boundary 0: the same at every boundary); adjusted_p: the p-value adjusted within the predictor's pairs for one category or at one boundary, by the correction column adjustment names (holm, benjamini_hochberg, or none: adjusted_p empty; inference.level_pairs.multiplicity)"
		if slices.ContainsFunc(or.LevelPairs, func(set runner.LevelPairSet) bool { return len(set.AtPoints) > 0 }) {
			about += "; effect_at_means, effect_at_profile: the difference of the probabilities predicted with the predictor at b and at a at one point, the other predictors at the point of the marginal effects at the means or at the plan's profile (table-marginal-effects, column at), p-values adjusted within the pairs for one category at that point"
		}
		if or.Imputed != nil {
			about += "; pooled over the imputed sets (t: the estimate, of an odds ratio its log, over its standard error, p and the intervals from t on df, the Barnard-Rubin degrees of freedom" + pooledCSVDF(or) + ", for an odds ratio the smallest among the parameters involved; df inf when infinite)"
		} else if refStat(or.Chosen.Result) == "t" {
			about += "; t: the estimate (of an odds ratio, its log) over its standard error, p and the intervals from t on df = G-1 degrees of freedom, G the clusters of the cluster-robust covariance"
		}
		add("level-pairs", about, []string{"predictor", "kind", "change", "category", "boundary", "estimate", "std_error", refStat(or.Chosen.Result), "p", "adjusted_p", "adjustment", "low_" + lv, "high_" + lv, "df"}, levelPairsCSV(or))
	}
	// Predicted probabilities over the focus predictor, every panel.
	if kind, about, head, rows, ok := predictedCSV(r, or, lv); ok {
		add(kind, about, head, rows)
	}
	// The calibration table.
	if lz := or.Lipsitz; lz != nil && lz.Table != nil {
		t := lz.Table
		rows = nil
		for g := 0; g < t.Groups; g++ {
			for j, l := range t.Categories {
				rows = append(rows, []string{strconv.Itoa(g + 1), csvNum(t.Low[g]), csvNum(t.High[g]), csvNum(t.Weight[g]), l, csvNum(t.Observed[g][j]), csvNum(t.Expected[g][j])})
			}
		}
		add("calibration", "observed and expected counts of each category by group of predicted score", []string{"group", "score_low", "score_high", "n", "category", "observed", "expected"}, rows)
	}
	// The table of the Pulkstenis-Robinson tests.
	if ps := or.PatternSplit; ps != nil && ps.PatternSplit != nil {
		t := ps.PatternSplit
		rows = nil
		for g := 0; g < t.Groups; g++ {
			for j, l := range t.Categories {
				rows = append(rows, []string{t.Pattern[g], t.Half[g], csvNum(t.Weight[g]), l, csvNum(t.Observed[g][j]), csvNum(t.Expected[g][j])})
			}
		}
		add("patterns", "observed and expected counts of each category by covariate pattern of the categorical predictors and half of predicted score (Pulkstenis-Robinson tests)", []string{"pattern", "half", "n", "category", "observed", "expected"}, rows)
	}
	// The chosen model under each sensitivity analysis.
	if kind, about, head, rows, ok := sensitivityCSV(r, or, level, lv); ok {
		add(kind, about, head, rows)
	}
	// The decision procedure over bootstrap resamples (selection_stability).
	if head, rows, ok := stabilityCSV(or); ok {
		about := "the model choice over the bootstrap resamples of selection_stability:"
		if simulatedDraw(or.Stability) {
			about = "the model choice over the sets of outcomes selection_stability (draw: chosen_model) simulated from the chosen model at the rows used, where a resample is a simulated set:"
		}
		add("stability", about+" what is chosen (each model), none_chosen or failed, redrawn (resamples for which a draw lacking a category or level of the data was set aside and another drawn; only when some were), rejected_by_rule (rule number and kind, model; for the last rule, not chosen) or hypothesis_rejected (in the model chosen in the resample, with the percentile interval of the estimate of a single restriction); count (resamples) of of (all resamples), share, its Monte Carlo standard error mc_se, primary_choice true for the primary analysis's choice", head, rows)
	}
	return out
}

// predictedCSV is the table of predicted probabilities over the focus
// predictor at chartPoints values, one block of rows per panel of
// report.panels_by (its column first, naming the panel's level or its
// value, 0 or 1), as the report's panels show them; ok is false when no
// prediction is made.
func predictedCSV(r *runner.Result, or *runner.OutcomeResult, lv string) (kind, about string, head []string, rows [][]string, ok bool) {
	by, panels := predictionPanels(r, or)
	_, z := chosenConfidence(r, or)
	var focus, held string
	for _, p := range panels {
		pf, err := newProfile(or, focusName(r), p.fixed)
		if err != nil {
			return "", "", nil, nil, false
		}
		xs := pf.grid(chartPoints)
		pred, err := pf.predict(or.Chosen.Result, xs)
		if err != nil {
			return "", "", nil, nil, false
		}
		focus, held = pf.focus, pf.HeldShort()
		// The focus's values as the data file holds numbers (csvNum), so
		// that each row names the point it was predicted at; levels as
		// the report shows them.
		labels := pf.Labels(xs)
		if !pf.Categorical {
			for i, x := range xs {
				labels[i] = csvNum(x)
			}
		}
		for i := range xs {
			for j := 0; j < pred.J; j++ {
				pr, se := pred.Prob[i*pred.J+j], pred.SE[i*pred.J+j]
				lo, hi := fit.ProbInterval(pr, se, z)
				row := []string{labels[i], or.Data.Categories[j], csvNum(pr), csvNum(se), csvNum(lo), csvNum(hi)}
				if by != "" {
					row = append([]string{p.level}, row...)
				}
				rows = append(rows, row)
			}
		}
	}
	head = []string{focus, "category", "probability", "std_error", "low_" + lv, "high_" + lv}
	where := ""
	if held != "" {
		where = " (" + held + ")"
	}
	about = fmt.Sprintf("predicted probabilities of the chosen model over %s%s", focus, where)
	if by != "" {
		head = append([]string{by}, head...)
		about = fmt.Sprintf("predicted probabilities of the chosen model over %s, one panel per level of %s (report.panels_by; column %s: the level it is held at)%s", focus, by, by, where)
		if _, zeroOne := or.PanelValues(by); zeroOne {
			about = fmt.Sprintf("predicted probabilities of the chosen model over %s, one panel for each of the values 0 and 1 of %s (report.panels_by; column %s: the value it is held at)%s", focus, by, by, where)
		}
	}
	about += fmt.Sprintf(" with delta-method standard errors and %s%% intervals made on the log-odds scale of the probability (inside 0 and 1; empty for a negative probability)", lv)
	return "predicted", about, head, rows, true
}

// writeFilesSection lists the files of the run in the report.
// pooledCSVDF says, in a CSV file's description, which complete-data
// degrees of freedom the Barnard-Rubin degrees of freedom of an outcome
// analysed on imputed data adjust under a cluster-robust covariance (" for
// complete-data degrees of freedom G-1 = 23 (...)"), or "".
func pooledCSVDF(or *runner.OutcomeResult) string {
	for _, f := range or.Fits {
		if f.OK() && f.Result.DF != nil && f.Result.RefDF > 0 {
			return fmt.Sprintf(" for complete-data degrees of freedom G-1 = %s (G the clusters of the cluster-robust covariance)", csvNum(f.Result.RefDF))
		}
	}
	return ""
}

func writeFilesSection(d *doc, r *runner.Result) {
	d.h(2, "Files of this run")
	d.p("Beside this report, the run wrote these files (their SHA-256 hashes are in run.json). Tables are CSV with a header line, numbers to 12 significant digits, an empty cell where a value does not exist.")
	if r.Simulated != nil {
		d.p("Made from simulated data, every table below (and the predictions file) has a last column %s reading %s in every row, after the columns a run on real data writes, and every figure's title and every chart's title in report.html (and so its PNG and SVG exports) begins with a line %s.", mdCode(simulatedColumn), SimulatedMark, SimulatedMark)
	}
	rows := [][]string{
		{"report.md, report.html", "this report (Markdown with SVG figures; HTML with interactive charts)"},
		{"decisions.json", "every fit, test and verdict in machine-readable form"},
		{"run.json", "what produced the outputs: program, plan, data (with a summary and fingerprints of each column used, which a rerun with --previous compares), seed, environment, command line and the hash of every file"},
	}
	for _, or := range r.Outcomes {
		for _, f := range tableFiles(r, or) {
			rows = append(rows, []string{f.name, f.about})
		}
		if or.NewRows != nil && or.NewRows.Pred != nil {
			rows = append(rows, []string{predictionsFile(or), "predictions of the chosen model for the plan's new rows"})
		}
		if ir := or.Imputed; ir != nil && ir.WritesSets() {
			rows = append(rows, []string{imputedSetsFile(or), md(fmt.Sprintf("the %d completed data sets the fits of %s used (data.imputation.write_sets), one after another: imputed_set numbers them, data_line is the row's line in the data file, then the outcome and the columns its terms read, categories and levels as the data write them, numbers to the digits that read back exactly; split by imputed_set to analyse each set", ir.M, mdCode(or.Outcome.Column)))})
		}
	}
	d.captioned("Files written by this run").table([]string{"File", "Content"}, rows)
}

// fRefNote is the note of a table row whose Wald statistic (chi2) is made
// on a cluster-robust covariance of G clusters: its p-value is that of
// F = chi2 (G-df)/((G-1) df) on F(df, G-df) ("" for any other test).
func fRefNote(t fit.Test) string {
	if !t.FRef {
		return ""
	}
	return fmt.Sprintf("Wald statistic on a cluster-robust covariance of G = %s clusters: p from %s at F = chi2 (G-df)/((G-1) df) = %s", csvNum(t.DF2+float64(t.DF)), t.Reference, csvNum(t.F))
}
