package runner

import (
	"fmt"
	"math"
	"sort"

	"ordplan/plan"
	"ordplan/render/numfmt"
	"ordplan/runner/fit"
)

// chain is the order of the levels from most to least constrained; each
// model is tested against the nearest usable fit after it.
var chain = map[string][]string{
	LevelParallel:    {LevelConstrained, LevelPartial, LevelNonparallel},
	LevelConstrained: {LevelPartial, LevelNonparallel},
	LevelPartial:     {LevelNonparallel},
	LevelStereotype:  {LevelNonparallel},
}

// applyRules runs the plan's rules in order over the candidate fits.
func applyRules(p *plan.Plan, or *OutcomeResult) {
	var alive []*FitEntry
	for _, f := range or.Fits {
		if f.Auxiliary {
			continue
		}
		f.Verdict = "kept"
		if f.Err != "" || f.Result == nil {
			f.Verdict = "rejected"
			f.Rejected = "could not be fitted: " + f.Err
			continue
		}
		alive = append(alive, f)
	}
	for _, r := range p.Rules {
		ro := &RuleOutcome{Rule: r, Description: describeRule(r)}
		var next []*FitEntry
		switch r.Kind {
		case plan.RuleChoose, plan.RulePreferSimpler:
			chooseModel(r, or, alive, ro)
			or.Rules = append(or.Rules, ro)
			return
		}
		for _, f := range alive {
			keep, why := judge(r, p, or, f)
			ro.Verdicts = append(ro.Verdicts, Verdict{Model: f.ID, Kept: keep, Reason: why})
			if keep {
				next = append(next, f)
			} else {
				f.Verdict = "rejected"
				f.Rejected = fmt.Sprintf("%s (rule at line %d): %s", r.Kind, r.Line, why)
			}
		}
		alive = next
		or.Rules = append(or.Rules, ro)
	}
	or.Choice = "the plan has no choosing rule"
}

func describeRule(r plan.Rule) string {
	switch r.Kind {
	case plan.RuleRejectUnconverged:
		return "Reject fits that did not converge or whose likelihood has no finite maximum."
	case plan.RuleRejectNegativeProbabilities:
		return "Reject fits that predict a negative category probability for some row of the data."
	case plan.RuleRejectIfTestRejects:
		return fmt.Sprintf("Reject a model when the %s test against the nearest less constrained fitted model of the same approach and link rejects it at alpha = %g.", testName(r.Test), r.Alpha)
	case plan.RuleChoose:
		return fmt.Sprintf("Choose the model with the smallest %s; models within %g of it count as tied and the one with fewer parameters wins.", upper(r.By), r.Margin)
	case plan.RulePreferSimpler:
		return fmt.Sprintf("Among models within %g %s of the smallest, choose the one with the fewest parameters (then the smaller %s).", r.Margin, upper(r.By), upper(r.By))
	}
	return r.Kind
}

func upper(s string) string {
	switch s {
	case "aic":
		return "AIC"
	case "bic":
		return "BIC"
	}
	return s
}

func testName(t string) string {
	switch t {
	case "lr":
		return "likelihood-ratio"
	case "wald":
		return "Wald"
	case "score":
		return "score"
	case "brant":
		return "Brant"
	}
	return t
}

// judge applies one rejecting rule to one fit.
func judge(r plan.Rule, p *plan.Plan, or *OutcomeResult, f *FitEntry) (bool, string) {
	res := f.Result
	switch r.Kind {
	case plan.RuleRejectUnconverged:
		if !res.OK() {
			return false, fmt.Sprintf("status %s: %s", res.Status, res.Message)
		}
		if len(res.Starts) > 0 {
			return true, fmt.Sprintf("converged: best of %d starts, %d reaching it, max |score| %.2g", len(res.Starts), res.StartsAgreeing, res.MaxAbsScore)
		}
		return true, fmt.Sprintf("converged in %d iterations, max |score| %.2g", res.Iterations, res.MaxAbsScore)
	case plan.RuleRejectNegativeProbabilities:
		if res.Status == fit.StatusNegativeProbs {
			return false, fmt.Sprintf("%d of %d rows have a negative predicted category probability", res.NegativeRows, res.NRows)
		}
		if res.Model.Comparison != fit.Cumulative {
			return true, "probabilities of this approach are never negative"
		}
		return true, "no row has a negative predicted category probability"
	case plan.RuleRejectIfTestRejects:
		return judgeTest(r, p, or, f)
	}
	return true, "rule does not apply"
}

func judgeTest(r plan.Rule, p *plan.Plan, or *OutcomeResult, f *FitEntry) (bool, string) {
	var nb *FitEntry
	for _, lv := range chain[f.Level] {
		if c := or.Find(f.Approach + "/" + lv + "/" + f.Link); c.OK() {
			nb = c
			break
		}
	}
	if nb == nil {
		if len(chain[f.Level]) == 0 {
			return true, "no less constrained model to test against"
		}
		return true, "no less constrained model of this approach and link has a usable fit, so the test cannot be computed"
	}
	kind, note0 := r.Test, ""
	if probabilityWeights(p) && kind != "wald" {
		kind, note0 = "wald", fmt.Sprintf(" (probability weights: the Wald test replaces the %s test)", testName(r.Test))
	}
	t, note := ruleTest(kind, or, f, nb)
	note = note0 + note
	if probabilityWeights(p) && t.Name == "lr" {
		t = missingTest("wald", "the Wald test is not defined for this pair and likelihood-ratio tests are not valid with probability weights")
	}
	if !t.OK {
		return true, fmt.Sprintf("the %s test against %s cannot be computed (%s)%s", testName(t.Name), nb.ID, t.Reason, note)
	}
	stat := fmt.Sprintf("%s test against %s: chi2(%d) = %s, %s%s", testName(t.Name), nb.ID, t.DF, numfmt.Stat(t.Chi2), numfmt.PText(t.P), note)
	if t.P < r.Alpha {
		return false, stat + fmt.Sprintf(" < %g", r.Alpha)
	}
	return true, stat
}

// ruleTest computes the test a rule asks for between a model and its less
// constrained neighbour, falling back to the likelihood-ratio test (and
// saying so) where the asked test is not defined.
func ruleTest(kind string, or *OutcomeResult, f, nb *FitEntry) (fit.Test, string) {
	hasConstrained := len(f.Spec.Groups) > 0 || len(nb.Spec.Groups) > 0
	switch kind {
	case "wald":
		if !hasConstrained {
			var vars []string
			for k, e := range nb.Result.Model.Effects {
				if e == fit.Nonparallel && f.Result.Model.Effects[k] == fit.Parallel {
					vars = append(vars, f.Result.Predictors[k])
				}
			}
			return fit.WaldEqualSlopes(nb.Result, vars), ""
		}
	case "score":
		if !hasConstrained {
			return fit.ScoreTest(or.FitData, f.Result, nb.Result.Model), ""
		}
	case "brant":
		if f.Approach == "cumulative" && f.Link == "logit" && f.Level == LevelParallel && nb.Level == LevelNonparallel {
			br := fit.Brant(or.FitData, fit.Options{Workers: 1})
			if !br.OK {
				return missingTest("brant", br.Reason), ""
			}
			return br.Omnibus, ""
		}
	case "lr":
		return fit.LRTest(f.Result, nb.Result), ""
	}
	return fit.LRTest(f.Result, nb.Result), fmt.Sprintf(" (the %s test is not defined for this pair; likelihood-ratio used)", testName(kind))
}

// chooseModel applies the final rule: smallest criterion, with a margin
// within which fewer parameters win.
func chooseModel(r plan.Rule, or *OutcomeResult, alive []*FitEntry, ro *RuleOutcome) {
	crit := func(f *FitEntry) float64 {
		if !f.OK() {
			return math.NaN()
		}
		if r.By == "aic" {
			return f.Result.AIC
		}
		return f.Result.BIC
	}
	var usable []*FitEntry
	for _, f := range alive {
		if math.IsNaN(crit(f)) {
			ro.Verdicts = append(ro.Verdicts, Verdict{Model: f.ID, Kept: false, Reason: fmt.Sprintf("no %s: status %s", upper(r.By), f.Result.Status)})
			f.Verdict, f.Rejected = "rejected", fmt.Sprintf("%s (rule at line %d): no %s (status %s)", r.Kind, r.Line, upper(r.By), f.Result.Status)
			continue
		}
		usable = append(usable, f)
	}
	if len(usable) == 0 {
		or.Choice = "no model survived the rules, so none was chosen"
		return
	}
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
	sort.SliceStable(tied, func(i, j int) bool {
		a, b := tied[i].Result, tied[j].Result
		if a.NParams != b.NParams {
			return a.NParams < b.NParams
		}
		return crit(tied[i]) < crit(tied[j])-tol
	})
	chosen := tied[0]
	by := upper(r.By)
	for _, f := range usable {
		c := crit(f)
		v := Verdict{Model: f.ID}
		switch {
		case f == chosen:
			v.Kept = true
			v.Reason = fmt.Sprintf("chosen: %s %s (smallest %s), %d parameters", by, numfmt.Fixed(c, 3), numfmt.Fixed(best, 3), f.Result.NParams)
			if len(tied) > 1 {
				v.Reason += fmt.Sprintf("; %d models within the margin %g, this one has the fewest parameters", len(tied), r.Margin)
			}
		case c <= best+r.Margin+tol:
			v.Reason = fmt.Sprintf("within the margin (%s %s, %+.3f) but %d parameters, more than %d", by, numfmt.Fixed(c, 3), c-best, f.Result.NParams, chosen.Result.NParams)
		default:
			v.Reason = fmt.Sprintf("%s %s is %.3f above the smallest (margin %g)", by, numfmt.Fixed(c, 3), c-best, r.Margin)
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

func indexVerdict(vs []Verdict, id string) int {
	for i, v := range vs {
		if v.Model == id {
			return i
		}
	}
	return 0
}
