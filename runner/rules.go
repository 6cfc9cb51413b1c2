package runner

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"ordplan/plan"
	"ordplan/render/numfmt"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// ruleEnv is what the rules read besides the fits' numbers: predicted
// probabilities, Takeuchi's criterion, tests between two fits and the
// labels of a column. The run fills it from the data; tests over hand-made
// results replace the functions.
type ruleEnv struct {
	an *Analysis
	or *OutcomeResult
	// probs gives a fit's category probabilities (n x J) at rows X
	// (n x K) with offsets off (nil: none).
	probs func(f *FitEntry, X, off []float64) ([]float64, error)
	// tic gives a fit's TIC and its penalty tr(A^-1 B).
	tic func(f *FitEntry) (float64, float64, error)
	// test computes the named test of restricted against full.
	test func(kind fit.TestKind, restricted, full *FitEntry) fit.Test
	// labels gives, for each row used, the value of a data column.
	labels func(col string) ([]string, error)

	// nums collects the numbers of the verdict being made.
	nums map[string]float64
	// rejectedBy gives, for a candidate an earlier rule rejected, that
	// rule's number (1-based, as the report numbers the rules) and kind.
	rejectedBy map[*FitEntry]string

	probCache map[string][]float64
	ticCache  map[*FitEntry][3]float64
}

func newRuleEnv(an *Analysis, or *OutcomeResult) *ruleEnv {
	env := &ruleEnv{an: an, or: or, probCache: map[string][]float64{}, ticCache: map[*FitEntry][3]float64{}}
	env.probs = func(f *FitEntry, X, off []float64) ([]float64, error) { return f.Result.Probabilities(X, off) }
	env.tic = func(f *FitEntry) (float64, float64, error) {
		if or.Imputed != nil {
			return pooledTIC(or, f, an.Errors.Sampling)
		}
		return fit.TIC(or.FitData, f.Result, an.Errors.Sampling)
	}
	var brant *fit.BrantResult
	env.test = func(kind fit.TestKind, f, full *FitEntry) fit.Test {
		if or.Imputed != nil {
			return pooledPairTest(or, kind, f, full)
		}
		if kind == fit.TestBrant && brant == nil {
			brant = fit.Brant(or.FitData, an.Fit)
		}
		return pairTest(kind, or.FitData, brant, f, full)
	}
	env.labels = func(col string) ([]string, error) { return columnLabels(or, col) }
	return env
}

// applyRules runs the plan's rules in order over the candidate fits.
func applyRules(an *Analysis, or *OutcomeResult) { newRuleEnv(an, or).apply() }

func (env *ruleEnv) apply() {
	or := env.or
	var alive []*FitEntry
	for _, f := range or.Fits {
		if f.Auxiliary {
			continue
		}
		f.Verdict = "kept"
		if f.Err != "" || f.Result == nil {
			f.Verdict = "rejected"
			f.Rejected = "could not be fitted: " + f.Err
			if f.Result != nil {
				f.Rejected = "fitted, but its covariance could not be computed: " + f.Err
			}
			continue
		}
		alive = append(alive, f)
	}
	env.rejectedBy = map[*FitEntry]string{}
	for i, r := range env.an.Rules {
		ro := &RuleOutcome{Rule: r, Description: env.an.DescribeRule(r)}
		or.Rules = append(or.Rules, ro)
		if r.Final() {
			env.choose(r, alive, ro)
			return
		}
		// Simpler models are judged first, and a model the rule has
		// rejected is no longer among those a later verdict of the same
		// rule reads (a closeness rule compares a model only with simpler
		// models it keeps); the verdicts are listed in the grid's order.
		verdicts := map[*FitEntry]Verdict{}
		for _, f := range simplestFirst(alive) {
			env.nums = map[string]float64{}
			still := slices.DeleteFunc(slices.Clone(alive), func(g *FitEntry) bool { v, judged := verdicts[g]; return judged && !v.Kept })
			keep, why := env.judge(r, f, still)
			verdicts[f] = Verdict{Model: f.ID, Kept: keep, Reason: why, Numbers: env.taken()}
			if !keep {
				f.Verdict, f.RejectedRule = "rejected", i+1
				f.Rejected = fmt.Sprintf("%s (rule at line %d): %s", r.Kind, r.Line, why)
			}
		}
		for f, v := range verdicts {
			if !v.Kept {
				env.rejectedBy[f] = fmt.Sprintf("rule %d, %s", i+1, r.Kind)
			}
		}
		var next []*FitEntry
		for _, f := range alive {
			ro.Verdicts = append(ro.Verdicts, verdicts[f])
			if verdicts[f].Kept {
				next = append(next, f)
			}
		}
		alive = next
	}
	or.Choice = "the plan has no choosing rule"
}

// simplestFirst orders fits so that every model comes after the models
// nested in it (more constrained effects first: parallel, then
// constrained, partial and stereotype, then nonparallel), the grid's
// order kept otherwise.
func simplestFirst(fits []*FitEntry) []*FitEntry {
	out := slices.Clone(fits)
	slices.SortStableFunc(out, func(a, b *FitEntry) int {
		return len(lessConstrainedOf(b.Effects)) - len(lessConstrainedOf(a.Effects))
	})
	return out
}

// DescribeRules lists the plan's rules in plain words, as they will be
// applied, with the comparisons each test rule makes (one per line).
func DescribeRules(p *plan.Plan) []string {
	an := ResolvePlan(p)
	var out []string
	for i, r := range an.Rules {
		s := fmt.Sprintf("%d. (line %d) %s", i+1, r.Line, an.DescribeRule(r))
		if r.Kind == plan.RuleRejectIfTestRejects {
			s += " Comparisons:"
			for _, tp := range an.Models.TestPairs(r) {
				s += "\n     " + tp.String()
			}
		}
		out = append(out, s)
	}
	return out
}

// clusterColumn is the column of cluster ids the outcomes are read with
// ("" without one).
func (an *Analysis) clusterColumn() string {
	for _, o := range an.Outcomes {
		if o.Options.Cluster != "" {
			return o.Options.Cluster
		}
	}
	return ""
}

// clusterCaveat is what a rule reading a likelihood-based test or AIC,
// BIC or TIC (whose penalty fit.TIC makes of per-row scores) must say under clustered errors: it takes every observation as
// independent, so the clusters the standard errors allow for do not reach
// it; "" for any other rule or covariance.
func (an *Analysis) clusterCaveat(r plan.Rule) string {
	if an.Errors.Covariance != fit.Clustered {
		return ""
	}
	switch {
	case r.Kind == plan.RuleRejectIfTestRejects && r.Test.NeedsLikelihood():
		return fmt.Sprintf("The %s test compares the two models' likelihoods, which take every observation as independent: it ignores the clusters of %s, holds its level when they do not matter and rejects too often when observations of a cluster are alike. A Wald test would use the cluster-robust covariance instead, referred to F(q, G-q) for q restrictions and G clusters: it allows for the clusters but has little power when q is not small against G, and is not computed when q reaches G or when the less constrained model has more than G-1 parameters", r.Test.Title(), an.clusterColumn())
	case (r.Kind == plan.RuleChoose || r.Kind == plan.RulePreferSimpler) && (r.By == "aic" || r.By == "bic"):
		return fmt.Sprintf("%s takes every observation as independent: the clusters of %s that the clustered standard errors allow for do not reach it", criterionName(r.By), an.clusterColumn())
	case (r.Kind == plan.RuleChoose || r.Kind == plan.RulePreferSimpler) && r.By == "tic":
		return fmt.Sprintf("%s's penalty is made of each row's scores, as if every observation were independent: the clusters of %s that the clustered standard errors allow for do not reach it", criterionName(r.By), an.clusterColumn())
	}
	return ""
}

// ClusterWarnings are the warnings check and run print for a plan with
// clustered errors whose rules or stepwise selection read statistics that
// ignore the clusters; none otherwise.
func ClusterWarnings(p *plan.Plan) []string {
	an := ResolvePlan(p)
	var out []string
	if sel := p.Models.Partial.Select; sel != nil && an.Errors.Covariance == fit.Clustered && sel.Test.NeedsLikelihood() {
		out = append(out, fmt.Sprintf("models.partial.select: the stepwise selection by %s tests takes every observation as independent: it ignores the clusters of %s that the clustered standard errors allow for (test: wald uses them, each step's test of q restrictions referred to F(q, G-q), G the clusters)", sel.Test.Title(), an.clusterColumn()))
	}
	for i, r := range an.Rules {
		if c := an.clusterCaveat(r); c != "" {
			out = append(out, fmt.Sprintf("rules[%d].%s (line %d): %s", i, r.Kind, r.Line, c))
		}
	}
	return out
}

// BinaryWarnings are the warnings check and run print for each outcome
// with two categories whose plan compares what cannot differ with one
// boundary: several effect structures or approaches (each link's
// candidates are then one binary regression), parallel-lines tests or a
// test rule (nothing to test); none otherwise. With found nil they are
// those of the outcomes the plan declares with two categories (said before
// any data are read); with found, the number of categories the data hold
// for each outcome, those of the outcomes whose categories the plan leaves
// to the data (said once the data are read).
func BinaryWarnings(p *plan.Plan, found []int) []string {
	var out []string
	for i, o := range p.Outcomes {
		n, where := len(o.Categories), "two categories"
		if found != nil {
			if n != 0 || i >= len(found) {
				continue
			}
			n, where = found[i], "two categories in the data"
		}
		if n != 2 {
			continue
		}
		var what []string
		if len(p.Models.Effects) > 1 || len(p.Models.Approaches) > 1 {
			what = append(what, "every effect structure and approach of one link is the same binary regression, so the grid's candidates of a link are one model fitted several times")
		}
		if len(p.Tests.ParallelLines) > 0 {
			what = append(what, "the parallel-lines tests have nothing to test and are not computed")
		}
		for _, r := range p.Rules {
			if r.Kind == plan.RuleRejectIfTestRejects {
				what = append(what, fmt.Sprintf("the rule at line %d (reject_if_test_rejects) can test nothing and keeps every model", r.Line))
			}
		}
		if len(what) > 0 {
			out = append(out, fmt.Sprintf("outcomes[%d] (%s) has %s, one boundary: %s", i, o.Column, where, strings.Join(what, "; ")))
		}
	}
	return out
}

// DescribeRule says what a rule does, in plain words.
func (an *Analysis) DescribeRule(r plan.Rule) string {
	switch r.Kind {
	case plan.RuleRejectUnconverged:
		return "Reject fits that did not converge, whose likelihood has no finite maximum, or whose finite maximum is so flat that some estimates are not determined."
	case plan.RuleRejectNegativeProbabilities:
		return "Reject fits that predict a negative category probability for some row of the data."
	case plan.RuleRejectIfTestRejects:
		against := map[string]string{
			plan.AgainstLeast: "the least constrained model of its approach and link",
			plan.AgainstNext:  "the next less constrained model of its approach and link",
			plan.AgainstEach:  "each less constrained model of its approach and link in turn (rejected if any test rejects: each test at the same alpha, with no correction for their number, so a model is rejected more often than alpha when the simpler structure holds)",
		}[r.Against]
		s := fmt.Sprintf("Reject a model when the %s test against %s rejects it at alpha = %g.", r.Test.Title(), against, r.Alpha)
		if r.AppliesTo != nil {
			s += " Only models with " + strings.Join(wordsOf(r.AppliesTo), " or ") + " effects are tested."
		}
		if r.Test.NeedsFullFit() {
			s += " No test is made against a comparison model that has no usable fit (a model with no other comparison is kept), and the log says so."
		} else {
			s += fmt.Sprintf(" The %s test needs only the fit of the model tested, so it is made also where the comparison model has no usable fit.", r.Test.Title())
		}
		s += " A test that cannot be computed rejects nothing, and the log says why; a comparison model that an earlier rule rejected still serves, and the log says so."
		if c := an.clusterCaveat(r); c != "" {
			s += " " + c + "."
		}
		return s
	case plan.RuleRejectIfSimplerIsClose:
		where := "over the rows used"
		if r.Grid != nil {
			var ax []string
			for _, a := range r.Grid {
				switch {
				case a.AllLevels:
					ax = append(ax, a.Predictor+" at every level the rows used have")
				case a.Levels != nil:
					ax = append(ax, a.Predictor+" in {"+strings.Join(a.Levels, ", ")+"}")
				default:
					ax = append(ax, a.Predictor+" in {"+joinNums(a.Values)+"}")
				}
			}
			where = "over the grid " + strings.Join(ax, " x ") + " (other numeric columns at their means, categorical ones at their reference level)"
		}
		return fmt.Sprintf("Reject a model when a simpler model of the same approach and link, still kept, predicts every category probability less than %g apart from it %s. Simpler models are judged first, so a model this rule rejects is not one of those kept.", r.MaxDifference, where)
	case plan.RuleRejectIfSparse:
		var parts []string
		if r.PerParameter > 0 {
			parts = append(parts, fmt.Sprintf("it has fewer than %g observations per parameter", r.PerParameter))
		}
		if r.SmallestCategory > 0 {
			s := fmt.Sprintf("some outcome category has fewer than %g observations", r.SmallestCategory)
			if r.Within != "" {
				s += fmt.Sprintf(" within a value of %s (checked for models in which %s has an effect that varies across equations, or for every model when %s is not a predictor)", r.Within, r.Within, r.Within)
			}
			parts = append(parts, s)
		}
		unit := "observations are the sum of the frequency weights"
		if !an.Weighted() {
			unit = "observations are the rows used"
		} else if an.Errors.Sampling {
			unit = "with sampling weights, observations are the rows used"
		}
		return "Reject a model when " + strings.Join(parts, ", or when ") + " (" + unit + ")."
	case plan.RuleRejectIfUnstable:
		var parts []string
		if r.MaxCondition > 0 {
			parts = append(parts, fmt.Sprintf("the condition number of its information (scaled to unit diagonal) exceeds %g", r.MaxCondition))
		}
		if r.MinStartsAgreeing > 0 {
			parts = append(parts, fmt.Sprintf("its constrained search reached the best value from fewer than %d starts (models without constrained effects have one search and pass)", r.MinStartsAgreeing))
		}
		return "Reject a model when " + strings.Join(parts, ", or when ") + "."
	case plan.RuleChoose, plan.RulePreferSimpler:
		var s string
		if r.Kind == plan.RuleChoose {
			s = fmt.Sprintf("Choose the model with the smallest %s; models within %g of it count as tied and the one with fewer parameters wins.", criterionName(r.By), r.Margin)
		} else {
			s = fmt.Sprintf("Among models within %g %s of the smallest, choose the one with the fewest parameters (then the smaller %s).", r.Margin, criterionName(r.By), criterionName(r.By))
		}
		if c := an.clusterCaveat(r); c != "" {
			s += " " + c + "."
		}
		if r.Otherwise == plan.OtherwiseStop {
			return s + " If every candidate has been rejected, choose nothing and stop with an error."
		}
		return s + " If every candidate has been rejected, report the fallback " + r.Otherwise + ", marked as such."
	}
	return r.Kind
}

func joinNums(xs []float64) string {
	s := make([]string, len(xs))
	for i, x := range xs {
		s[i] = numfmt.Num(x)
	}
	return strings.Join(s, ", ")
}

func criterionName(s string) string {
	switch s {
	case "aic":
		return "AIC"
	case "bic":
		return "BIC"
	case "tic":
		return "TIC"
	}
	return s
}

// judge applies one rejecting rule to one fit; alive are the models the
// rule applies to.
func (env *ruleEnv) judge(r plan.Rule, f *FitEntry, alive []*FitEntry) (bool, string) {
	res := f.Result
	switch r.Kind {
	case plan.RuleRejectUnconverged:
		if !res.OK() {
			return false, fmt.Sprintf("status %s: %s", res.Status, res.Message)
		}
		env.num("max abs score", res.MaxAbsScore)
		if len(res.Starts) > 0 {
			env.num("starts", float64(len(res.Starts)))
			env.num("starts agreeing", float64(res.StartsAgreeing))
			return true, fmt.Sprintf("converged: best of %d starts, %d reaching it%s, max |score| %.2g", len(res.Starts), res.StartsAgreeing, refittedStarts(res), res.MaxAbsScore)
		}
		env.num("iterations", float64(res.Iterations))
		return true, fmt.Sprintf("converged in %d iterations, max |score| %.2g", res.Iterations, res.MaxAbsScore)
	case plan.RuleRejectNegativeProbabilities:
		if res.Model.Comparison == fit.Cumulative || res.Status == fit.StatusNegativeProbs {
			env.num("rows negative probability", float64(res.NegativeRows))
			env.num("rows", float64(res.NRows))
		}
		if res.Status == fit.StatusNegativeProbs {
			return false, fmt.Sprintf("%d of %d rows have a negative predicted category probability", res.NegativeRows, res.NRows)
		}
		if res.Model.Comparison != fit.Cumulative {
			return true, "probabilities of this approach are never negative"
		}
		return true, "no row has a negative predicted category probability"
	case plan.RuleRejectIfSparse:
		return env.judgeSparse(r, f)
	}
	if !res.OK() {
		return true, fmt.Sprintf("not judged: status %s, no usable estimates (an earlier reject_unconverged rule would reject it)", res.Status)
	}
	switch r.Kind {
	case plan.RuleRejectIfTestRejects:
		return env.judgeTest(r, f)
	case plan.RuleRejectIfSimplerIsClose:
		return env.judgeClose(r, f, alive)
	case plan.RuleRejectIfUnstable:
		return env.judgeUnstable(r, res)
	}
	return true, "rule does not apply"
}

// gridEffects is the plan's Models restricted to the candidate effects of
// one approach and link that are in the grid of fits.
func (env *ruleEnv) gridEffects(approach fit.Comparison, link fit.Link) plan.Models {
	m := env.an.Models
	m.Effects = nil
	for _, f := range env.or.Fits {
		if !f.Auxiliary && f.Approach == approach && f.Link == link {
			m.Effects = append(m.Effects, f.Effects)
		}
	}
	return m
}

func (env *ruleEnv) judgeTest(r plan.Rule, f *FitEntry) (bool, string) {
	if r.AppliesTo != nil && !slices.Contains(r.AppliesTo, f.Effects) {
		return true, fmt.Sprintf("not tested: the rule applies only to %s effects", strings.Join(wordsOf(r.AppliesTo), ", "))
	}
	targets := r.TestTargets(env.gridEffects(f.Approach, f.Link), f.Approach, f.Effects)
	if len(targets) == 0 {
		return true, "no less constrained model of this approach and link in the grid"
	}
	var parts []string
	rejected := false
	for _, t := range targets {
		full := env.or.Cell(f.Approach, t, f.Link)
		// The score and Brant tests need only the tested model's fit (and
		// the other model's structure): they are made although the less
		// constrained model has no usable fit. The Wald test reads its
		// covariance too, which a fit whose sandwich or jackknife could
		// not be computed lacks (FitEntry.OK).
		usable := full.likelihoodUsable()
		if r.Test == fit.TestWald {
			usable = full.OK()
		}
		if full == nil || !usable && r.Test.NeedsFullFit() {
			parts = append(parts, fmt.Sprintf("not tested against %s: it has no usable fit (%s)", full.idOr(fit.ModelID(f.Result.Model.ComparisonName(), t.String(), f.Link)), full.unusable()))
			continue
		}
		if ok, why := plan.TestDefined(r.Test, f.Approach, f.Link, f.Effects, t, env.an.Errors.Sampling); !ok {
			// The plan check refuses such rules; this guards a plan built
			// in code.
			parts = append(parts, fmt.Sprintf("not tested against %s: %s", full.ID, why))
			continue
		}
		// A Wald test is read whenever it was computed: its q restrictions
		// must number at most G-1 under clustered errors and their
		// covariance R V R' must have full rank (waldDefined), although the
		// full covariance of a model of more than G-1 parameters is
		// singular (W19).
		tt := env.test(r.Test, f, full)
		if tt.Negative {
			parts = append(parts, fmt.Sprintf("the %s test against %s: %s", r.Test.Title(), full.ID, tt.Reason))
			continue
		}
		if !tt.OK {
			parts = append(parts, fmt.Sprintf("the %s test against %s cannot be computed (%s)", r.Test.Title(), full.ID, tt.Reason))
			continue
		}
		s := fmt.Sprintf("%s test against %s: %s, %s", r.Test.Title(), full.ID, TestStatistic(tt), pText(tt.P, r.Alpha))
		env.num("chi2 against "+full.ID, tt.Chi2)
		env.num("df against "+full.ID, float64(tt.DF))
		if (tt.Pooled != "" || tt.FRef) && tt.DF2 > 0 { // F denominator df of a pooled or jackknife test (0: infinite)
			env.num("df2 against "+full.ID, tt.DF2)
		}
		env.num("p against "+full.ID, tt.P)
		env.num("alpha", r.Alpha)
		cmp, below := belowLimit(tt.P, r.Alpha, "alpha")
		rejected = rejected || below
		switch {
		case full.Result != nil && full.Result.Status == fit.StatusFlatMaximum:
			cmp += fmt.Sprintf(" (%s has a finite but flat maximum: some of its estimates are not determined, its log-likelihood is)", full.ID)
		case !full.OK():
			cmp += fmt.Sprintf(" (%s itself has no usable fit, %s; the %s test does not need it)", full.ID, full.unusable(), r.Test.Title())
		case env.rejectedBy[full] != "":
			cmp += fmt.Sprintf(" (%s was itself rejected by %s; the test uses its fit all the same)", full.ID, env.rejectedBy[full])
		}
		parts = append(parts, s+cmp)
	}
	return !rejected, strings.Join(parts, "; ")
}

// belowLimit writes how a verdict's number compares with the rule's limit,
// the way every verdict says it (" < 10", " >= alpha 0.05": the limit
// named when what is given), and reports whether the number is below it.
func belowLimit(v, limit float64, what string) (string, bool) {
	lim := fmt.Sprintf("%g", limit)
	if what != "" {
		lim = what + " " + lim
	}
	if v < limit {
		return " < " + lim, true
	}
	return " >= " + lim, false
}

// pText writes a p-value the report's way, adding its exact value where
// rounding hides how it compares with alpha.
func pText(p, alpha float64) string {
	s := numfmt.PText(p)
	if p < 1e-4 || math.Abs(p-alpha) < 5e-5 {
		s += " (exactly " + numfmt.Num(p) + ")"
	}
	return s
}

// unusable says why an entry has no usable fit: its status, its error,
// or that it was not fitted.
func (f *FitEntry) unusable() string {
	switch {
	case f != nil && f.Err != "":
		return f.Err
	case f != nil && f.Result != nil:
		return "status " + string(f.Result.Status)
	}
	return "not fitted"
}

func (f *FitEntry) idOr(id string) string {
	if f == nil {
		return id
	}
	return f.ID
}

// wordsOf gives the words of vocabulary values.
func wordsOf[T fmt.Stringer](xs []T) []string {
	out := make([]string, len(xs))
	for i, x := range xs {
		out[i] = x.String()
	}
	return out
}

// freedIn lists the predictors parallel in f and nonparallel in full: the
// columns whose equal slopes a Wald test of f within full tests.
func freedIn(f, full *FitEntry) []string {
	var vars []string
	for k, e := range full.Result.Model.Effects {
		if e == fit.Nonparallel && f.Result.Model.Effects[k] == fit.Parallel {
			vars = append(vars, f.Result.Predictors[k])
		}
	}
	return vars
}

// pairTest computes the named test of restricted against full; the plan
// check has made sure it is defined for the pair.
func pairTest(kind fit.TestKind, d *fit.Data, brant *fit.BrantResult, f, full *FitEntry) fit.Test {
	switch kind {
	case fit.TestWald:
		return fit.WaldEqualSlopes(full.Result, freedIn(f, full))
	case fit.TestScore:
		m, err := full.Spec.Model()
		if err != nil {
			return missingTest(fit.TestScore, err.Error())
		}
		return fit.ScoreTest(d, f.Result, m)
	case fit.TestBrant:
		if brant == nil || !brant.OK {
			reason := "not computed"
			if brant != nil {
				reason = brant.Reason
			}
			return missingTest(fit.TestBrant, reason)
		}
		return brant.Omnibus
	case fit.TestLR:
		return fit.LRTest(f.Result, full.Result)
	}
	return missingTest(kind, "not a test between two models")
}

// judgeClose rejects a model when a simpler kept model of its approach and
// link predicts every category probability by less than the rule's amount.
func (env *ruleEnv) judgeClose(r plan.Rule, f *FitEntry, alive []*FitEntry) (bool, string) {
	var simpler []*FitEntry
	for _, s := range alive {
		if s != f && s.Approach == f.Approach && s.Link == f.Link && s.OK() && slices.Contains(lessConstrainedOf(s.Effects), f.Effects) {
			simpler = append(simpler, s)
		}
	}
	if len(simpler) == 0 {
		return true, "no simpler model of this approach and link is still kept"
	}
	X, off, where, err := env.points(r)
	if err != nil {
		return true, "not judged: " + err.Error()
	}
	pf, err := env.cachedProbs(f, X, off)
	if err != nil {
		return true, "not judged: " + err.Error()
	}
	J := env.or.FitData.J
	var parts []string
	close := false
	for _, s := range simpler {
		ps, err := env.cachedProbs(s, X, off)
		if err != nil {
			parts = append(parts, fmt.Sprintf("not compared with %s: %v", s.ID, err))
			continue
		}
		best, at := -1.0, 0
		for i := range pf {
			if d := math.Abs(pf[i] - ps[i]); d > best {
				best, at = d, i
			}
		}
		cat := env.or.FitData.Categories
		label := fmt.Sprint(at%J + 1)
		if len(cat) == J {
			label = cat[at%J]
		}
		env.num("largest difference from "+s.ID, best)
		env.num("max_difference", r.MaxDifference)
		s := fmt.Sprintf("largest difference from %s in a predicted category probability %s: %s (category %s at %s)", s.ID, where.desc, numfmt.Num(best), label, where.point(at/J))
		cmp, below := belowLimit(best, r.MaxDifference, "")
		if below {
			cmp += ", the simpler model suffices"
			close = true
		}
		parts = append(parts, s+cmp)
	}
	return !close, strings.Join(parts, "; ")
}

func lessConstrainedOf(e fit.Structure) []fit.Structure {
	m := plan.Models{Effects: fit.StructureWords.All()}
	return plan.Rule{Against: plan.AgainstEach}.TestTargets(m, fit.Adjacent, e)
}

// pointSet names the points predictions are compared at.
type pointSet struct {
	desc  string
	point func(i int) string
}

// points gives the rows (X, offsets) where a closeness rule compares
// predictions: the rows used, or the rule's grid with the other predictors
// (and the offset) at their weighted means.
func (env *ruleEnv) points(r plan.Rule) ([]float64, []float64, pointSet, error) {
	d := env.or.FitData
	if r.Grid == nil {
		ds := env.or.Data
		lines := ds.Lines
		return d.X, d.Offset, pointSet{desc: fmt.Sprintf("over the %d rows used", d.N()), point: func(i int) string {
			if i < len(lines) && ds.Parts != nil {
				f, l := ds.Place(lines[i])
				return fmt.Sprintf("the row on line %d of the data part %s", l, f)
			}
			if i < len(lines) {
				return fmt.Sprintf("the row on line %d of the data file", lines[i])
			}
			return fmt.Sprintf("row %d", i+1)
		}}, nil
	}
	// Raw rows: every source at its mean (numeric) or reference level
	// (categorical), then the grid's values (a categorical column's level
	// indexes); the design maps them to the fit's columns.
	dz := env.or.Design
	base := env.or.representative(nil, false)
	S := len(base)
	axes, err := env.gridAxes(r.Grid)
	if err != nil {
		return nil, nil, pointSet{}, err
	}
	n := 1
	for _, ax := range axes {
		n *= len(ax.raw)
	}
	raw := make([]float64, 0, n*S)
	labels := make([]string, 0, n)
	for i := 0; i < n; i++ {
		x := append([]float64(nil), base...)
		rest := i
		lab := make([]string, len(axes))
		for a := len(axes) - 1; a >= 0; a-- {
			ax := axes[a]
			k := rest % len(ax.raw)
			rest /= len(ax.raw)
			x[ax.source] = ax.raw[k]
			lab[a] = ax.name + " = " + ax.text[k]
		}
		raw = append(raw, x...)
		labels = append(labels, strings.Join(lab, ", "))
	}
	X, bad, err := dz.Matrix(raw, n)
	if err != nil {
		return nil, nil, pointSet{}, fmt.Errorf("grid point %s: %v", labels[bad], err)
	}
	var off []float64
	if d.Offset != nil {
		m := env.or.meanOffset()
		off = make([]float64, n)
		for i := range off {
			off[i] = m
		}
	}
	desc := fmt.Sprintf("over the %d grid points", n)
	if slices.ContainsFunc(r.Grid, plan.GridAxis.Categorical) {
		desc += " (every combination of the grid's levels and values)"
	}
	return X, off, pointSet{desc: desc, point: func(i int) string { return labels[i] }}, nil
}

// gridAxis is one axis of a closeness rule's grid as the design reads
// it: the raw values (numbers, or a categorical column's level indexes)
// and their texts.
type gridAxis struct {
	name   string
	source int
	raw    []float64
	text   []string
}

// gridAxes reads the rule's grid against the outcome's design: a
// categorical column's levels (all: the levels the design codes, those of
// the rows used) become level indexes; a listed level no row used has
// (its column dropped) is refused here as in the design's words.
func (env *ruleEnv) gridAxes(grid []plan.GridAxis) ([]gridAxis, error) {
	dz := env.or.Design
	var out []gridAxis
	for _, ax := range grid {
		s := dz.Source(ax.Predictor)
		if s < 0 {
			return nil, fmt.Errorf("grid column %q is not read by the predictors", ax.Predictor)
		}
		g := gridAxis{name: ax.Predictor, source: s}
		cat := dz.Sources[s].Cat
		switch {
		case cat == nil && ax.Categorical():
			return nil, fmt.Errorf("grid column %q is numeric; the grid gives it levels", ax.Predictor)
		case cat == nil:
			for _, v := range ax.Values {
				g.raw = append(g.raw, v)
				g.text = append(g.text, numfmt.Num(v))
			}
		case !ax.Categorical():
			return nil, fmt.Errorf("grid column %q is categorical; the grid gives it numbers", ax.Predictor)
		default:
			levels := ax.Levels
			if ax.AllLevels {
				levels, _ = dz.Coded(s)
				if levels == nil {
					levels = cat.Levels
				}
			}
			for _, l := range levels {
				i := dz.Level(s, l)
				if i < 0 {
					return nil, fmt.Errorf("grid column %q: %q is not one of its levels", ax.Predictor, l)
				}
				g.raw = append(g.raw, float64(i))
				g.text = append(g.text, l)
			}
		}
		out = append(out, g)
	}
	return out, nil
}

func (env *ruleEnv) cachedProbs(f *FitEntry, X, off []float64) ([]float64, error) {
	key := fmt.Sprintf("%s|%p", f.ID, X)
	if p, ok := env.probCache[key]; ok {
		return p, nil
	}
	p, err := env.probs(f, X, off)
	if err == nil {
		env.probCache[key] = p
	}
	return p, err
}

// judgeSparse applies the minimum-information rule.
func (env *ruleEnv) judgeSparse(r plan.Rule, f *FitEntry) (bool, string) {
	or := env.or
	var parts []string
	keep := true
	sampling := env.an.Errors.Sampling
	nobs := fit.Observations(or.Data.N, or.Data.NObs(), sampling)
	unit := "observations"
	if sampling {
		unit = "rows"
	}
	if r.PerParameter > 0 {
		np := f.Result.NParams
		per := nobs / float64(np)
		env.num("observations", nobs)
		env.num("parameters", float64(np))
		env.num("per_parameter", per)
		env.num("per_parameter limit", r.PerParameter)
		s := fmt.Sprintf("%s %s for %d parameters: %s per parameter", numfmt.Num(nobs), unit, np, numfmt.Num(per))
		cmp, below := belowLimit(per, r.PerParameter, "")
		keep = keep && !below
		parts = append(parts, s+cmp)
	}
	if r.SmallestCategory > 0 {
		s, ok := env.smallestCategory(r, f)
		parts = append(parts, s)
		keep = keep && ok
	}
	return keep, strings.Join(parts, "; ")
}

// smallestCategory checks the smallest outcome category count, overall or
// within each value of the rule's column.
func (env *ruleEnv) smallestCategory(r plan.Rule, f *FitEntry) (string, bool) {
	or := env.or
	ds := or.Data
	levels := ds.Categories
	counted := fit.CountWeights(ds.Weights, env.an.Errors.Sampling)
	weight := func(i int) float64 {
		if counted == nil {
			return 1
		}
		return counted[i]
	}
	if r.Within == "" {
		counts := make([]float64, len(levels))
		for i, y := range ds.Y {
			counts[y] += weight(i)
		}
		j := argmin(counts)
		env.num("smallest category count", counts[j])
		env.num("smallest_category limit", r.SmallestCategory)
		s := fmt.Sprintf("smallest category count %s (category %s)", numfmt.Num(counts[j]), levels[j])
		cmp, below := belowLimit(counts[j], r.SmallestCategory, "")
		return s + cmp, !below
	}
	if cols := env.columnsReading(r.Within); cols != nil && !varyingEffect(f.Result, cols) {
		return fmt.Sprintf("the effect of %s is the same in every equation of this model, so counts within its values do not limit it", r.Within), true
	}
	labels, err := env.labels(r.Within)
	if err != nil {
		return "not judged: " + err.Error(), true
	}
	byValue := map[string][]float64{}
	for i, y := range ds.Y {
		c := byValue[labels[i]]
		if c == nil {
			c = make([]float64, len(levels))
			byValue[labels[i]] = c
		}
		c[y] += weight(i)
	}
	values := make([]string, 0, len(byValue))
	for v := range byValue {
		values = append(values, v)
	}
	sort.Strings(values)
	minV, minJ, minC := "", 0, math.Inf(1)
	for _, v := range values {
		c := byValue[v]
		if j := argmin(c); c[j] < minC {
			minV, minJ, minC = v, j, c[j]
		}
	}
	env.num("smallest category count", minC)
	env.num("smallest_category limit", r.SmallestCategory)
	s := fmt.Sprintf("smallest category count within the %d values of %s: %s (category %s at %s = %s)", len(values), r.Within, numfmt.Num(minC), levels[minJ], r.Within, minV)
	cmp, below := belowLimit(minC, r.SmallestCategory, "")
	return s + cmp, !below
}

func argmin(xs []float64) int {
	j := 0
	for i, x := range xs {
		if x < xs[j] {
			j = i
		}
	}
	return j
}

func indexOf(xs []string, x string) int {
	for i, y := range xs {
		if y == x {
			return i
		}
	}
	return -1
}

// columnsReading gives the fit columns whose terms read the data column
// col, or nil when no predictor reads it.
func (env *ruleEnv) columnsReading(col string) []string {
	dz := env.or.Design
	if dz == nil {
		if indexOf(env.or.FitData.Predictors, col) >= 0 {
			return []string{col}
		}
		return nil
	}
	var out []string
	for k, t := range dz.Terms {
		if slices.Contains(dz.TermSources(k), col) {
			out = append(out, t.Columns...)
		}
	}
	return out
}

// varyingEffect reports whether any of the columns has an effect that
// differs between the equations of a model (nonparallel or constrained).
func varyingEffect(r *fit.Result, cols []string) bool {
	for _, c := range cols {
		k := indexOf(r.Predictors, c)
		if k >= 0 && k < len(r.Model.Effects) && r.Model.Effects[k] != fit.Parallel {
			return true
		}
	}
	return false
}

// columnLabels gives the value of a data column for each row used: the
// level of a categorical predictor, the number of a numeric one, or the
// text of any other column (read again from the file; a missing value is
// the label "(missing)").
func columnLabels(or *OutcomeResult, col string) ([]string, error) {
	ds := or.Data
	if dz := or.Design; dz != nil {
		if s := dz.Source(col); s >= 0 {
			S := len(dz.Sources)
			out := make([]string, ds.N)
			for i := range out {
				v := ds.X[i*S+s]
				if c := dz.Sources[s].Cat; c != nil {
					out[i] = c.Levels[int(v)]
				} else {
					out[i] = numfmt.Num(v)
				}
			}
			return out, nil
		}
	}
	opt := or.dataOptions
	opt.Cluster = col
	opt.Refuse = false
	ds2, err := data.LoadFiles(ds.Files(), opt)
	if err != nil {
		return nil, fmt.Errorf("reading column %q: %v", col, err)
	}
	at := make(map[int]string, len(ds2.Lines))
	for i, l := range ds2.Lines {
		at[l] = ds2.Cluster[i]
	}
	out := make([]string, len(ds.Lines))
	for i, l := range ds.Lines {
		v, ok := at[l]
		if !ok {
			v = "(missing)"
		}
		out[i] = v
	}
	return out, nil
}

// judgeUnstable applies the fit-quality rule.
func (env *ruleEnv) judgeUnstable(r plan.Rule, res *fit.Result) (bool, string) {
	var parts []string
	keep := true
	if r.MaxCondition > 0 {
		env.num("condition", res.Condition)
		env.num("max_condition", r.MaxCondition)
		s := fmt.Sprintf("information condition %s", numfmt.Num(res.Condition))
		if len(res.Centred) > 0 {
			s += fmt.Sprintf(" (of the parameters with %s centred inside the fit)", strings.Join(res.Centred, ", "))
		}
		if !(res.Condition <= r.MaxCondition) {
			s += fmt.Sprintf(" > %g", r.MaxCondition)
			keep = false
		} else {
			s += fmt.Sprintf(" <= %g", r.MaxCondition)
		}
		parts = append(parts, s)
	}
	if r.MinStartsAgreeing > 0 {
		if len(res.Starts) == 0 {
			parts = append(parts, "one search (no constrained effects), so no starts to agree")
		} else {
			env.num("starts", float64(len(res.Starts)))
			env.num("starts agreeing", float64(res.StartsAgreeing))
			env.num("min_starts_agreeing", float64(r.MinStartsAgreeing))
			s := fmt.Sprintf("best value reached from %d of %d starts%s", res.StartsAgreeing, len(res.Starts), refittedStarts(res))
			if res.StartsAgreeing < r.MinStartsAgreeing {
				s += fmt.Sprintf(" < %d", r.MinStartsAgreeing)
				keep = false
			} else {
				s += fmt.Sprintf(" >= %d", r.MinStartsAgreeing)
			}
			parts = append(parts, s)
		}
	}
	for _, nz := range res.NearZeroScale {
		// Reported with the fit's quality, not a criterion of the rule.
		parts = append(parts, fmt.Sprintf("note, not a criterion of this rule: g near zero, phi %snear non-identification (Wald test of g = 0: %s, not below %g)", groupOf(nz.Group), numfmt.PText(nz.Test.P), nz.Level))
	}
	return keep, strings.Join(parts, "; ")
}

// refittedStarts says how many of the starts counted as reaching the best
// got there through a refit in another normalization of phi from where
// they stopped (fit.StartRecord.Refitted): " (1 of them by refitting
// ...)", or "" when none did.
func refittedStarts(res *fit.Result) string {
	n := 0
	for _, s := range res.Starts {
		if s.Refitted {
			n++
		}
	}
	if n == 0 {
		return ""
	}
	return fmt.Sprintf(" (%d by refitting, with phi normalized by another equation, from where it stopped on the ridge g -> 0)", n)
}

// groupOf names a constraint group before a verb: "of group NAME ", or ""
// for an unnamed one.
func groupOf(name string) string {
	if name == "" {
		return ""
	}
	return "of group " + name + " "
}

// choose applies the final rule: smallest criterion, with a margin within
// which fewer parameters win; when nothing is left, the plan's fallback or
// nothing.
func (env *ruleEnv) choose(r plan.Rule, alive []*FitEntry, ro *RuleOutcome) {
	or := env.or
	by := criterionName(r.By)
	vals := map[*FitEntry]float64{}
	var usable []*FitEntry
	for _, f := range alive {
		c, note := env.criterion(r.By, f)
		if math.IsNaN(c) {
			ro.Verdicts = append(ro.Verdicts, Verdict{Model: f.ID, Kept: false, Reason: fmt.Sprintf("no %s: %s", by, note)})
			f.Verdict, f.Rejected, f.RejectedRule = "rejected", fmt.Sprintf("%s (rule at line %d): no %s (%s)", r.Kind, r.Line, by, note), len(or.Rules)
			continue
		}
		vals[f] = c
		usable = append(usable, f)
	}
	if len(usable) == 0 {
		env.fallback(r, ro)
		return
	}
	crit := func(f *FitEntry) float64 { return vals[f] }
	best := math.Inf(1)
	for _, f := range usable {
		best = math.Min(best, crit(f))
	}
	// Criteria equal to rounding count as equal (the same model reached
	// through two approaches, for example), so that row order cannot
	// decide; then grid order decides.
	tol := 1e-8 * math.Max(1, math.Abs(best))
	var tied []*FitEntry
	for _, f := range usable {
		if crit(f) <= best+r.Margin+tol {
			tied = append(tied, f)
		}
	}
	// Of the tied models with the fewest parameters, the one with the
	// smallest criterion; criteria within tol of that one count as equal
	// and the first in grid order is taken (a choice made in two steps, as
	// a comparison within tol is not transitive and cannot order a sort).
	fewest := tied[0].Result.NParams
	for _, f := range tied {
		fewest = min(fewest, f.Result.NParams)
	}
	least := math.Inf(1)
	for _, f := range tied {
		if f.Result.NParams == fewest {
			least = math.Min(least, crit(f))
		}
	}
	var chosen *FitEntry
	for _, f := range tied {
		if f.Result.NParams == fewest && crit(f) <= least+tol {
			chosen = f
			break
		}
	}
	// The chosen model first, the others in grid order.
	tied = append([]*FitEntry{chosen}, slices.DeleteFunc(slices.Clone(tied), func(f *FitEntry) bool { return f == chosen })...)
	for _, f := range usable {
		c := crit(f)
		v := Verdict{Model: f.ID, Numbers: map[string]float64{r.By: c, NumberKey("smallest " + r.By): best, "margin": r.Margin, "parameters": float64(f.Result.NParams)}}
		if r.By == "tic" {
			if _, pen, err := env.cachedTIC(f); err == nil {
				v.Numbers["tic_penalty"] = pen
			}
		}
		switch {
		case f == chosen:
			v.Kept = true
			v.Reason = fmt.Sprintf("chosen: %s %s (smallest %s), %d parameters", by, numfmt.Fixed(c, 3), numfmt.Fixed(best, 3), f.Result.NParams)
			if len(tied) > 1 {
				v.Reason += fmt.Sprintf("; %d models within the margin %g, this one has the fewest parameters", len(tied), r.Margin)
				// Others with as few parameters: say how the tie was broken.
				same, level := 0, 0
				for _, o := range tied[1:] {
					if o.Result.NParams == f.Result.NParams {
						same++
						if crit(o) <= c+tol {
							level++
						}
					}
				}
				others := fmt.Sprintf("as %d others have", same)
				if same == 1 {
					others = "as 1 other has"
				}
				switch {
				case level > 0:
					v.Reason += fmt.Sprintf(" (%s) and the same %s, and comes first in the plan's grid", others, by)
				case same > 0:
					v.Reason += fmt.Sprintf(" (%s) and of those the smallest %s", others, by)
				}
			}
		case c <= best+r.Margin+tol:
			v.Reason = fmt.Sprintf("within the margin (%s %s, %+.3f) but ", by, numfmt.Fixed(c, 3), c-best)
			switch k, kc := f.Result.NParams, chosen.Result.NParams; {
			case k > kc:
				v.Reason += fmt.Sprintf("%d parameters, more than %d", k, kc)
			case c > least+tol:
				v.Reason += fmt.Sprintf("%d parameters like %s, whose %s is smaller", k, chosen.ID, by)
			default:
				v.Reason += fmt.Sprintf("%d parameters and the same %s as %s, which comes first in the plan's grid", k, by, chosen.ID)
			}
		default:
			v.Reason = fmt.Sprintf("%s %s is %.3f above the smallest (margin %g)", by, numfmt.Fixed(c, 3), c-best, r.Margin)
		}
		if note := env.criterionNote(r.By, f); note != "" {
			v.Reason += "; " + note
		}
		ro.Verdicts = append(ro.Verdicts, v)
		if f != chosen {
			f.Verdict, f.Rejected = "not chosen", v.Reason
		}
	}
	chosen.Verdict = "chosen"
	or.Chosen = chosen
	or.Choice = fmt.Sprintf("%s: %s", chosen.ID, ro.Verdicts[indexVerdict(ro.Verdicts, chosen.ID)].Reason)
}

// fallback handles a final rule with no candidate left.
func (env *ruleEnv) fallback(r plan.Rule, ro *RuleOutcome) {
	or := env.or
	if r.Otherwise == plan.OtherwiseStop || r.Otherwise == "" {
		or.Choice = "no model chosen: every candidate was rejected, and the plan says to stop (otherwise: stop)"
		return
	}
	fb := or.Find(r.Otherwise)
	if !fb.OK() {
		status := "it was not fitted"
		if fb != nil && fb.Result != nil {
			status = "status " + string(fb.Result.Status)
		} else if fb != nil && fb.Err != "" {
			status = fb.Err
		}
		or.Choice = fmt.Sprintf("no model chosen: every candidate was rejected, and the plan's fallback %s has no usable fit (%s)", r.Otherwise, status)
		return
	}
	why := fmt.Sprintf("fallback: every candidate was rejected, so the plan's fallback model is reported (%d parameters, log-likelihood %s); it was rejected by %s", fb.Result.NParams, numfmt.Fixed(fb.Result.LogLik, 3), fb.Rejected)
	ro.Verdicts = append(ro.Verdicts, Verdict{Model: fb.ID, Kept: true, Reason: why})
	fb.Verdict = "chosen"
	fb.Rejected = ""
	or.Chosen, or.Fallback = fb, true
	or.Choice = fb.ID + ": " + why
}

// criterion is the value a final rule compares, NaN with a note when the
// fit has none.
func (env *ruleEnv) criterion(by string, f *FitEntry) (float64, string) {
	if !f.OK() {
		return math.NaN(), "status " + f.Problem()
	}
	switch by {
	case "aic":
		return f.Result.AIC, ""
	case "tic":
		v, _, err := env.cachedTIC(f)
		if err != nil {
			return math.NaN(), err.Error()
		}
		return v, ""
	}
	return f.Result.BIC, ""
}

// criterionNote gives the parts of a criterion for the log.
func (env *ruleEnv) criterionNote(by string, f *FitEntry) string {
	if by != "tic" {
		return ""
	}
	_, pen, err := env.cachedTIC(f)
	if err != nil {
		return ""
	}
	means := ""
	if env.or.Imputed != nil {
		means = " (means over the imputed sets of each set's own)"
	}
	return fmt.Sprintf("TIC = -2 log-likelihood + 2 x penalty, penalty tr(A^-1 B) = %s for %d parameters%s", numfmt.Fixed(pen, 3), f.Result.NParams, means)
}

// TICWords says in running prose what TIC is as fit.TIC computes it: the
// one description of the criterion for the report's methods draft.
const TICWords = "TIC, Takeuchi's criterion, is -2 log-likelihood + 2 tr(A^-1 B), its penalty made of the two pieces of the sandwich covariance of independent rows without a small-sample factor (A the observed information, B the sum of the outer products of the rows' scores): near the number of parameters when the model is right and, unlike AIC's, not assuming that it is, so that it serves a pseudo-likelihood"

// TICCases says what TIC is on data with sampling weights, frequency
// weights or imputed sets, as fit.TIC and pooledTIC compute it, one
// sentence each for those that apply ("" for none); under clustered
// errors the rule's own caveat says that the clusters do not reach it
// (clusterCaveat).
func TICCases(weights, sampling, imputed bool) string {
	var s []string
	switch {
	case sampling:
		s = append(s, "With the sampling weights, rescaled to sum to the rows used, A sums each row's information times its weight and B each row's outer product times its squared weight, so the penalty allows for the weights.")
	case weights:
		s = append(s, "With frequency weights each row's information and outer product count its weight, as for repeated rows.")
	}
	if imputed {
		s = append(s, "On the imputed data each set's TIC was computed with that set's fit and rows, and the rule compared their means over the sets.")
	}
	return strings.Join(s, " ")
}

func indexVerdict(vs []Verdict, id string) int {
	for i, v := range vs {
		if v.Model == id {
			return i
		}
	}
	return 0
}

func (env *ruleEnv) cachedTIC(f *FitEntry) (float64, float64, error) {
	if c, ok := env.ticCache[f]; ok {
		return c[0], c[1], nil
	}
	v, pen, err := env.tic(f)
	if err == nil {
		env.ticCache[f] = [3]float64{v, pen}
	}
	return v, pen, err
}

// num records a number a verdict used (finite numbers only: JSON has no
// NaN); the verdict's text gives the same number.
func (env *ruleEnv) num(name string, v float64) {
	if env.nums != nil && !math.IsNaN(v) && !math.IsInf(v, 0) {
		env.nums[NumberKey(name)] = v
	}
}

// NumberKey writes the name of a verdict's number as a snake_case key of
// decisions.json: "chi2 against cumulative/nonparallel/logit" becomes
// "chi2_against_cumulative_nonparallel_logit".
func NumberKey(name string) string {
	r := []rune(strings.ToLower(name))
	for i, c := range r {
		if !(c >= 'a' && c <= 'z' || c >= '0' && c <= '9') {
			r[i] = '_'
		}
	}
	return string(r)
}

// taken returns the numbers collected for one verdict and starts afresh.
func (env *ruleEnv) taken() map[string]float64 {
	m := env.nums
	env.nums = nil
	if len(m) == 0 {
		return nil
	}
	return m
}

// SparseWithinUnmet warns, for each reject_if_sparse rule counting the
// categories within the values of a column, when no data of this size
// could meet it: the column takes K values among the rows used (ds; or's
// Design and dataOptions read the column as the rule does), the outcome J
// categories, and K x J x smallest_category is more than the observations,
// so some category falls below the limit within some value whatever the
// data, and the rule rejects every model in which that column's effect
// varies across equations (a numeric column of many values, say, where a
// categorical or 0/1 one was meant). "" when no rule is so.
func (a *Analysis) SparseWithinUnmet(or *OutcomeResult, ds *data.Dataset) string {
	var out []string
	for _, r := range a.Rules {
		if r.Kind != plan.RuleRejectIfSparse || r.Within == "" || r.SmallestCategory <= 0 {
			continue
		}
		probe := *or
		probe.Data = ds
		labels, err := columnLabels(&probe, r.Within)
		if err != nil {
			continue // the rule says so in its verdicts
		}
		values := map[string]bool{}
		for _, l := range labels {
			values[l] = true
		}
		nobs := fit.Observations(ds.N, ds.NObs(), a.Errors.Sampling)
		K, J := len(values), len(ds.Categories)
		if need := float64(K*J) * r.SmallestCategory; need > nobs {
			out = append(out, fmt.Sprintf("the rule at line %d (reject_if_sparse) counts each category within the values of %s, which takes %d values among the rows used: %d values x %d categories x %s is %s, more than the %s observations, so some category has fewer than %s within some value whatever the data, and the rule rejects every model in which the effect of %s varies across equations; within is meant for a categorical or few-valued column",
				r.Line, r.Within, K, K, J, numfmt.Num(r.SmallestCategory), numfmt.Num(need), numfmt.Num(nobs), numfmt.Num(r.SmallestCategory), r.Within))
		}
	}
	return strings.Join(out, "; ")
}
