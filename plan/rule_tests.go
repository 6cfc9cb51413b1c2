package plan

import (
	"fmt"
	"slices"
	"strings"
)

// The nesting of effect structures, the pairs a test rule compares and
// whether a test is defined for a pair: the plan check and the runner both
// use these, so that a plan is refused exactly when the run could not do
// what it says.

// Keys of the rules with options.
var (
	rejectKeys   = []string{"test", "alpha", "against", "applies_to"}
	chooseKeys   = []string{"by", "margin", "otherwise"}
	closeKeys    = []string{"max_difference", "grid"}
	sparseKeys   = []string{"per_parameter", "smallest_category", "within"}
	unstableKeys = []string{"max_condition", "min_starts_agreeing"}
)

// lessConstrained lists the effect structures in which a model with the
// given effects is nested, from the nearest to the least constrained.
var lessConstrained = map[string][]string{
	"parallel":    {"constrained", "partial", "stereotype", "nonparallel"},
	"constrained": {"partial", "nonparallel"},
	"partial":     {"nonparallel"},
	"stereotype":  {"nonparallel"},
}

// EffectsFitted reports whether a plan fits models with effects e for the
// approach (the stereotype structure exists for adjacent comparisons only).
func (m Models) EffectsFitted(approach, e string) bool {
	return m.HasLevel(e) && (e != "stereotype" || approach == "adjacent")
}

// TestTargets gives the effect structures a model with effects e is tested
// against by rule r, for one approach, among the effects the plan fits.
// Nil means the rule does not test such a model.
func (r Rule) TestTargets(m Models, approach, e string) []string {
	if r.AppliesTo != nil && !slices.Contains(r.AppliesTo, e) {
		return nil
	}
	var present []string
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
func TestDefined(test, approach, link, restricted, full string, sampling bool) (bool, string) {
	if sampling && test != "wald" {
		return false, fmt.Sprintf("with sampling weights the fits maximize a pseudo-likelihood, and the %s test needs a likelihood (use test: wald)", TestName(test))
	}
	nonlinear := func(e string) bool { return e == "constrained" || e == "stereotype" }
	switch test {
	case "lr":
		return true, ""
	case "wald", "score":
		if nonlinear(restricted) || nonlinear(full) {
			return false, fmt.Sprintf("the %s test here compares models whose slopes are linear in the parameters (parallel, partial, nonparallel); constrained and stereotype effects are not", TestName(test))
		}
		return true, ""
	case "brant":
		if approach == "cumulative" && link == "logit" && restricted == "parallel" && full == "nonparallel" {
			return true, ""
		}
		return false, "the Brant test compares the cumulative logit parallel model with the nonparallel one, and nothing else"
	}
	return false, "unknown test " + quote(test)
}

// TestName is the name of a test in sentences.
func TestName(t string) string {
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

// TestPair is one comparison a test rule makes.
type TestPair struct {
	Approach, Link, Restricted, Full string
}

func (t TestPair) String() string {
	return t.Approach + "/" + t.Restricted + "/" + t.Link + " against " + t.Approach + "/" + t.Full + "/" + t.Link
}

// TestPairs lists every comparison a test rule makes in the plan, in grid
// order.
func (p *Plan) TestPairs(r Rule) []TestPair {
	var out []TestPair
	for _, a := range p.Models.Approaches {
		for _, l := range p.Models.Links {
			for _, e := range p.Models.Levels {
				if !p.Models.EffectsFitted(a, e) {
					continue
				}
				for _, t := range r.TestTargets(p.Models, a, e) {
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
