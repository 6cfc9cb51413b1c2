package runner

import (
	"slices"

	"ordplan/runner/fit"
)

func resultOf(f *FitEntry) *fit.Result {
	if f == nil {
		return nil
	}
	return f.Result
}

func missingTest(kind fit.TestKind, reason string) fit.Test {
	return fit.Test{Name: kind.String(), Reason: reason}
}

// cumLogitOnly is why a Brant or Wolfe-Gould test the plan asks for has no
// value for another approach or link: the test is shown as not computed,
// with this reason, rather than left out without a word.
const cumLogitOnly = "defined for the cumulative logit model only"

// OneBoundary reports whether the outcome has two categories: one
// boundary, so that every predictor has one slope whatever the effect
// structure and the parallel-lines assumption has nothing to test. The one
// decision of both paths (testBlock on one data set, pooledTestBlock on
// imputed sets: oneBoundaryTests) and of the report, which says so
// instead of showing the tests; BinaryWarnings says it before the data
// are read.
func (or *OutcomeResult) OneBoundary() bool { return or.FitData != nil && or.FitData.J == 2 }

// oneBoundaryReason is why a parallel-lines test of an outcome with two
// categories is not computed.
const oneBoundaryReason = "two categories, one boundary: the parallel-lines assumption has nothing to test"

// oneBoundaryTests is the block of parallel-lines tests of an outcome with
// two categories (OneBoundary): each test the plan asks for, recorded as
// not computed with oneBoundaryReason, and no test of a single term; nil
// for any other outcome. The nested tests are the caller's.
func oneBoundaryTests(an *Analysis, or *OutcomeResult, approach fit.Comparison, link fit.Link) *TestBlock {
	if !or.OneBoundary() {
		return nil
	}
	tb := &TestBlock{Approach: approach, Link: link}
	for _, kind := range an.Tests.ParallelLines {
		tb.Global = append(tb.Global, missingTest(kind, oneBoundaryReason))
	}
	return tb
}

// testBlock runs the parallel-lines tests the plan asks for and the nested
// likelihood-ratio tests of one approach and link.
func testBlock(an *Analysis, or *OutcomeResult, approach fit.Comparison, link fit.Link) *TestBlock {
	sw, fopt := an.Errors.Sampling, an.Fit
	if tb := oneBoundaryTests(an, or, approach, link); tb != nil {
		tb.Nested = or.nestedTests(approach, link, nestedLR(sw, lrOf))
		return tb
	}
	tb := &TestBlock{Approach: approach, Link: link}
	d := or.FitData
	cell := func(s fit.Structure) *FitEntry { return or.Cell(approach, s, link) }
	par, np := cell(fit.ParallelEffects), cell(fit.NonparallelEffects)
	cumLogit := approach == fit.Cumulative && link == fit.Logit
	var brant *fit.BrantResult
	for _, kind := range an.Tests.ParallelLines {
		if t, barred := barredTest(sw, kind, cumLogit); barred {
			tb.Global = append(tb.Global, t)
			continue
		}
		switch kind {
		case fit.TestLR:
			tb.Global = append(tb.Global, lrOf(par, np))
		case fit.TestScore:
			tb.Global = append(tb.Global, scoreOf(d, par, np))
		case fit.TestWald:
			if np.OK() {
				tb.Global = append(tb.Global, fit.WaldEqualSlopes(np.Result, allColumns(or.Terms)))
			} else {
				tb.Global = append(tb.Global, missingTest(fit.TestWald, "the nonparallel model has no usable fit"))
			}
		case fit.TestBrant:
			brant = fit.Brant(d, fopt)
			t := brant.Omnibus
			if !brant.OK {
				t = missingTest(fit.TestBrant, brant.Reason)
			}
			tb.Global = append(tb.Global, t)
		case fit.TestWolfeGould:
			tb.Global = append(tb.Global, fit.WolfeGould(d, fopt))
		}
	}
	for _, term := range or.Terms {
		pred := term.Name
		vt := VarTests{Predictor: pred}
		for _, kind := range an.Tests.ParallelLines {
			if _, barred := barredTest(sw, kind, cumLogit); barred {
				continue
			}
			switch kind {
			case fit.TestBrant:
				if brant != nil && brant.OK {
					vt.Tests = append(vt.Tests, brantTerm(brant, d, term))
				}
			case fit.TestWald:
				if np.OK() {
					vt.Tests = append(vt.Tests, fit.WaldEqualSlopes(np.Result, term.Columns))
				}
			case fit.TestLR:
				vt.Tests = append(vt.Tests, lrOf(or.termRestricted(approach, term, link), np))
			case fit.TestScore:
				if par.OK() {
					spec := par.Spec
					spec.Nonparallel = term.Columns
					if m, err := spec.Model(); err == nil {
						vt.Tests = append(vt.Tests, fit.ScoreTest(d, par.Result, m))
					}
				}
			}
		}
		if len(vt.Tests) > 0 {
			tb.PerVariable = append(tb.PerVariable, vt)
		}
	}
	tb.Nested = or.nestedTests(approach, link, nestedLR(sw, lrOf))
	return tb
}

// termRestricted is the model in which term alone is parallel, restricted
// within the nonparallel model by the term's likelihood-ratio test: the
// auxiliary fit, or the parallel model when the term is the only one.
func (or *OutcomeResult) termRestricted(a fit.Comparison, term fit.Term, l fit.Link) *FitEntry {
	if len(or.Terms) > 1 {
		return or.OnlyParallel(a, term.Name, l)
	}
	return or.Cell(a, fit.ParallelEffects, l)
}

// nestedTests runs the nested likelihood-ratio test (lr) of every pair of
// nestedPairs fitted for an approach and link.
func (or *OutcomeResult) nestedTests(a fit.Comparison, l fit.Link, lr func(r, f *FitEntry) fit.Test) []NestedTest {
	var out []NestedTest
	for _, pr := range nestedPairs {
		r, f := or.Cell(a, pr[0], l), or.Cell(a, pr[1], l)
		if r == nil || f == nil || r.Auxiliary && f.Auxiliary {
			continue
		}
		out = append(out, NestedTest{Restricted: r.ID, Full: f.ID, Test: lr(r, f)})
	}
	return out
}

// barredTest is the entry, shown as not computed with its reason, of a
// test of kind that cannot be computed for an approach and link, on one
// data set or pooled over imputed sets alike: a Brant or Wolfe-Gould test
// outside the cumulative logit model, and under sampling weights every
// test that needs a likelihood (fit.TestKind.NeedsLikelihood). barred is
// false when the test can be computed.
func barredTest(sampling bool, kind fit.TestKind, cumLogit bool) (t fit.Test, barred bool) {
	switch {
	case (kind == fit.TestBrant || kind == fit.TestWolfeGould) && !cumLogit:
		return missingTest(kind, cumLogitOnly), true
	case sampling && kind.NeedsLikelihood():
		return missingTest(kind, pseudoReason), true
	}
	return fit.Test{}, false
}

// nestedLR is the nested likelihood-ratio test lr of restricted within
// full, shown as not computed under sampling weights (barredTest).
func nestedLR(sampling bool, lr func(r, f *FitEntry) fit.Test) func(r, f *FitEntry) fit.Test {
	return func(r, f *FitEntry) fit.Test {
		if t, barred := barredTest(sampling, fit.TestLR, false); barred {
			return t
		}
		return lr(r, f)
	}
}

// pseudoReason says why likelihood-based tests are not reported with
// sampling weights.
const pseudoReason = "not valid with sampling weights: the fits maximize a pseudo-likelihood; use the Wald test"

func lrOf(r, f *FitEntry) fit.Test {
	if r == nil || f == nil || r.Result == nil || f.Result == nil {
		return missingTest(fit.TestLR, "a model was not fitted")
	}
	return fit.LRTest(r.Result, f.Result)
}

func scoreOf(d *fit.Data, par, np *FitEntry) fit.Test {
	if !par.OK() || np == nil {
		return missingTest(fit.TestScore, "the parallel model has no usable fit")
	}
	m, err := np.Spec.Model()
	if err != nil {
		return missingTest(fit.TestScore, err.Error())
	}
	return fit.ScoreTest(d, par.Result, m)
}

// brantTerm is the Brant test of one term: the per-column test for a
// single-column term, the joint test of its columns for a term of several.
func brantTerm(b *fit.BrantResult, d *fit.Data, term fit.Term) fit.Test {
	if len(term.Columns) != 1 {
		t := b.Joint(term.Columns)
		t.Name = fit.TestBrant.String()
		return t
	}
	k := slices.Index(d.Predictors, term.Columns[0])
	t := b.PerVariable[k]
	t.Name = fit.TestBrant.String()
	return t
}

// nestedPairs are the (restricted, full) effect structures of one approach
// and link compared by nested likelihood-ratio tests, in report order;
// single and imputed runs use the same list.
var nestedPairs = [][2]fit.Structure{
	{fit.ParallelEffects, fit.ConstrainedEffects}, {fit.ConstrainedEffects, fit.PartialEffects}, {fit.ParallelEffects, fit.PartialEffects},
	{fit.PartialEffects, fit.NonparallelEffects}, {fit.ParallelEffects, fit.NonparallelEffects},
	{fit.ParallelEffects, fit.StereotypeEffects}, {fit.StereotypeEffects, fit.NonparallelEffects},
}
