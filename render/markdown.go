package render

import (
	"fmt"
	"slices"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"ordplan/internal/words"
	"ordplan/plan"
	"ordplan/plan/lock"
	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/fit"
)

// build writes the whole report of a run.
func build(r *runner.Result, dec *runner.Decisions, changes []string) *doc {
	d := &doc{}
	if r.Simulated != nil {
		d.mark = SimulatedMark
	}
	p := r.Plan
	d.h(1, mdText(reportTitle(r)))
	writeSimulated(d, r)
	writeRegistration(d, r)
	writeSimulatedHow(d, r)
	d.p("This report was written by ordplan %s from the plan %s (sha256 `%s`) and %s. The plan fixed the candidate models and the decision rules before the models were fitted%s; the same plan and data give this report byte for byte.",
		r.Version, mdCode(dec.Plan.File), p.Hash, dataSentence(r), asRun(r.Registration))
	if r.Started != "" {
		d.p("Run started at %s (the plan asks for a timestamp, so reruns differ in this line and in run.json).", r.Started)
	}
	d.toc()
	if len(changes) > 0 {
		d.h(2, "Changes since the previous run")
		d.list(words.Each(changes, mdText)) // names of columns, levels and models as text
	}
	writeSummary(d, r)
	writePlan(d, r)
	writeDictionary(d, r)
	writeGenerating(d, r)
	for _, or := range r.Outcomes {
		writeOutcome(d, r, or)
	}
	writeSensitivity(d, r)
	writeLimits(d, r)
	writeMethods(d, r)
	writeReproducibility(d, r)
	writeFilesSection(d, r)
	return d
}

// Markdown renders report.md.
func Markdown(r *runner.Result, dec *runner.Decisions, changes []string) []byte {
	return build(r, dec, changes).markdown()
}

func reportTitle(r *runner.Result) string {
	if r.Simulated != nil {
		return SimulatedMark + ": " + plainTitle(r)
	}
	return plainTitle(r)
}

func plainTitle(r *runner.Result) string {
	switch {
	case r.Plan.Report.Title != "":
		return r.Plan.Report.Title
	case r.Plan.Title != "":
		return r.Plan.Title
	}
	return "ordplan report"
}

// confidence returns the plan's confidence level and its normal quantile.
func confidence(r *runner.Result) (level, z float64) {
	level = r.Plan.Report.ConfidenceLevel
	if level <= 0 || level >= 1 {
		level = 0.95
	}
	return level, distuv.UnitNormal.Quantile(0.5 + level/2)
}

// confidenceOf returns the plan's confidence level and the quantile of the
// reference of quantities made from fit res's covariance (predictions):
// the normal's, or t's on G-1 degrees of freedom under the
// delete-one-cluster jackknife (fit.Result.ReferenceDF).
func confidenceOf(r *runner.Result, res *fit.Result) (level, q float64) {
	level, q = confidence(r)
	if res != nil {
		q = res.ReferenceQuantile(0.5+level/2, nil)
	}
	return level, q
}

// chosenConfidence is confidenceOf the outcome's chosen fit (the normal's
// quantile when none was chosen).
func chosenConfidence(r *runner.Result, or *runner.OutcomeResult) (level, q float64) {
	if or.Chosen == nil {
		return confidence(r)
	}
	return confidenceOf(r, or.Chosen.Result)
}

// unlinkedShort names the pairs of runner.ChainedRecord.Unlinked by their
// first clause ("y is missing in all 120 rows where g is w"), joined.
func unlinkedShort(unlinked []string) string {
	var out []string
	for _, u := range unlinked {
		first, _, _ := strings.Cut(u, ":")
		out = append(out, first)
	}
	return strings.Join(out, "; ")
}

// writeSummary says up front which model each outcome ended with.
func writeSummary(d *doc, r *runner.Result) {
	d.h(2, "Summary")
	var items []string
	for _, or := range r.Outcomes {
		item := fmt.Sprintf("**%s** (%s): %s.", mdText(or.Outcome.Label), mdCode(or.Outcome.Column), mdText(strings.TrimSuffix(or.Choice, ".")))
		if or.Chosen != nil {
			if s := negativeRows(or.Chosen.Result); s != "" {
				item += fmt.Sprintf(" **This model %s** (its cumulative probabilities cross; see the chosen model's section).", s)
			}
			item += pooledChoice(or)
			item += chosenChecks(r, or)
			item += summaryHypotheses(r, or)
		}
		if g := runner.ClusterCount(or.Data); r.Analysis != nil && r.Analysis.Errors.Covariance == fit.Clustered && g >= 2 && g < fit.FewClusters {
			if r.Analysis.Errors.Jackknife() {
				item += fmt.Sprintf(" **Its standard errors rest on %d clusters of %s, fewer than %d: they are the delete-one-cluster jackknife, with p-values and intervals from t on %d degrees of freedom and F(q, G-q), and joint Wald tests of more than %d restrictions are not computed** (see the notes under The models).", g, mdCode(r.Plan.Data.Cluster), fit.FewClusters, g-1, g-1)
			} else {
				item += fmt.Sprintf(" **Its cluster-robust standard errors rest on %d clusters of %s, fewer than %d: they tend to be too small even on t(G-1) and F(q, G-q) references, and joint Wald tests of more than %d restrictions are not computed** (see the notes under The models).", g, mdCode(r.Plan.Data.Cluster), fit.FewClusters, g-1)
			}
		}
		if im := or.Imputed; im != nil && im.Chained != nil && len(im.Chained.Unlinked) > 0 {
			item += fmt.Sprintf(" **Some of its imputed values no observed data inform** (%s): the estimates that involve them restate the imputation models, not the data (see Multiple imputation).", mdText(unlinkedShort(im.Chained.Unlinked)))
		}
		items = append(items, item)
	}
	if s := sensitivitySummary(r); s != "" {
		items = append(items, s)
	}
	d.list(items)
	chosen := 0
	for _, or := range r.Outcomes {
		if or.Chosen != nil {
			chosen++
		}
	}
	switch {
	case chosen == 0:
		d.p("The sections below give the data, every candidate model, the tests and each decision rule's verdict on each model; no model was chosen, so no estimates, predicted probabilities or marginal effects of a chosen model follow. report.html holds the same text with charts.")
	case chosen < len(r.Outcomes):
		d.p("The sections below give the data, every candidate model, the tests, each decision rule's verdict on each model, and then, for each outcome with a chosen model, its estimates, predicted probabilities and marginal effects. report.html holds the same text with charts.")
	default:
		d.p("The sections below give the data, every candidate model, the tests, each decision rule's verdict on each model, and then the chosen model's estimates, predicted probabilities and marginal effects. report.html holds the same text with charts.")
	}
}

// pooledTestWords names the test rules' tests and how each is pooled over
// imputed sets, by test kind (runner/pooledtests.go: likelihood ratios by D3, Wald
// and Brant tests by D1, score and Wolfe-Gould tests by D2).
var pooledTestWords = map[fit.TestKind]string{
	fit.TestLR:         "likelihood-ratio tests (D3)",
	fit.TestWald:       "Wald tests (D1)",
	fit.TestBrant:      "Brant tests (D1)",
	fit.TestScore:      "score tests (D2)",
	fit.TestWolfeGould: "Wolfe-Gould tests (D2)",
}

// pooledChoice says, for the Summary, that on imputed data the rules
// chose from the imputed sets taken together: the criteria they compared
// are means over the sets of each set's value, and the tests they read
// are pooled over the sets, so that no one set's fit made the choice; ""
// on data that were not imputed, or when no rule read a criterion or a
// test.
func pooledChoice(or *runner.OutcomeResult) string {
	if or.Imputed == nil {
		return ""
	}
	var criteria, tests []string
	for _, ro := range or.Rules {
		switch ro.Rule.Kind {
		case plan.RuleChoose, plan.RulePreferSimpler:
			if c := strings.ToUpper(ro.Rule.By); !slices.Contains(criteria, c) {
				criteria = append(criteria, c)
			}
		case plan.RuleRejectIfTestRejects:
			if w := pooledTestWords[ro.Rule.Test]; w != "" && !slices.Contains(tests, w) {
				tests = append(tests, w)
			}
		}
	}
	var read []string
	if len(criteria) > 0 {
		read = append(read, "compared "+words.AndList(criteria)+" averaged over the sets (the mean of each set's value)")
	}
	if len(tests) > 0 {
		read = append(read, "read "+words.AndList(tests)+" pooled over the sets")
	}
	if len(read) == 0 {
		return ""
	}
	return fmt.Sprintf(" This choice rests on the %d imputed sets taken together: the rules %s, so that no one set's fit made it (see Multiple imputation).", or.Imputed.M, strings.Join(read, " and "))
}

// summaryHypotheses gives, for the Summary, the plan's hypotheses as
// tested in the outcome's chosen model, the numbers of the table
// Hypotheses of the plan: the estimate and interval of a hypothesis of one
// restriction (on the model's scale), the test, its p-value and the
// adjusted one; "" when the plan has none.
func summaryHypotheses(r *runner.Result, or *runner.OutcomeResult) string {
	level, _ := confidence(r)
	var hs []string
	for _, h := range or.Hypotheses {
		if h.Model != or.Chosen.ID {
			continue
		}
		if !h.Test.OK {
			hs = append(hs, fmt.Sprintf("%s: not computed (%s)", mdCode(h.Text), mdText(strings.TrimSuffix(h.Test.Reason, "."))))
			continue
		}
		s := mdCode(h.Text) + ": "
		if len(h.Contrasts) == 1 {
			c := h.Contrasts[0]
			s += fmt.Sprintf("estimate %s (%s interval %s to %s), ", numfmt.Est(c.Estimate), pct(level), numfmt.Est(c.Low), numfmt.Est(c.High))
		}
		s += fmt.Sprintf("%s, %s", runner.TestStatistic(h.Test), numfmt.PText(h.Test.P))
		if h.Adjusted != nil {
			adj := map[string]string{"holm": "Holm", "benjamini_hochberg": "Benjamini-Hochberg"}[h.Adjustment]
			s += fmt.Sprintf(" (adjusted, %s: %s)", adj, numfmt.PText(*h.Adjusted))
		}
		hs = append(hs, s)
	}
	if len(hs) == 0 {
		return ""
	}
	return fmt.Sprintf(" The plan's hypotheses in this model (Wald tests, estimates on the model's scale, p-values that do not allow for the choice of the model; see Hypotheses of the plan): %s.", strings.Join(hs, "; "))
}

// chosenChecks says, for the Summary, which of the chosen model's own
// checks reject it at the report's alpha (tests.alpha): the nested
// likelihood-ratio tests in which it is the restricted model, and the
// goodness-of-fit tests (Lipsitz, Pulkstenis-Robinson); then what the
// plan's test rules tested it against, at their own alpha, which is all
// that entered the choice. A nested comparison that a likelihood-ratio
// rule made itself is not counted among the checks the choice did not
// use: it is said to be the rule's, at the rule's alpha. Under clustered
// errors or sampling weights the likelihood-ratio checks are qualified.
// "" when no check rejects it.
func chosenChecks(r *runner.Result, or *runner.OutcomeResult) string {
	alpha := r.Plan.Tests.Alpha
	// The test rules' verdicts on the chosen model, and the comparisons
	// the likelihood-ratio rules made (by the less constrained model).
	var rules []string
	var ruleAlphas []string
	madeBy := map[string]bool{}
	for _, ro := range or.Rules {
		if ro.Rule.Kind != plan.RuleRejectIfTestRejects {
			continue
		}
		for _, v := range ro.Verdicts {
			if v.Model != or.Chosen.ID {
				continue
			}
			verdict := "kept"
			if !v.Kept {
				verdict = "rejected"
			}
			rules = append(rules, fmt.Sprintf("`%s` (plan line %d) tests a model against %s only, as the rule says, at its alpha %g, and %s it: %s", ro.Rule.Kind, ro.Rule.Line, againstWords(ro.Rule.Against), ro.Rule.Alpha, verdict, strings.TrimSuffix(v.Reason, ".")))
			if a := fmt.Sprintf("%g", ro.Rule.Alpha); ro.Rule.Alpha != alpha && !slices.Contains(ruleAlphas, a) {
				ruleAlphas = append(ruleAlphas, a)
			}
			if ro.Rule.Test != fit.TestLR {
				continue
			}
			for _, tb := range or.Tests {
				for _, nt := range tb.Nested {
					if _, ok := v.Numbers[runner.NumberKey("p against "+nt.Full)]; ok && nt.Restricted == or.Chosen.ID {
						madeBy[nt.Full] = true
					}
				}
			}
		}
	}
	var rejects, ruleMade []string
	lrShown := false
	add := func(list *[]string, what string, t fit.Test) bool {
		if t.OK && t.P < alpha {
			*list = append(*list, fmt.Sprintf("%s (%s, %s)", what, runner.TestStatistic(t), numfmt.PText(t.P)))
			return true
		}
		return false
	}
	for _, tb := range or.Tests {
		for _, nt := range tb.Nested {
			if nt.Restricted != or.Chosen.ID {
				continue
			}
			list := &rejects
			if madeBy[nt.Full] {
				list = &ruleMade
			}
			lrShown = add(list, "the nested likelihood-ratio test against "+nt.Full, nt.Test) || lrShown
		}
	}
	if or.Lipsitz != nil {
		add(&rejects, "the Lipsitz goodness-of-fit test", or.Lipsitz.Test)
	}
	if ps := or.PatternSplit; ps != nil && ps.PatternSplit != nil {
		add(&rejects, "the Pulkstenis-Robinson Pearson test", ps.Pearson)
		add(&rejects, "the Pulkstenis-Robinson deviance test", ps.Deviance)
	}
	if len(rejects) == 0 && len(ruleMade) == 0 {
		return ""
	}
	ruleAlpha := ""
	if len(ruleAlphas) > 0 {
		ruleAlpha = "; the test rule used " + strings.Join(ruleAlphas, " and ")
	}
	out := ""
	if len(rejects) > 0 {
		out = fmt.Sprintf(" **Checks of this model shown in the report reject it at the report's alpha %g%s:** %s.", alpha, ruleAlpha, strings.Join(rejects, "; "))
	}
	switch {
	case len(rules) > 0 && len(rejects) > 0:
		out += fmt.Sprintf(" The choice did not use them: the plan's test rule %s.", strings.Join(rules, "; and "))
	case len(rules) > 0:
		out += fmt.Sprintf(" The plan's test rule %s.", strings.Join(rules, "; and "))
	default:
		out += " No rule of the plan uses these tests, so they did not enter the choice."
	}
	if len(ruleMade) > 0 {
		out += fmt.Sprintf(" At the report's alpha %g %s also rejects it; the test rule made that comparison itself, at its own alpha%s.", alpha, strings.Join(ruleMade, " and "), strings.TrimPrefix(ruleAlpha, "; the test rule used"))
	}
	if a := r.Analysis; lrShown && a != nil && (a.Errors.Covariance == fit.Clustered || a.Errors.Sampling) {
		out += " The likelihood-ratio tests take the rows as independent: with clustered errors or sampling weights they reject too often when observations are alike within a cluster or the weights matter, so their p-values are too small."
	}
	return out + " Read the estimates with this in mind."
}

// againstWords names what a test rule compares each model with.
func againstWords(against string) string {
	switch against {
	case plan.AgainstNext:
		return "the nearest less constrained model"
	case plan.AgainstEach:
		return "each less constrained model of its approach and link"
	}
	return "the least constrained model of its approach and link"
}

// errorsCell is the plan table's standard errors: the plan's value, and
// what the fits used when the covariance policy replaced it (a sandwich
// under sampling weights).
func errorsCell(r *runner.Result) string {
	asked := r.Plan.Covariance.String()
	if r.Analysis == nil {
		return asked
	}
	if used := r.Analysis.Errors.Covariance.String(); used != asked {
		return fmt.Sprintf("%s in the plan; %s used, as sampling weights require", asked, used)
	}
	if r.Analysis.Errors.Jackknife() {
		return asked + ", few_clusters: jackknife (delete-one-cluster jackknife; t on G-1 degrees of freedom, F(q, G-q))"
	}
	return asked
}

func writePlan(d *doc, r *runner.Result) {
	p := r.Plan
	d.h(2, "The plan")
	rows := [][]string{
		{"Predictors", strings.Join(p.Predictors, ", ")},
		{"Approaches", joinWords(p.Models.Approaches) + stageDirection(r)},
		{"Effect structures", joinWords(p.Models.Effects)},
		{"Links", joinWords(p.Models.Links)},
		{"Parallel-lines tests", joinWords(p.Tests.ParallelLines) + fmt.Sprintf(" (alpha %g)", p.Tests.Alpha)},
		{"Standard errors", errorsCell(r)},
		{"Missing values", p.Data.Missing},
	}
	if p.Models.Partial.Select != nil {
		s := p.Models.Partial.Select
		rows = append(rows, []string{"Partial set", fmt.Sprintf("selected by %s (%s tests, alpha %g)", s.Method, s.Test, s.Alpha)})
	} else if len(p.Models.Partial.Free) > 0 {
		rows = append(rows, []string{"Partial set", strings.Join(p.Models.Partial.Free, ", ")})
	}
	if p.Data.Weights != "" {
		rows = append(rows, []string{"Weights", p.Data.Weights + " (" + p.Data.WeightKind + ")"})
	}
	if p.Data.Offset != "" {
		rows = append(rows, []string{"Offset", p.Data.Offset})
	}
	rows = append(rows, []string{"Focus predictor", focusName(r)})
	level, _ := confidence(r)
	rows = append(rows, []string{"Confidence level", fmt.Sprintf("%g%%", 100*level)})
	d.table([]string{"Setting", "Value"}, rows)
	d.p("Decision rules, applied in this order:")
	for i, rule := range p.Rules {
		fmt.Fprintf(&d.b, "%d. `%s` (plan line %d)\n", i+1, rule.Kind, rule.Line)
	}
	d.b.WriteString("\n")
	// The run's notes, names escaped and the plan's hypotheses as code.
	for _, n := range r.RunNotes(mdText, mdCode) {
		d.p("%s", n)
	}
}

func stageDirection(r *runner.Result) string {
	if r.Plan.Models.HasApproach(fit.Stage) {
		return " (stage direction: " + r.Plan.Models.Direction + ")"
	}
	return ""
}

// rowsSentence says on which rows the models were compared and what that
// assumes of the missing values: imputed sets (missing at random), rows
// dropped (a complete-case analysis), or no missing value at all.
func rowsSentence(r *runner.Result) string {
	dropped := false
	for _, or := range r.Outcomes {
		if or.Imputed != nil {
			s := "Information criteria and tests compare models on the same rows: every model was fitted on each complete imputed set. Pooled standard errors and tests assume that the values are missing at random given the columns of the imputation models, and include the uncertainty due to the missing values only as far as the imputation model is right."
			if leftOutWhole(r) {
				s += " Rows missing a column that imputation does not fill (weights, offset, cluster, or a column the subset's conditions read) were dropped whole, as a complete-case analysis drops them (the Data section counts them): the estimates can be biased unless missing those is unrelated to the outcome given the predictors."
			}
			return s
		}
		if mt := or.Data.Missing; mt != nil && len(mt.Patterns) > 0 {
			dropped = true
		}
	}
	if dropped {
		return "Information criteria and tests compare models on the same rows; rows with a missing value in a used column were dropped before any model was fitted (a complete-case analysis; the Data section counts them). Its estimates can be biased unless being incomplete is unrelated to the outcome given the predictors, and they use none of the information in the dropped rows."
	}
	return "Information criteria and tests compare models on the same rows; no used column had a missing value in the rows analysed."
}

// leftOutWhole reports whether some outcome's rows were dropped on
// imputed data this run made: rows missing a column imputation does not
// fill (writeMissing counts them).
func leftOutWhole(r *runner.Result) bool {
	for _, or := range r.Outcomes {
		if or.Imputed == nil || or.Imputed.Chained == nil || or.Observed == nil || or.Data.Missing == nil {
			continue
		}
		if _, incomplete := missingRows(or); or.Observed.Incomplete < incomplete {
			return true
		}
	}
	return false
}

// independenceSentence states what each model assumes, and what the
// standard errors the run used do and do not allow for: with
// cluster-robust errors, correlation within clusters, which the
// likelihood-ratio and other likelihood-based tests and the criteria still
// ignore; with a sandwich, a wrong variance.
func independenceSentence(r *runner.Result) string {
	shape := "that the link function is right, and that the predictors enter as the plan's terms state them (linearly, or through the stated coding of categorical predictors, transformations, polynomials, splines and interactions); a relation of another shape is not found by the model."
	var pol runner.CovariancePolicy
	if r.Analysis != nil {
		pol = r.Analysis.Errors
	}
	switch {
	case pol.Covariance == fit.Clustered:
		g := 0
		for _, or := range r.Outcomes {
			g = max(g, runner.ClusterCount(or.Data))
		}
		how := "cluster-robust sandwich"
		if pol.Jackknife() {
			how = "delete-one-cluster jackknife"
		}
		s := fmt.Sprintf("Each model's likelihood treats the observations as independent given the predictors; it assumes %s The standard errors, intervals, Wald tests and the plan's hypotheses come from a covariance estimated with the clusters as units (%s): they allow for correlation within the %d clusters of %s, provided the clusters are independent of one another, but that covariance is itself estimated from only %d clusters, so a single estimate refers to t on G-1 = %d degrees of freedom and a joint Wald test of q restrictions to F(q, G-q), which leaves such a test little power when q is not small against G and no test when q reaches G; and a model with more than G-1 = %d parameters has a singular cluster-robust covariance. The likelihood-ratio, score, Brant and Wolfe-Gould tests and AIC and BIC do not use that covariance: they take every observation as independent, which holds their level when the clusters do not matter and makes them reject too often when observations of a cluster are alike.", shape, how, g, mdCode(r.Plan.Data.Cluster), g, g-1, g-1)
		switch {
		case g < fit.FewClusters && pol.Jackknife():
			s += fmt.Sprintf(" With %d clusters (fewer than about %d) the cluster-robust sandwich tends to be too small; the jackknife with t and F references, which the plan asks for, keeps the rejection rates of true hypotheses nearer their level, though not exactly at it.", g, fit.FewClusters)
		case g < fit.FewClusters:
			s += fmt.Sprintf(" With %d clusters (fewer than about %d) the cluster-robust errors themselves tend to be too small.", g, fit.FewClusters)
		}
		return s
	case pol.Sampling:
		return "Each model is fitted to the sampling-weighted rows as a pseudo-likelihood, the weights rescaled to sum to the rows used (their scale is arbitrary; the estimates and sandwich errors do not depend on it, and the log-likelihoods, AIC, BIC and TIC are on the scale of the sample); it assumes " + shape + " The sandwich standard errors, intervals and Wald tests treat the rows as independent draws with these weights (no strata, and no clusters unless clustered errors are asked for); " + runner.SamplingTestsText() + ". Errors of average marginal effects carry only the parameters' uncertainty, not the sampling variation of the average."
	case pol.Covariance.IsSandwich() && !pol.Sampling:
		return "Each model assumes that observations are independent given the predictors, " + shape + " The sandwich standard errors, intervals and Wald tests stay valid when the variance the model implies is wrong; the likelihood-ratio, score, Brant and Wolfe-Gould tests and AIC and BIC do not."
	}
	return "Each model assumes that observations are independent given the predictors, " + shape
}

func writeLimits(d *doc, r *runner.Result) {
	d.h(2, "Assumptions and limits")
	items := []string{
		causationSentence(r.Plan),
		independenceSentence(r),
		boundariesSentence(r, "Tests of the parallel-lines assumption reject easily in large samples: a small p-value can reflect a difference between boundaries too small to matter in practice. Look at the effects across boundaries before giving up a simpler model."),
		boundariesSentence(r, "Cumulative partial and nonparallel models can predict negative category probabilities for some covariate values (their cumulative probabilities cross). The number of rows of the data where this happens is shown for every model, and predictions on the grid of the focus predictor are checked too; predictions outside the observed covariate range are more exposed."),
		startsSentence(r),
		rowsSentence(r),
		selectionSentence(r),
		hypothesisChoiceSentence(r),
		chosenSentence(r, "Standard errors of predicted probabilities and marginal effects use the delta method: they are first-order approximations."),
		fewPerParameterSentence(r),
		multiplicitySentence(r),
		limitIf(len(r.Sensitivity) > 0, sensitivityLimit(r)),
		limitIf(len(r.Sensitivity) == 0, removedSensitivityNote(r)),
		earlierLooksSentence(r),
	}
	d.list(slices.DeleteFunc(items, func(s string) bool { return s == "" }))
}

// causationSentence says what the models show of causes: association
// only, unless the dictionary says a predictor was assigned to the units by
// chance (assigned_by_chance), whose comparison then has a causal reading
// under the trial's conditions while the other predictors' do not.
func causationSentence(p *plan.Plan) string {
	chance := p.ByChanceColumns()
	if len(chance) == 0 {
		return "The models describe how the outcome is associated with the predictors in these data. They do not show that a predictor causes a change in the outcome; neither do the predicted probabilities or the marginal effects, which are summaries of the same fitted association."
	}
	var code, others []string
	for _, c := range chance {
		code = append(code, mdCode(c))
	}
	for _, c := range p.SourceColumns() {
		if !slices.Contains(chance, c) {
			others = append(others, mdCode(c))
		}
	}
	verb, whose := "was", "its values"
	if len(chance) > 1 {
		verb, whose = "were", "the values of each"
	}
	s := fmt.Sprintf("%s %s assigned to the units by chance (the plan's dictionary says so, with assigned_by_chance). The comparison of %s (in the models, and in their predicted probabilities and marginal effects) has a causal reading under the conditions of the trial: if the assignment was made and kept as planned and the outcome was recorded alike in every group (or is missing at random), it estimates what the assignment itself changed in the outcome, for units like those that took part and under the trial's conditions, not beyond them.",
		words.AndList(code), verb, whose)
	if len(others) == 0 {
		return s
	}
	s += " That reading is of the comparison given the other predictors in the models, and holds only if they were measured before the assignment: a predictor the assignment could itself have changed would take up part of its effect."
	s += " " + conditionalWords(len(chance) > 1)
	s += fmt.Sprintf(" The other predictors (%s) were not assigned by chance: the models describe how the outcome is associated with them in these data, which does not show that they cause a change in it; neither do their predicted probabilities or marginal effects, which are summaries of the same fitted association.", words.AndList(others))
	if interactsWithChance(p, chance) {
		s += " Where the effect of an assignment differs with another predictor (an interaction), that describes for whom the assignment changed the outcome more or less, not what the other predictor causes."
	}
	return s
}

// conditionalWords says that the slopes of a term assigned by chance,
// with other predictors in the models, are effects given them, which the
// population-averaged effect need not equal even without confounding.
func conditionalWords(several bool) string {
	its, effect := "Its", "the assignment's effect"
	if several {
		its, effect = "Their", "each assignment's effect"
	}
	return its + " slopes (on the scale of the model's link: log odds under the logit link) are effects given those predictors: such effects do not collapse, so " + effect + " on the same scale averaged over the whole population is usually nearer 0 (under the logit link, an odds ratio nearer 1), even though the assignment was made by chance; the average marginal effects, where reported, are effects on each category's probability averaged over the rows used."
}

// interactsWithChance reports whether an interaction of the plan joins a
// term read from a column assigned by chance.
func interactsWithChance(p *plan.Plan, chance []string) bool {
	source := map[string]string{}
	terms := slices.Clone(p.Terms)
	for _, o := range p.Outcomes {
		terms = append(terms, o.Terms...)
	}
	for _, t := range terms {
		source[t.Name] = t.Source
	}
	for _, t := range terms {
		for _, n := range t.Interact {
			if slices.Contains(chance, source[n]) {
				return true
			}
		}
	}
	return false
}

// selectionSentence is the caveat on selection: the chosen models'
// errors leave out the uncertainty of the choice the rules (and any
// stepwise search) made on the same data; when every outcome with a chosen
// model had one candidate and no stepwise search, no choice was made and
// the sentence says so; "" when no model was chosen.
func selectionSentence(r *runner.Result) string {
	chosen, chose := false, false
	for _, or := range r.Outcomes {
		if or.Chosen == nil {
			continue
		}
		chosen = true
		candidates := 0
		for _, f := range or.Fits {
			if !f.Auxiliary {
				candidates++
			}
		}
		chose = chose || candidates > 1 || r.Plan.Models.Partial.Select != nil
	}
	switch {
	case !chosen:
		return ""
	case !chose:
		return "The plan's one candidate model was not selected among others, so its standard errors, p-values and intervals leave out no uncertainty of a choice between models; they rest on its form (link, terms, effect structure) being right."
	}
	s := "The chosen model's standard errors, p-values and intervals (of its estimates, predicted probabilities and marginal effects) treat it as fixed in advance, not as the result of the selection made by the rules, and of any stepwise choice of partial effects, on the same data: they leave out the uncertainty of that selection, so intervals tend to be too narrow and p-values too small."
	if r.Plan.SelectionStability != nil {
		s += " The section on the stability of the model choice shows, by bootstrap resamples, how often the same rules choose the same model and reject the hypotheses on data like these; it measures that uncertainty, it does not remove it from the intervals."
	}
	return s
}

// chosenSentence is s when some outcome has a chosen model (whose
// estimates, predictions and marginal effects the report shows), "" when
// none has.
func chosenSentence(r *runner.Result, s string) string {
	for _, or := range r.Outcomes {
		if or.Chosen != nil {
			return s
		}
	}
	return ""
}

// fewPerParameter is the number of observations per parameter of a chosen
// model below which the limits say that its large-sample inference is
// rough (the number the example plan's reject_if_sparse asks for).
const fewPerParameter = 10

// fewPerParameterSentence says, of each outcome whose chosen model has
// fewer than fewPerParameter observations per parameter (the observations
// as the fit counts them: the rows, or the sum of frequency weights), that
// its errors, tests and intervals rest on approximations so few
// observations support poorly; "" when there is none. A plan without a
// reject_if_sparse rule chose such a model without a word.
func fewPerParameterSentence(r *runner.Result) string {
	var parts []string
	for _, or := range r.Outcomes {
		ch := or.Chosen
		if ch == nil || ch.Result == nil || ch.Result.NParams == 0 {
			continue
		}
		res := ch.Result
		per := res.NObs / float64(res.NParams)
		if per >= fewPerParameter {
			continue
		}
		parts = append(parts, fmt.Sprintf("%s of %s has %d parameters for %s observations (%s per parameter)",
			mdText(ch.ID), mdCode(or.Outcome.Column), res.NParams, numfmt.Num(res.NObs), numfmt.Num(per)))
	}
	if len(parts) == 0 {
		return ""
	}
	model, its := "The chosen model ", "Its"
	if len(parts) > 1 {
		model, its = "The chosen models: ", "Their"
	}
	return model + words.AndList(parts) + fmt.Sprintf(", fewer than %d. %s standard errors, tests, p-values and intervals rest on large-sample approximations that so few observations per parameter support poorly: the slopes of maximum likelihood then tend to lie too far from 0 and the intervals to be too narrow; read them as rough. A rule `reject_if_sparse: {per_parameter: %d}` makes such a model rejected, so that a simpler one (or none) is chosen.", fewPerParameter, its, fewPerParameter)
}

// boundariesSentence is s when some outcome has more than two categories
// (more than one boundary), "" when every outcome is binary and s does not
// apply.
func boundariesSentence(r *runner.Result, s string) string {
	for _, or := range r.Outcomes {
		if !binary(or) {
			return s
		}
	}
	return ""
}

// multiplicitySentence says, when the plan's hypotheses make more than one
// test in the chosen models (of one outcome or of several) and the plan
// adjusts none for multiplicity, that their p-values are each read alone;
// "" otherwise. The tests counted are those an adjustment would take: each
// hypothesis tested in its outcome's chosen model.
func multiplicitySentence(r *runner.Result) string {
	if m := r.Plan.Inference.Multiplicity; m != "" && m != plan.MultiplicityNone {
		return ""
	}
	tests, outcomes := 0, 0
	for _, or := range r.Outcomes {
		n := 0
		for i := range or.Hypotheses {
			if or.InFamily(&or.Hypotheses[i]) {
				n++
			}
		}
		tests += n
		if n > 0 {
			outcomes++
		}
	}
	if tests < 2 {
		return ""
	}
	of := "the chosen model"
	if outcomes > 1 {
		of = fmt.Sprintf("the chosen models of %d outcomes", outcomes)
	}
	return fmt.Sprintf("The plan's hypotheses make %d tests in %s, whose p-values are not adjusted for multiplicity (inference.multiplicity: none): each test holds its level on its own, and the chance that at least one rejects although none of the hypotheses is false can be larger than that level, up to %d times it (holm or benjamini_hochberg would adjust them). The other tests of this report (parallel lines, overall fit, goodness of fit) are not adjusted either.", tests, of, tests)
}

// startsSentence says how the searches from several starts were run:
// every start to its end (models.run_every_start), or with starts
// abandoned early, screened first on an approximation when the data have
// more rows than the fits' screening threshold; "" when the plan has no
// constrained or stereotype models (the plan key is refused without them).
func startsSentence(r *runner.Result) string {
	mo := r.Plan.Models
	if !mo.HasEffects(fit.ConstrainedEffects) && !mo.HasEffects(fit.StereotypeEffects) {
		return ""
	}
	s := "Constrained (common-factor) and stereotype models can have several local maxima; ordplan fits them from several starting points and keeps the best."
	if mo.RunEveryStart {
		return s + " With `models.run_every_start` every start was run to its end, none abandoned early."
	}
	opt := fit.Options{}
	if r.Analysis != nil {
		opt = r.Analysis.Fit
	}
	above, screened := opt.ScreenRows(), false
	for _, or := range r.Outcomes {
		if or.FitData != nil && or.FitData.N() > above {
			screened = true
		}
	}
	s += " A start that shows it cannot reach the best log-likelihood found so far is abandoned early, so a count of starts reaching the best counts only the starts run to it"
	if screened {
		s += fmt.Sprintf("; with more than %d rows, as here, the starts are first screened on a quadratic approximation of the log-likelihood around the corresponding unconstrained fit, and, with the logit link in stage and adjacent models, some are abandoned on the approximation alone when, after an allowance for its error, it puts them out of reach of the best.", above)
	} else {
		s += fmt.Sprintf(" (with more than %d rows, not the case here, the starts would first be screened on a quadratic approximation of the log-likelihood around the corresponding unconstrained fit).", above)
	}
	return s + " `models.run_every_start: true` runs every start to its end (slower; for checking the search)."
}

// joinWords lists words of a vocabulary, comma separated.
func joinWords[T fmt.Stringer](xs []T) string {
	out := make([]string, len(xs))
	for i, x := range xs {
		out[i] = x.String()
	}
	return strings.Join(out, ", ")
}

// dataSentence names the data of a run with their hash: the data file, or
// the parts (each part's hash is in run.json and decisions.json).
func dataSentence(r *runner.Result) string {
	if r.DataParts == nil {
		return fmt.Sprintf("the data file %s (sha256 `%s`)", mdCode(r.Plan.Data.File), r.DataHash)
	}
	return fmt.Sprintf("the data held as %d parts read as one data set, %s (sha256 of the parts' sha256s `%s`; each part's in run.json)",
		len(r.DataParts), partList(r), r.DataHash)
}

// partList names the parts of a run's data, the first and last of many.
func partList(r *runner.Result) string {
	var names []string
	for _, p := range r.DataParts {
		names = append(names, mdCode(p.File))
	}
	if len(names) > 6 {
		names = append(names[:3], "...", names[len(names)-1])
	}
	return strings.Join(names, ", ")
}

// asRun qualifies "the plan fixed the candidate models and the decision
// rules" for a plan that departs from its registered form: the plan so
// fixed is the one run, not the one registered.
func asRun(st *lock.Status) string {
	if st == nil || st.State != lock.StateDeviations && st.State != lock.StateUnexplained {
		return ""
	}
	return fmt.Sprintf(" (the plan as run, which departs from its registered form in %s, listed above)", words.Count(len(st.Changes), "key", "keys"))
}
