package plan

import (
	"encoding/json"
	"fmt"
	"slices"
	"strings"

	"ordplan/internal/words"
	"ordplan/runner/fit"
)

// checkRules checks the order of the rules and that each one can do what
// it says for every model of the plan.
func (d *decoder) checkRules(p *Plan) {
	if len(p.Rules) == 0 {
		return
	}
	// Final rules are found from the keys written, so a choose rule with
	// bad options still counts as present.
	var finals []int
	for i := range p.Rules {
		ip := itemPath("rules", i)
		if d.nodes[ip+"."+RuleChoose] != nil || d.nodes[ip+"."+RulePreferSimpler] != nil {
			finals = append(finals, i)
		}
	}
	switch {
	case len(finals) == 0 && d.clean("rules"):
		d.errAt("rules", "the last rule must be choose or prefer_simpler, and neither is given")
	case len(finals) > 0:
		first := finals[0]
		for _, j := range finals[1:] {
			d.errAt(itemPath("rules", j), "only one choose or prefer_simpler rule is allowed (the first is at line %d)", p.Rules[first].Line)
		}
		if last := finals[len(finals)-1]; last != len(p.Rules)-1 {
			n := len(p.Rules) - 1 - last
			d.errAt(itemPath("rules", last), "must be the last rule, but %d rule%s follow%s it", n, words.Form(n, "", "s"), words.Form(n, "s", ""))
		}
	}

	modelsOK := d.clean("models.approaches") && d.clean("models.effects") && d.clean("models.links")
	seen := map[string]int{}
	for i, r := range p.Rules {
		ip := itemPath("rules", i)
		if r.Kind == "" || !d.clean(ip) {
			continue
		}
		sig, _ := json.Marshal(canonRule(r))
		if line, dup := seen[string(sig)]; dup {
			d.errAt(ip, "repeats the rule at line %d", line)
			continue
		}
		seen[string(sig)] = r.Line
		at := ip + "." + r.Kind
		switch r.Kind {
		case RuleRejectNegativeProbabilities:
			if d.clean("models.approaches") && !p.Models.HasApproach(fit.Cumulative) {
				d.errAt(at, "applies only to cumulative fits, and models.approaches does not include cumulative")
			}
		case RuleRejectIfTestRejects:
			if modelsOK {
				d.checkTestRule(p, r, at)
			}
		case RuleRejectIfSimplerIsClose:
			if modelsOK && !hasNesting(p) {
				d.errAt(at, "compares each model with a simpler one of the same approach and link, but models.effects (%s) has no such pair", joinWords(p.Models.Effects))
			}
			if d.predictorsKnown(p) {
				for _, ax := range r.Grid {
					key := childPath(at+".grid", ax.Predictor)
					if !slices.Contains(p.SourceColumns(), ax.Predictor) {
						d.errAt(key, "%s is not a column the predictors read (%s)", quote(ax.Predictor), strings.Join(p.SourceColumns(), ", "))
						continue
					}
					if c := p.categorical(ax.Predictor); c != nil && c.Levels != nil {
						d.checkGridLevels(p, c, ax, key)
					}
				}
			}
		case RuleRejectIfSparse:
			if r.Within != "" {
				for _, o := range p.Outcomes {
					if o.Column == r.Within {
						d.errAt(at+".within", "%s is the outcome; within names another column whose values split the rows", quote(r.Within))
					}
				}
			}
		case RuleRejectIfUnstable:
			if r.MaxCondition == 0 && d.clean("models.effects") && !p.Models.HasEffects(fit.ConstrainedEffects) && !p.Models.HasEffects(fit.StereotypeEffects) {
				d.errAt(at+".min_starts_agreeing", "applies only to constrained and stereotype models (searched from several starts), and models.effects includes neither")
			}
		case RuleChoose, RulePreferSimpler:
			d.checkFinalRule(p, r, at)
		}
	}
}

// checkTestRule refuses a test rule that would test nothing, or whose test
// is not defined for some pair it compares.
func (d *decoder) checkTestRule(p *Plan, r Rule, at string) {
	// Each structure applies_to names must be one the rule can test (then
	// the rule's pairs are not judged again).
	named := false
	for i, e := range r.AppliesTo {
		key := itemPath(at+".applies_to", i)
		switch {
		case !p.Models.HasEffects(e):
			d.errAt(key, "%s is not in models.effects (%s): the rule would test no such model", quote(e.String()), joinWords(p.Models.Effects))
			named = true
		case len(lessConstrained[e]) == 0:
			d.errAt(key, "%s effects are the least constrained: no model is less constrained to test them against", quote(e.String()))
			named = true
		}
	}
	if named {
		return
	}
	pairs := p.TestPairs(r)
	if len(pairs) == 0 {
		what := "models.effects (" + joinWords(p.Models.Effects) + ")"
		if r.AppliesTo != nil {
			what += " with applies_to (" + joinWords(r.AppliesTo) + ")"
		}
		d.errAt(at, "tests each model against a less constrained one, but %s gives no such pair", what)
		return
	}
	var bad []string
	why := ""
	for _, tp := range pairs {
		if ok, reason := TestDefined(r.Test, tp.Approach, tp.Link, tp.Restricted, tp.Full, p.Data.Sampling()); !ok {
			bad = append(bad, tp.String())
			why = reason
		}
	}
	if len(bad) == 0 {
		return
	}
	key := at
	if d.given(at + ".test") {
		key = at + ".test"
	}
	hint := ""
	switch {
	case p.Data.Sampling():
	case r.Test == fit.TestBrant:
		hint = "; use test: lr, or keep the Brant rule to a plan of cumulative logit models with applies_to: [parallel]"
	default:
		hint = "; use test: lr, or leave constrained and stereotype models out of the rule with applies_to"
	}
	d.errAt(key, "the %s test is not defined for %d of the %d comparisons this rule makes (%s): %s; %s%s",
		r.Test.Title(), len(bad), len(pairs), r.Against, strings.Join(bad, ", "), why, hint)
}

func hasNesting(p *Plan) bool {
	for _, a := range p.Models.Approaches {
		for _, e := range p.Models.Effects {
			if !p.Models.EffectsFitted(a, e) {
				continue
			}
			for _, t := range lessConstrained[e] {
				if p.Models.EffectsFitted(a, t) {
					return true
				}
			}
		}
	}
	return false
}

// checkFinalRule checks the criterion against the weights and the fallback
// model against the grid.
func (d *decoder) checkFinalRule(p *Plan, r Rule, at string) {
	if p.Data.Sampling() && (r.By == "aic" || r.By == "bic") && d.clean("data") {
		key, dflt := at, " (the default)"
		if d.given(at + ".by") {
			key, dflt = at+".by", ""
		}
		d.errAt(key, "by: %s%s assumes a likelihood, but with sampling weights (data.weight_kind: sampling) the fits maximize a pseudo-likelihood; use by: tic, whose penalty is valid for pseudo-likelihoods", r.By, dflt)
	}
	if r.Otherwise == OtherwiseStop || !d.clean("models") {
		return
	}
	key := at + ".otherwise"
	aw, ew, lw, ok := ParseModelID(r.Otherwise)
	if !ok {
		d.errAt(key, "want stop or a model of the plan written approach/effects/link, such as cumulative/parallel/logit; got %s", quote(r.Otherwise))
		return
	}
	var probs []string
	a, aerr := fit.ComparisonWords.Parse(aw)
	if aerr != nil || !p.Models.HasApproach(a) {
		probs = append(probs, fmt.Sprintf("approach %s is not in models.approaches", quote(aw)))
	}
	e, eerr := fit.StructureWords.Parse(ew)
	if eerr != nil || !p.Models.HasEffects(e) {
		probs = append(probs, fmt.Sprintf("effects %s are not in models.effects", quote(ew)))
	} else if aerr == nil && !p.Models.EffectsFitted(a, e) {
		probs = append(probs, "stereotype effects exist only for the adjacent approach")
	}
	if l, err := fit.LinkWords.Parse(lw); err != nil || !slices.Contains(p.Models.Links, l) {
		probs = append(probs, fmt.Sprintf("link %s is not in models.links", quote(lw)))
	}
	if len(probs) > 0 {
		d.errAt(key, "the fallback %s is not a model of the plan: %s", r.Otherwise, strings.Join(probs, "; "))
	}
}

// checkGridLevels refuses a level the grid lists for a categorical column
// that is not one of its declared levels (with the nearest names), is
// listed twice, or is one the subset leaves out (no row used has it).
func (d *decoder) checkGridLevels(p *Plan, c *CategoricalColumn, ax GridAxis, key string) {
	seen := map[string]bool{}
	for j, l := range ax.Levels {
		ip := itemPath(key, j)
		single := len(ax.Levels) == 1 && d.nodes[ip] == nil
		if single {
			ip = key // one level written without a list
		}
		switch {
		case !slices.Contains(c.Levels, l):
			msg := fmt.Sprintf("%s is not a level of %s (%s.levels: %s)", quote(l), quote(ax.Predictor), c.Key, strings.Join(c.Levels, ", "))
			var q []string
			nearAll := false
			for _, n := range words.Nearest(l, append(slices.Clip(c.Levels), GridAllLevels), 4) {
				if n == GridAllLevels && !slices.Contains(c.Levels, n) {
					nearAll = true
				} else {
					q = append(q, quote(n))
				}
			}
			if len(q) > 0 {
				msg += "; nearest levels: " + strings.Join(q, ", ")
			}
			switch {
			case l == GridAllLevels:
				msg += fmt.Sprintf("; in a list, %s names a level: write %s: %s, without brackets, for every level", GridAllLevels, ax.Predictor, GridAllLevels)
			case nearAll && single:
				msg += fmt.Sprintf("; nearest word: %s (write %s: %s for every level the rows used have)", GridAllLevels, ax.Predictor, GridAllLevels)
			case nearAll:
				msg += fmt.Sprintf("; nearest word: %s (write %s: %s, without brackets, for every level the rows used have)", GridAllLevels, ax.Predictor, GridAllLevels)
			}
			d.errAt(ip, "%s", msg)
		case seen[l]:
			d.errAt(ip, "the level %s is listed twice: each level is one point of the grid; list it once", quote(l))
		case d.clean("subset") && excludedBy(p, ax.Predictor, l) != nil:
			sc := excludedBy(p, ax.Predictor, l)
			d.errAt(ip, "%s is a level the subset leaves out (%s: %s): no row used has it, so the models have no effect of it to compare; give levels the rows used have (%s), or %s", quote(l), sc.Key, sc.String(), strings.Join(subsetKeeps(p, c), ", "), GridAllLevels)
		}
		seen[l] = true
	}
}
