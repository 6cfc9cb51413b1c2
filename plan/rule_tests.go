package plan

import (
	"fmt"
	"slices"
	"strings"

	"ordplan/runner/fit"
)

// The nesting of effect structures, the pairs a test rule compares and
// whether a test is defined for a pair: the plan check and the runner both
// use these, so that a plan is refused exactly when the run could not do
// what it says.

// Keys of the rules with options.
var (
	rejectKeys   = keysAt("rules." + RuleRejectIfTestRejects)
	chooseKeys   = keysAt("rules." + RuleChoose)
	closeKeys    = keysAt("rules." + RuleRejectIfSimplerIsClose)
	sparseKeys   = keysAt("rules." + RuleRejectIfSparse)
	unstableKeys = keysAt("rules." + RuleRejectIfUnstable)
)

// lessConstrained lists the effect structures in which a model with the
// given effects is nested, from the nearest to the least constrained.
var lessConstrained = map[fit.Structure][]fit.Structure{
	fit.ParallelEffects:    {fit.ConstrainedEffects, fit.PartialEffects, fit.StereotypeEffects, fit.NonparallelEffects},
	fit.ConstrainedEffects: {fit.PartialEffects, fit.NonparallelEffects},
	fit.PartialEffects:     {fit.NonparallelEffects},
	fit.StereotypeEffects:  {fit.NonparallelEffects},
}

// EffectsFitted reports whether a plan fits models with effects e for the
// approach (the stereotype structure exists for adjacent comparisons only).
func (m Models) EffectsFitted(approach fit.Comparison, e fit.Structure) bool {
	return m.HasEffects(e) && (e != fit.StereotypeEffects || approach == fit.Adjacent)
}

// TestTargets gives the effect structures a model with effects e is tested
// against by rule r, for one approach, among the effects the plan fits.
// Nil means the rule does not test such a model.
func (r Rule) TestTargets(m Models, approach fit.Comparison, e fit.Structure) []fit.Structure {
	if r.AppliesTo != nil && !slices.Contains(r.AppliesTo, e) {
		return nil
	}
	var present []fit.Structure
	for _, t := range lessConstrained[e] {
		if m.EffectsFitted(approach, t) {
			present = append(present, t)
		}
	}
	if len(present) == 0 {
		return nil
	}
	switch r.Against {
	case AgainstNext:
		return present[:1]
	case AgainstEach:
		return present
	}
	return present[len(present)-1:]
}

// TestDefined reports whether the named test compares a model with effects
// restricted against one with effects full (same approach and link), and
// if not, why.
func TestDefined(test fit.TestKind, approach fit.Comparison, link fit.Link, restricted, full fit.Structure, sampling bool) (bool, string) {
	if sampling && test.NeedsLikelihood() {
		return false, fmt.Sprintf("with sampling weights the fits maximize a pseudo-likelihood, and the %s test needs a likelihood (use test: wald)", test.Title())
	}
	nonlinear := func(e fit.Structure) bool { return e == fit.ConstrainedEffects || e == fit.StereotypeEffects }
	switch test {
	case fit.TestLR:
		return true, ""
	case fit.TestWald, fit.TestScore:
		if nonlinear(restricted) || nonlinear(full) {
			return false, fmt.Sprintf("the %s test here compares models whose slopes are linear in the parameters (parallel, partial, nonparallel); constrained and stereotype effects are not", test.Title())
		}
		return true, ""
	case fit.TestBrant:
		if approach == fit.Cumulative && link == fit.Logit && restricted == fit.ParallelEffects && full == fit.NonparallelEffects {
			return true, ""
		}
		return false, "the Brant test compares the cumulative logit parallel model with the nonparallel one, and nothing else"
	}
	return false, "the " + test.Title() + " test does not compare two models of the grid"
}

// TestPair is one comparison a test rule makes.
type TestPair struct {
	Approach         fit.Comparison
	Link             fit.Link
	Restricted, Full fit.Structure
}

func (t TestPair) String() string {
	a := t.Approach.String()
	return fit.ModelID(a, t.Restricted.String(), t.Link) + " against " + fit.ModelID(a, t.Full.String(), t.Link)
}

// TestPairs lists every comparison a test rule makes in the plan, in grid
// order.
func (p *Plan) TestPairs(r Rule) []TestPair { return p.Models.TestPairs(r) }

// TestPairs lists every comparison a test rule makes in the grid of these
// models, in grid order.
func (m Models) TestPairs(r Rule) []TestPair {
	var out []TestPair
	for _, a := range m.Approaches {
		for _, l := range m.Links {
			for _, e := range m.Effects {
				if !m.EffectsFitted(a, e) {
					continue
				}
				for _, t := range r.TestTargets(m, a, e) {
					out = append(out, TestPair{a, l, e, t})
				}
			}
		}
	}
	return out
}

// ParseModelID splits "approach/effects/link".
func ParseModelID(id string) (approach, effects, link string, ok bool) {
	parts := strings.Split(id, "/")
	if len(parts) != 3 {
		return "", "", "", false
	}
	return parts[0], parts[1], parts[2], true
}
