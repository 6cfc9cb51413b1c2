package runner

import (
	"math"
	"strconv"
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner/fit"
)

// The fifteen p-values of the worked example in Benjamini and Hochberg
// (1995, J. R. Statist. Soc. B 57, section 4.1), written from memory. The
// adjusted values were computed with R's stats::p.adjust (methods "holm"
// and "BH"), a general-purpose library. The paper's conclusion: at
// q = 0.05 the step-up procedure rejects the four smallest, and the
// Bonferroni-type procedures only the three smallest.
func TestHolmAndBHWorkedExample(t *testing.T) {
	p := []float64{0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459, 0.3240, 0.4262, 0.5719, 0.6528, 0.7590, 1.000}
	holm := []float64{0.0015, 0.0056, 0.0247, 0.1140, 0.2211, 0.2780, 0.2780, 0.2780, 0.3213, 1, 1, 1, 1, 1, 1}
	bh := []float64{0.0015, 0.0030, 0.0095, 0.035625, 0.0603, 0.0638571428571429, 0.0638571428571429, 0.0645,
		0.0765, 0.4860, 0.5811818181818181, 0.7148749999999999, 0.7532307692307693, 0.8132142857142857, 1}
	// The same p-values in another order give the same adjusted values,
	// each at its place.
	perm := []int{14, 3, 0, 7, 9, 1, 12, 5, 10, 2, 13, 6, 11, 4, 8}
	shuffled := make([]float64, len(p))
	for i, j := range perm {
		shuffled[i] = p[j]
	}
	for _, c := range []struct {
		name string
		got  []float64
		want []float64
		at   func(i int) int
	}{
		{"holm", HolmAdjust(p), holm, func(i int) int { return i }},
		{"bh", BHAdjust(p), bh, func(i int) int { return i }},
		{"holm shuffled", HolmAdjust(shuffled), holm, func(i int) int { return perm[i] }},
		{"bh shuffled", BHAdjust(shuffled), bh, func(i int) int { return perm[i] }},
	} {
		for i, g := range c.got {
			if w := c.want[c.at(i)]; math.Abs(g-w) > 1e-12 {
				t.Errorf("%s[%d] = %.16g, want %.16g", c.name, i, g, w)
			}
		}
	}
	count := func(adj []float64) int {
		n := 0
		for _, a := range adj {
			if a <= 0.05 {
				n++
			}
		}
		return n
	}
	if n := count(BHAdjust(p)); n != 4 {
		t.Errorf("BH rejects %d at 0.05, the paper 4", n)
	}
	if n := count(HolmAdjust(p)); n != 3 {
		t.Errorf("Holm rejects %d at 0.05, want 3", n)
	}
}

// The family is every hypothesis of every outcome in its chosen model;
// tests in other models and outcomes without a choice are left out.
func TestAdjustHypothesesFamily(t *testing.T) {
	chosen := func(id string) *FitEntry { return &FitEntry{ID: id} }
	ok := func(p float64) fit.Test { return fit.Test{Name: "wald", OK: true, P: p} }
	a := &OutcomeResult{Chosen: chosen("m1"), Hypotheses: []HypothesisResult{
		{Text: "h1", Model: "m1", Test: ok(0.01)}, {Text: "h1", Model: "m2", Test: ok(0.001)},
		{Text: "h2", Model: "m1", Test: ok(0.04)}, {Text: "h3", Model: "m1", Test: fit.Test{Name: "wald", Reason: "singular"}},
	}}
	b := &OutcomeResult{Chosen: chosen("m3"), Hypotheses: []HypothesisResult{{Text: "h1", Model: "m3", Test: ok(0.03)}}}
	c := &OutcomeResult{Hypotheses: []HypothesisResult{{Text: "h1", Model: "m1", Test: ok(0.0001)}}}
	p := &plan.Plan{Inference: plan.Inference{Hypotheses: []plan.Hypothesis{{Text: "h1"}}, Multiplicity: plan.MultiplicityHolm}}
	res := &Result{Plan: p, Outcomes: []*OutcomeResult{a, b, c}}
	adjustHypotheses(ResolvePlan(p), res)
	// Family {0.01, 0.04, 0.03}: Holm gives 0.03, 0.06, 0.06.
	want := map[*HypothesisResult]float64{&a.Hypotheses[0]: 0.03, &a.Hypotheses[2]: 0.06, &b.Hypotheses[0]: 0.06}
	for h, w := range want {
		if h.Adjusted == nil || math.Abs(*h.Adjusted-w) > 1e-15 || h.Adjustment != "holm" {
			t.Errorf("%s in %s: %v, want %v", h.Text, h.Model, h.Adjusted, w)
		}
	}
	for _, h := range []*HypothesisResult{&a.Hypotheses[1], &a.Hypotheses[3], &c.Hypotheses[0]} {
		if h.Adjusted != nil {
			t.Errorf("%s in %s adjusted", h.Text, h.Model)
		}
	}
	if notes := res.RunNotes(PlainText, strconv.Quote); len(notes) != 1 || !strings.Contains(notes[0], "over a family of 3 tests") || !strings.Contains(notes[0], "1 hypothesis test in a chosen model could not be computed") {
		t.Errorf("notes %q", notes)
	}
}

// A hypothesis of the plan that the chosen model cannot test (it names a
// parameter that model does not have) is not in the family, and the note
// says which, where, and whether another candidate tests it: a reviewer
// counting the plan's hypotheses must find every one either in the family
// or named as left out, with the true reason.
func TestAdjustHypothesesNamesThoseLeftOut(t *testing.T) {
	ok := func(p float64) fit.Test { return fit.Test{Name: "wald", OK: true, P: p} }
	a := &OutcomeResult{Chosen: &FitEntry{ID: "m1"}, Hypotheses: []HypothesisResult{
		{Text: "h1", Line: 6, Model: "m1", Test: ok(0.01)}, {Text: "x[1] = x[2]", Line: 7, Model: "m2", Test: ok(0.2)},
		// Tested nowhere: hypothesisTests gives one result without a model.
		{Text: "z[1] = 0", Line: 8, Test: fit.Test{Name: "wald", Reason: "no fitted model has the parameters it names"}}}}
	p := &plan.Plan{Inference: plan.Inference{Hypotheses: []plan.Hypothesis{{Text: "h1", Line: 6}, {Text: "x[1] = x[2]", Line: 7}, {Text: "z[1] = 0", Line: 8}}, Multiplicity: plan.MultiplicityHolm}}
	res := &Result{Plan: p, Outcomes: []*OutcomeResult{a}}
	adjustHypotheses(ResolvePlan(p), res)
	// In plain text (decisions.json) the hypotheses are quoted; the
	// report writes them as code (render's test).
	if notes := res.RunNotes(PlainText, strconv.Quote); len(notes) != 1 || !strings.Contains(notes[0], "over a family of 1 tests") ||
		!strings.Contains(notes[0], `not in the family, since the chosen model does not have every parameter it names (it is tested only in the other candidates that have them, descriptively): "x[1] = x[2]" (plan line 7) in m1;`) ||
		!strings.Contains(notes[0], `not in the family, since no fitted candidate model of the outcome has every parameter it names (those that would have them did not fit, or the names are another outcome's): "z[1] = 0" (plan line 8) in m1.`) {
		t.Errorf("notes %q", notes)
	}
	if res.Multiplicity == nil || len(res.Multiplicity.Outside) != 2 || !res.Multiplicity.Outside[0].Elsewhere || res.Multiplicity.Outside[1].Elsewhere || len(res.Notes) != 0 {
		t.Errorf("family %+v, notes %q", res.Multiplicity, res.Notes)
	}
	if a.Hypotheses[1].Adjusted != nil || a.Hypotheses[0].Adjusted == nil || *a.Hypotheses[0].Adjusted != 0.01 {
		t.Errorf("adjusted: %+v", a.Hypotheses)
	}
}
