package render

import (
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner/design"
)

// The limits read causes only where the plan says a predictor was assigned
// by chance (dictionary: assigned_by_chance): without one, association for
// every predictor; with one, a causal reading of its comparison under the
// trial's conditions, given the others only if measured before the
// assignment, association for the others, and an interaction with
// it read as for whom, not as what the other predictor causes.
func TestCausationSentence(t *testing.T) {
	p := &plan.Plan{Terms: []design.TermSpec{{Name: "arm", Source: "arm"}, {Name: "age", Source: "age"}}}
	if s := causationSentence(p); !strings.Contains(s, "They do not show that a predictor causes a change in the outcome") {
		t.Errorf("no predictor assigned by chance: %s", s)
	}
	p.Dictionary = []plan.Entry{{Column: "arm", ByChance: true}, {Column: "age"}}
	s := causationSentence(p)
	for _, want := range []string{
		"`arm` was assigned to the units by chance",
		"has a causal reading under the conditions of the trial",
		"The other predictors (`age`) were not assigned by chance",
		"holds only if they were measured before the assignment",
		// Adjusted slopes are conditional effects, not the population's.
		"Its slopes (on the scale of the model's link: log odds under the logit link) are effects given those predictors: such effects do not collapse, so the assignment's effect on the same scale averaged over the whole population is usually nearer 0 (under the logit link, an odds ratio nearer 1)",
	} {
		if !strings.Contains(s, want) {
			t.Errorf("lacks %q: %s", want, s)
		}
	}
	if strings.Contains(s, "interaction") {
		t.Errorf("an interaction named without one: %s", s)
	}
	p.Terms = append(p.Terms, design.TermSpec{Name: "arm&age", Interact: []string{"arm", "age"}})
	if s := causationSentence(p); !strings.Contains(s, "(an interaction), that describes for whom the assignment changed the outcome more or less, not what the other predictor causes") {
		t.Errorf("interaction with the arm: %s", s)
	}
	// Every predictor assigned by chance: no sentence on other predictors.
	p.Dictionary[1].ByChance = true
	if s := causationSentence(p); !strings.Contains(s, "`arm` and `age` were assigned to the units by chance") || strings.Contains(s, "other predictors") || strings.Contains(s, "measured before") || strings.Contains(s, "do not collapse") {
		t.Errorf("every predictor by chance: %s", s)
	}
}

// TestChanceTermTests: where the dictionary says a predictor was assigned
// by chance, the tests of each term and the Methods draft give only that
// term's slopes a causal reading (estimates of the effect of the
// assignment, given other terms measured before it); with an interaction,
// its own slopes are the effect where the other term is at its reference
// (its columns at 0), and the other term's own slopes and test stay
// associations. Data: termData (seeded; g in three levels, x numeric),
// with g declared assigned_by_chance.
func TestChanceTermTests(t *testing.T) {
	dir := t.TempDir()
	termData(t, dir)
	base := strings.NewReplacer("EFFECTS", "parallel", "PARTIAL", "{}").Replace(termPlan) + "dictionary: {x: {label: x}, g: {assigned_by_chance: true}}\n"
	methodsOf := func(md string) string { return md[strings.Index(md, "## Methods (draft)"):] }
	termsOf := func(md string) string {
		s := md[strings.Index(md, "#### Tests of each term"):]
		return s[:strings.Index(s[4:], "\n#")+4]
	}
	const causal = "The values of `g` were assigned to the units by chance (the plan's dictionary says so, with assigned_by_chance), so its test and its slopes have a causal reading under the trial's conditions: if the assignment was made and kept as planned and the outcome recorded alike in every group, its slopes (on the model's scale) are estimates of the effect of the assignment given the other terms, which holds only if those terms were measured before the assignment (a term the assignment could have changed would take up part of its effect)."
	const others = "For every other term (the interactions with a term assigned by chance read as above) a small p-value says the term is associated with the outcome given the other terms, not that it causes it."
	const methods = "except that the slopes of `g`, assigned to the units by chance, estimate effects of the assignment under the trial's conditions, given the other terms, provided these were measured before the assignment"
	const interaction = " (where such a term enters an interaction, its own slopes estimate the effect of the assignment where the other terms of the interaction have their columns at 0, the interaction how that effect differs with them, and those terms' own slopes remain associations)"

	md := string(renderSource(t, dir, base, 1)["report.md"])
	hasAll(t, "tests of each term (g alone)", termsOf(md), causal+" Its test asks whether the assignment changed the outcome, and it is most sensitive to a change of the form the model gives the assignment (with one slope at every boundary, a shift of the whole distribution towards higher or lower categories): a change of another shape, such as a move towards the middle categories from both ends, can go undetected.", others)
	hasAll(t, "Methods (g alone)", methodsOf(md), methods+"; their p-values")
	if strings.Contains(termsOf(md), "A small p-value says the term is associated") {
		t.Error("the tests of each term deny every term a causal reading")
	}

	inter := strings.Replace(base, "predictors: [x, g]", "predictors: [x, g, {interact: [g, x]}]", 1)
	md = string(renderSource(t, dir, inter, 1)["report.md"])
	if strings.Contains(md, "for any value of") {
		t.Error("the test of a term assigned by chance, with its interaction, is said to ask about any value of the other term: more than a test within the model shows")
	}
	hasAll(t, "tests of each term (g&x)", termsOf(md), causal+" Tested together with g&x, its test asks whether the assignment changed the outcome at all, within the model: its hypothesis is that its slopes and those of g&x are all 0, no effect of the assignment at any value of x among the effects the model allows (one that changes with x only as the columns of g&x let it), and a small p-value does not say at which values of x the assignment changed the outcome. The test of g&x on its own asks whether the effect of the assignment differs with x, within the model and on the model's scale: a large p-value does not show that the effect is the same at every value of x, only that these data show no difference of the form the model gives. Its own slopes estimate the effect of the assignment only where x = 0 (the other terms of the interaction at their reference, their columns at 0), and those of g&x how that effect differs with x: for whom the assignment changed the outcome more or less, not what x causes. The own slopes of x (where g = a) describe an association, not an effect of x, and its test, made with the same interaction, is not a test of an effect of x.", others)
	hasAll(t, "Methods (g&x)", methodsOf(md), methods+interaction+"; their p-values")

	// Without assigned_by_chance every term is an association.
	md = string(renderSource(t, dir, strings.Replace(inter, "dictionary: {x: {label: x}, g: {assigned_by_chance: true}}\n", "", 1), 1)["report.md"])
	hasAll(t, "tests of each term (no assignment by chance)", termsOf(md), "A small p-value says the term is associated with the outcome given the other terms, not that it causes it.")
	if strings.Contains(md, "assigned_by_chance") || strings.Contains(md, "effect of the assignment") {
		t.Error("a causal reading without a predictor assigned by chance")
	}
}
