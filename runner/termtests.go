package runner

import (
	"fmt"
	"slices"
	"strings"

	"ordplan/plan"
	"ordplan/runner/design"
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
	// Group names the constraint group a test of a whole group tests
	// (its columns, not a term; "" for the plan's single group, which has
	// no name); absent for a term's test.
	Group *string `json:"constraint_group,omitempty"`
	// Column names the data column a test of every term reading it tests
	// (a column that makes two or more terms, such as log(x) and sqrt(x):
	// each term's own test holds the other fixed, so only this one asks
	// whether the column is associated with the outcome); With then lists
	// those terms and every interaction containing one. Absent for a
	// term's test.
	Column *string `json:"data_column,omitempty"`
	// Bound says why the tests' degrees of freedom exceed the quantities
	// set to 0, when they do: the columns make up a whole constraint
	// group (fit.NoEffect.DF), and the p-values are upper bounds.
	Bound string `json:"reference,omitempty"`
}

// termScope is what one term test drops: a term and the interactions
// containing it, with their columns; or the columns of a constraint
// group (group set).
type termScope struct {
	term    string
	with    []string
	columns []string
	group   *string
	column  *string
}

// termScopes lists the term tests of an outcome, in term order: each term
// with the interactions containing it (containingInteractions); then
// each data column that makes several terms, with every term reading it
// (columnScopes); then each constraint group of several columns of the
// chosen model, in its order, whose columns are not those of a term's
// test.
func termScopes(or *OutcomeResult) []termScope {
	var out []termScope
	dz := or.Design
	if dz != nil && len(dz.Terms) != len(or.Terms) {
		dz = nil
	}
	for i, t := range or.Terms {
		sc := termScope{term: t.Name, columns: slices.Clone(t.Columns)}
		if dz != nil {
			for _, j := range containingInteractions(dz, i) {
				sc.with = append(sc.with, or.Terms[j].Name)
				sc.columns = append(sc.columns, or.Terms[j].Columns...)
			}
		}
		out = append(out, sc)
	}
	terms := len(out)
	if dz != nil {
		out = append(out, columnScopes(dz)...)
	}
	for _, g := range or.Chosen.Spec.Groups {
		same := func(sc termScope) bool {
			return len(sc.columns) == len(g.Predictors) && !slices.ContainsFunc(g.Predictors, func(c string) bool { return !slices.Contains(sc.columns, c) })
		}
		if len(g.Predictors) < 2 || slices.ContainsFunc(out[:terms], same) {
			continue
		}
		name := g.Name
		out = append(out, termScope{term: GroupLabel(name), columns: slices.Clone(g.Predictors), group: &name})
	}
	return out
}

// columnScopes are the tests of the data columns that make two or more
// terms of dz (not interactions), in the order of the columns: each
// drops every term reading the column and every interaction containing
// one of them, so that it asks whether the column is associated with the
// outcome at all, as a term's test does for a column that makes one term
// (a polynomial or spline is one term, tested whole already).
func columnScopes(dz *design.Design) []termScope {
	var out []termScope
	for s, src := range dz.Sources {
		var reading []int
		for k, t := range dz.Terms {
			if t.Kind != design.KindInteraction && t.Source == s {
				reading = append(reading, k)
			}
		}
		if len(reading) < 2 {
			continue
		}
		name := src.Name
		sc := termScope{term: ColumnLabel(name), column: &name}
		for k, t := range dz.Terms {
			if slices.Contains(reading, k) || t.Kind == design.KindInteraction && slices.ContainsFunc(baseTerms(dz, k), func(b int) bool { return slices.Contains(reading, b) }) {
				sc.with = append(sc.with, t.Name)
				sc.columns = append(sc.columns, t.Columns...)
			}
		}
		out = append(out, sc)
	}
	return out
}

// ColumnLabel is how the tests of each term name the test of every term
// reading one data column: "column x" (no term name holds a space).
func ColumnLabel(name string) string { return "column " + name }

// GroupLabel is how the tests of each term name the test of a whole
// constraint group: "constraint group NAME", or "the constraint group"
// for the plan's single group, which has no name.
func GroupLabel(name string) string {
	if name == "" {
		return "the constraint group"
	}
	return "constraint group " + name
}

// boundNote says why a test of the columns of whole constraint groups
// (ne.Groups) is referred to more degrees of freedom than it sets
// quantities to 0, and what its p-values are; "" when ne empties none.
func boundNote(ne *fit.NoEffect) string {
	if len(ne.Groups) == 0 {
		return ""
	}
	var gs []string
	for _, g := range ne.Groups {
		gs = append(gs, strings.Join(g, ", "))
	}
	return fmt.Sprintf("%s make up a whole constraint group, whose common factor phi has no meaning without them, so the tests have no chi-square reference of their own: they are referred to %d degrees of freedom (chi-square; on imputed data the F statistic's numerator), those of the same columns made nonparallel (a model the constrained one is nested in, whose likelihood-ratio statistic is never smaller), so their p-values are upper bounds (conservative); the Wald statistic, whose covariance carries phi's uncertainty, can be much the smaller of the two here: read the likelihood ratio",
		strings.Join(gs, "; "), ne.DF)
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
	switch {
	case sc.column != nil:
		name += " (" + strings.Join(sc.with, ", ") + ")"
	case len(sc.with) > 0:
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
		tt := TermTest{Term: sc.term, With: sc.with, Columns: sc.columns, Group: sc.group, Column: sc.column}
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
		tt.Tested, tt.Bound = ne.Names, boundNote(ne)
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
// model f, referred to the degrees of freedom of the hypothesis
// (nestedAsTested).
func termLR(r, f *FitEntry) fit.Test {
	if r.Err != "" && r.Result == nil {
		return missingTest(fit.TestLR, r.ID+": "+r.Err)
	}
	ne, why := nestedAsTested(r, f)
	t := lrOf(r, f)
	switch {
	case t.OK && why != "":
		return missingTest(fit.TestLR, why)
	case t.OK && ne.DF != t.DF:
		t.DF, t.P = ne.DF, fit.ChiSquareP(t.Chi2, ne.DF)
	}
	return t
}

// nestedAsTested is the hypothesis of no effect of the columns of f that
// its refit r has not, or why the two are not nested as it says: r must
// have as many parameters fewer as the hypothesis drops (the quantities
// set to 0, and the phi of a group emptied).
func nestedAsTested(r, f *FitEntry) (*fit.NoEffect, string) {
	ne, err := f.Result.NoEffectOf(termColumnsDropped(r, f))
	if err != nil || r.Result == nil || ne.Dropped != f.Result.NParams-r.Result.NParams {
		return nil, fmt.Sprintf("%s is not %s with the term's parameters set to 0", r.ID, f.ID)
	}
	return ne, ""
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
		return pooledWaldOn(res, pl, ne.R, ne.Offsets(res.Estimates), ne.DF)
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
	ne, why := nestedAsTested(e, or.Chosen)
	df := 0
	if ne != nil {
		df = ne.DF
	}
	t := pooledLROf(or.Imputed.Sets, sets, r, or.Chosen.Result, rs, chosen, df)
	if t.OK && why != "" {
		return missingTest(fit.TestLR, why)
	}
	return t
}
