package runner

import (
	"fmt"
	"slices"
	"strings"

	"ordplan/plan"
	"ordplan/runner/fit"
)

// TermTest is the test, in the chosen model, that one predictor term has
// no effect: every slope of its columns 0 at every boundary. A term that
// takes part in an interaction is tested together with every interaction
// that contains it (With): without them its own columns measure its effect
// only where the other terms of the interaction have their columns at 0,
// which depends on their coding and centring. An interaction contained
// in no larger one is tested alone.
type TermTest struct {
	Term string `json:"term"`
	// With are the interactions tested together with the term.
	With    []string `json:"with_interactions,omitempty"`
	Columns []string `json:"columns"`
	// Tested are the quantities set to 0: the chosen model's parameters of
	// the columns, or a constrained column's effects at every boundary
	// when it is the only column of its constraint group.
	Tested []string `json:"tested,omitempty"`
	// Wald is the joint Wald test with the chosen model's covariance
	// (pooled by D1 on imputed data).
	Wald fit.Test `json:"wald"`
	// LR compares the chosen model with its refit without the columns on
	// the same rows (pooled by D3 on imputed data).
	LR fit.Test `json:"lr"`
	// Without names the refit without the columns.
	Without string `json:"restricted_model,omitempty"`
}

// termScope is what one term test drops: a term and the interactions
// containing it, with their columns.
type termScope struct {
	term    string
	with    []string
	columns []string
}

// termScopes lists the term tests of an outcome, in term order: each term
// with the interactions containing it (containingInteractions).
func termScopes(or *OutcomeResult) []termScope {
	var out []termScope
	for i, t := range or.Terms {
		sc := termScope{term: t.Name, columns: slices.Clone(t.Columns)}
		if dz := or.Design; dz != nil && len(dz.Terms) == len(or.Terms) {
			for _, j := range containingInteractions(dz, i) {
				sc.with = append(sc.with, or.Terms[j].Name)
				sc.columns = append(sc.columns, or.Terms[j].Columns...)
			}
		}
		out = append(out, sc)
	}
	return out
}

// without is the chosen model f refitted without cols: the same
// comparison, direction, link and effect structure of every other column,
// a constraint group left without columns dropped with its phi.
func without(f *FitEntry, sc termScope) *FitEntry {
	drop := func(xs []string) []string {
		var out []string
		for _, x := range xs {
			if !slices.Contains(sc.columns, x) {
				out = append(out, x)
			}
		}
		return out
	}
	spec := f.Spec
	spec.Predictors, spec.Nonparallel, spec.Groups = drop(spec.Predictors), drop(spec.Nonparallel), nil
	for _, g := range f.Spec.Groups {
		if ps := drop(g.Predictors); len(ps) > 0 {
			spec.Groups = append(spec.Groups, Group{Name: g.Name, Predictors: ps})
		}
	}
	name := sc.term
	if len(sc.with) > 0 {
		name += " and " + strings.Join(sc.with, ", ")
	}
	return &FitEntry{ID: f.ID + " without " + name, Approach: f.Approach, Effects: f.Effects, Link: f.Link, Spec: spec, Auxiliary: true}
}

// withoutColumns is the fit input d without the columns cols: the same
// rows, outcome, weights and offset.
func withoutColumns(d *fit.Data, cols []string) *fit.Data {
	var keep []int
	var names []string
	for k, p := range d.Predictors {
		if !slices.Contains(cols, p) {
			keep, names = append(keep, k), append(names, p)
		}
	}
	out := &fit.Data{Y: d.Y, J: d.J, Predictors: names, Categories: d.Categories, Weights: d.Weights, Offset: d.Offset}
	if len(keep) == 0 {
		return out
	}
	K, n := len(d.Predictors), d.N()
	out.X = make([]float64, n*len(keep))
	for i := 0; i < n; i++ {
		row, to := d.X[i*K:(i+1)*K], out.X[i*len(keep):(i+1)*len(keep)]
		for j, k := range keep {
			to[j] = row[k]
		}
	}
	return out
}

// startTermTests writes each term test's Wald test (wald: on one data set
// or pooled) and lists the refits its likelihood-ratio test needs (nil
// entries where none is fitted: a test barred under sampling weights, or
// a hypothesis with no chi-square reference).
func startTermTests(an *Analysis, or *OutcomeResult, wald func(*fit.NoEffect) fit.Test) ([]TermTest, []termScope, []*FitEntry) {
	res, inf := or.Chosen.Result, an.Inference
	scopes := termScopes(or)
	out := make([]TermTest, len(scopes))
	refits := make([]*FitEntry, len(scopes))
	for i, sc := range scopes {
		tt := TermTest{Term: sc.term, With: sc.with, Columns: sc.columns}
		ne, err := res.NoEffectOf(sc.columns)
		if err != nil {
			tt.Wald, tt.LR = missingTest(fit.TestWald, err.Error()), missingTest(fit.TestLR, err.Error())
		}
		if !inf.WantsTermWald() {
			tt.Wald = notAskedTest(fit.TestWald, inf.TermTests)
		}
		if !inf.WantsTermLR() {
			tt.LR = notAskedTest(fit.TestLR, inf.TermTests)
		}
		if err != nil {
			out[i] = tt
			continue
		}
		tt.Tested = ne.Names
		if inf.WantsTermWald() {
			tt.Wald = wald(ne)
		}
		if !inf.WantsTermLR() {
			// No refit.
		} else if t, barred := barredTest(an.Errors.Sampling, fit.TestLR, false); barred {
			tt.LR = t
		} else {
			refits[i] = without(or.Chosen, sc)
			tt.Without = refits[i].ID
		}
		out[i] = tt
	}
	return out, scopes, refits
}

// notAskedTest is a term test the plan leaves out (inference.term_tests
// is the word it gives).
func notAskedTest(kind fit.TestKind, word string) fit.Test {
	return missingTest(kind, fmt.Sprintf("left out by the plan (inference.term_tests: %s)", word))
}

// termTestsOff says the plan switches the tests of each term off.
func termTestsOff(an *Analysis) bool { return an.Inference.TermTests == plan.TermTestsNone }

// runTermTests tests each term of the chosen model (TermTest): the Wald
// test in the chosen fit, and the likelihood-ratio test against its refit
// without the term's columns on the same rows, made here through fitGrids.
func runTermTests(an *Analysis, or *OutcomeResult, opt Options) {
	if or.Chosen == nil || !or.Chosen.OK() || termTestsOff(an) {
		return
	}
	res := or.Chosen.Result
	out, scopes, refits := startTermTests(an, or, func(ne *fit.NoEffect) fit.Test { return fit.WaldNoEffect(res, ne) })
	for i, e := range refits {
		if e == nil {
			continue
		}
		// One term at a time, each fit on every worker: one copy of the
		// data without the term's columns is held at a time. Here: the
		// target cannot be redone elsewhere.
		fitGrid([]*FitEntry{e}, gridTarget{label: or.Outcome.Column, data: withoutColumns(or.FitData, scopes[i].columns), fit: an.Fit}, Options{Workers: opt.Workers})
		out[i].LR = termLR(e, or.Chosen)
	}
	or.TermTests = out
}

// termLR is the likelihood-ratio test of the refit r within the chosen
// model f (sameDF).
func termLR(r, f *FitEntry) fit.Test {
	if r.Err != "" && r.Result == nil {
		return missingTest(fit.TestLR, r.ID+": "+r.Err)
	}
	t := lrOf(r, f)
	return sameDF(t, r, f)
}

// sameDF refuses a likelihood-ratio test whose degrees of freedom (the
// difference in parameters) do not count the quantities the term test
// sets to 0: the models would not be nested as the hypothesis says.
func sameDF(t fit.Test, r, f *FitEntry) fit.Test {
	ne, err := f.Result.NoEffectOf(termColumnsDropped(r, f))
	if t.OK && (err != nil || len(ne.R) != t.DF) {
		return missingTest(fit.TestLR, fmt.Sprintf("%s is not %s with the term's parameters set to 0", r.ID, f.ID))
	}
	return t
}

// termColumnsDropped are the columns of f that its refit r has not.
func termColumnsDropped(r, f *FitEntry) []string {
	var out []string
	for _, p := range f.Spec.Predictors {
		if !slices.Contains(r.Spec.Predictors, p) {
			out = append(out, p)
		}
	}
	return out
}

// runPooledTermTests is runTermTests on imputed data: the Wald test pooled
// by D1 in the pooled chosen fit, the likelihood-ratio test by D3 from the
// chosen model's and the refit's fits on every imputed set (the refit
// pooled by Rubin's rules for the statistics at the pooled estimates).
func runPooledTermTests(an *Analysis, or *OutcomeResult, opt Options) {
	if or.Chosen == nil || !or.Chosen.OK() || or.Chosen.Pooled == nil || termTestsOff(an) {
		return
	}
	res, pl := or.Chosen.Result, or.Chosen.Pooled
	out, scopes, refits := startTermTests(an, or, func(ne *fit.NoEffect) fit.Test {
		return pooledWald(res, pl, ne.R, ne.Offsets(res.Estimates))
	})
	run := or.Imputed
	chosen, cerr := or.chosenPerSet()
	for i, e := range refits {
		if e == nil {
			continue
		}
		if cerr != nil {
			out[i].LR = missingTest(fit.TestLR, cerr.Error())
			continue
		}
		// One term at a time (its refit on every set), as on one data set.
		var perSet []*FitEntry
		var sets []*fit.Data
		var parts []gridPart
		for k, d := range run.Sets {
			c := *e
			sd := withoutColumns(d, scopes[i].columns)
			perSet, sets = append(perSet, &c), append(sets, sd)
			parts = append(parts, gridPart{entries: []*FitEntry{&c}, target: gridTarget{label: fmt.Sprintf("%s, imputed set %d/%d", or.Outcome.Column, k+1, run.M), data: sd, fit: an.Fit}})
		}
		fitGrids(parts, Options{Workers: opt.Workers})
		out[i].LR = pooledTermLR(or, e, perSet, sets, chosen)
	}
	or.TermTests = out
}

// pooledTermLR is the D3 test of the refit e (fitted on every imputed set:
// perSet, on the sets' data without the term, sets) within the chosen
// model (its fits on every set, chosen).
func pooledTermLR(or *OutcomeResult, e *FitEntry, perSet []*FitEntry, sets []*fit.Data, chosen []*fit.Result) fit.Test {
	rs := make([]*fit.Result, len(perSet))
	for k, f := range perSet {
		if !f.OK() {
			why := f.Err
			if f.Result != nil {
				why = string(f.Result.Status)
			}
			return missingTest(fit.TestLR, fmt.Sprintf("%s has no usable fit in imputed set %d (%s)", e.ID, k+1, why))
		}
		rs[k] = f.Result
	}
	r, pl, err := poolResults(rs, or.Imputed.obs, sets)
	if err != nil {
		return missingTest(fit.TestLR, err.Error())
	}
	e.Result, e.Pooled = r, pl
	t := pooledLROf(or.Imputed.Sets, sets, r, or.Chosen.Result, rs, chosen)
	return sameDF(t, e, or.Chosen)
}
