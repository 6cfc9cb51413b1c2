package render

import (
	"fmt"
	"slices"
	"sort"
	"strings"

	"ordplan/plan"
	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/fit"
)

// writeChosen writes the estimates of the chosen model.
func writeChosen(d *doc, r *runner.Result, or *runner.OutcomeResult) {
	res := or.Chosen.Result
	level, _ := confidence(r)
	if or.Fallback {
		d.h(3, "The chosen model: "+or.Chosen.ID+" (the plan's fallback)")
		d.p("Every candidate was rejected by the rules; this is the fallback model the plan named for that case, not a model that passed the rules. Read its estimates with the rejections in the decision log in mind.")
	} else {
		d.h(3, "The chosen model: "+or.Chosen.ID)
	}
	d.p("Log-likelihood %s, %d parameters, AIC %s, BIC %s, %s observations. Linear predictor of boundary m: L_m = tau[m] - x'b_m; a positive slope moves the outcome towards higher categories.",
		numfmt.Fixed(res.LogLik, 4), res.NParams, numfmt.Fixed(res.AIC, 3), numfmt.Fixed(res.BIC, 3), numfmt.Num(res.NObs))
	if s := negativeRows(res); s != "" {
		d.p("**Warning:** this model %s: its cumulative probabilities cross inside the data, so for those rows it is not a probability distribution over the categories.%s Its estimates, predicted probabilities and marginal effects come from a model that is not a valid probability model for those rows; read them with care.", s, negativeRule(r, or))
	}
	if n := res.CollinearNote(mdCode); n != "" {
		d.p("**Warning:** %s.", n)
	}
	grouped := or.Design != nil && !or.Design.Trivial()
	// A column whose name does not spell its level is followed by the
	// level, as declared.
	levels := map[string]string{}
	for _, c := range or.ColumnReadings() {
		if l := unspelledLevel(c); l != "" {
			levels[c.Column] = l
		}
	}
	var rows [][]string
	for _, i := range paramOrder(res.ParamNames, or, grouped) {
		n := res.ParamNames[i]
		inf := res.ParamInference(i, level)
		label := ParamLabel(res, n)
		if col, _, _ := strings.Cut(n, "["); levels[col] != "" {
			label += " (" + levels[col] + ")"
		}
		row := []string{label, numfmt.Est(res.Estimates[i]), numfmt.Est(res.StdErrors[i]), numfmt.Z(inf.Stat),
			numfmt.PValue(inf.P), numfmt.Est(inf.Low), numfmt.Est(inf.High)}
		if grouped {
			row = append([]string{termOfParam(or, n)}, row...)
		}
		rows = append(rows, row)
	}
	stat := refStat(res)
	if clusterRef(res) {
		if res.Correction == fit.Jackknife {
			d.p("Standard errors from the delete-one-cluster jackknife over %d clusters: each p-value and interval refers to t on G-1 = %s degrees of freedom, not to the normal (few clusters; few_clusters: jackknife).", res.Clusters, numfmt.Num(res.RefDF))
		} else {
			d.p("Standard errors from the cluster-robust sandwich over %d clusters: each p-value and interval refers to t on G-1 = %s degrees of freedom, not to the normal (the covariance is estimated from the %d clusters' sums).", res.Clusters, numfmt.Num(res.RefDF), res.Clusters)
		}
	}
	if w := notEstimableWarning(or.Chosen.ID, res); w != "" {
		d.p("%s", w)
	}
	if why := res.SingularClustered(); why != "" {
		d.p("**Warning:** %s, %s: some combinations of its estimates have no estimated variance, no joint test of G or more restrictions can be made from it, and its errors, intervals and tests rest on few clusters.", or.Chosen.ID, why)
	}
	if res.DF != nil {
		stat = "t"
		d.p("Pooled over the imputed sets: each p-value and interval refers to t on the estimate's Barnard-Rubin degrees of freedom (column df of the table Pooling of %s)%s, as Rubin's rules prescribe, not to the normal.", or.Chosen.ID, pooledClusterDF(res))
	}
	head := []string{"Parameter", "Estimate", "Std. error", stat, "p", pct(level) + " low", pct(level) + " high"}
	if grouped {
		head = append([]string{"Term"}, head...)
	}
	d.captioned("Estimates of the chosen model, "+or.Chosen.ID).table(head, rows)
}

// notEstimableWarning is the paragraph that says which standard errors of
// fit res (model id) are not estimable under clustered errors and why
// (fit.NotEstimable), or "" when there are none: above the table of the
// chosen model's estimates, and below the table of its odds ratios when
// that has n/a intervals.
func notEstimableWarning(id string, res *fit.Result) string {
	n := res.NotEstimableNote(mdCode)
	if n == "" {
		return ""
	}
	return fmt.Sprintf("**Warning:** in %s, %s.", id, n)
}

// negativeRows says, for a fit that predicts a negative category
// probability for some rows of the data, for how many ("predicts a
// negative category probability for 12 of 400 rows used"); "" for any
// other fit.
func negativeRows(res *fit.Result) string {
	if res == nil || res.NegativeRows == 0 {
		return ""
	}
	return fmt.Sprintf("predicts a negative category probability for %d of %d rows used", res.NegativeRows, res.NRows)
}

// negativeRule says why the rules let such a fit through: the sentence
// that goes with negativeRows, with its leading space ("" when nothing
// needs saying).
func negativeRule(r *runner.Result, or *runner.OutcomeResult) string {
	for _, rule := range r.Plan.Rules {
		if rule.Kind == plan.RuleRejectNegativeProbabilities {
			if or.Fallback {
				return " The plan's rule reject_negative_probabilities rejects such fits; this one is reported only as the plan's fallback."
			}
			return ""
		}
	}
	return " The plan has no reject_negative_probabilities rule, so its rules did not rule such fits out."
}

// termOfParam names the term a parameter belongs to: the term of its
// design column, or "" for thresholds and common factors.
func termOfParam(or *runner.OutcomeResult, name string) string {
	col, _, _ := strings.Cut(name, "[")
	for _, t := range or.Terms {
		if slices.Contains(t.Columns, col) {
			return t.Name
		}
	}
	return ""
}

// paramOrder lists the parameters with those of one term together, in
// the order of the terms (thresholds and others first, as fitted).
func paramOrder(names []string, or *runner.OutcomeResult, grouped bool) []int {
	idx := make([]int, len(names))
	for i := range idx {
		idx[i] = i
	}
	if !grouped {
		return idx
	}
	rank := func(i int) int {
		t := termOfParam(or, names[i])
		for k, term := range or.Terms {
			if term.Name == t {
				return k + 1
			}
		}
		return 0
	}
	sort.SliceStable(idx, func(a, b int) bool { return rank(idx[a]) < rank(idx[b]) })
	return idx
}

// pct writes a confidence level as a percentage: "95%".
func pct(level float64) string { return fmt.Sprintf("%g%%", 100*level) }
