package runner

import (
	"slices"

	"ordplan/plan"
	"ordplan/runner/fit"
)

func resultOf(f *FitEntry) *fit.Result {
	if f == nil {
		return nil
	}
	return f.Result
}

func missingTest(name, reason string) fit.Test {
	return fit.Test{Name: name, Reason: reason}
}

// testBlock runs the parallel-lines tests the plan asks for and the nested
// likelihood-ratio tests of one approach and link.
func testBlock(p *plan.Plan, or *OutcomeResult, approach, link string, fopt fit.Options) *TestBlock {
	tb := &TestBlock{Approach: approach, Link: link}
	d := or.FitData
	id := func(level string) string { return approach + "/" + level + "/" + link }
	par, np := or.Find(id(LevelParallel)), or.Find(id(LevelNonparallel))
	cumLogit := approach == "cumulative" && link == "logit"
	pw := probabilityWeights(p)
	var brant *fit.BrantResult
	for _, name := range p.Tests.ParallelLines {
		if pw && name != "wald" {
			if name == "lr" || name == "score" || cumLogit {
				tb.Global = append(tb.Global, missingTest(name, pseudoReason))
			}
			continue
		}
		switch name {
		case "lr":
			tb.Global = append(tb.Global, lrOf(par, np))
		case "score":
			tb.Global = append(tb.Global, scoreOf(d, par, np))
		case "wald":
			if np.OK() {
				tb.Global = append(tb.Global, fit.WaldEqualSlopes(np.Result, allColumns(or.Terms)))
			} else {
				tb.Global = append(tb.Global, missingTest("wald", "the nonparallel model has no usable fit"))
			}
		case "brant":
			if cumLogit {
				brant = fit.Brant(d, fopt)
				t := brant.Omnibus
				if !brant.OK {
					t = missingTest("brant", brant.Reason)
				}
				tb.Global = append(tb.Global, t)
			}
		case "wolfe_gould":
			if cumLogit {
				tb.Global = append(tb.Global, fit.WolfeGould(d, fopt))
			}
		}
	}
	for _, term := range or.Terms {
		pred := term.Name
		vt := VarTests{Predictor: pred}
		for _, name := range p.Tests.ParallelLines {
			if pw && name != "wald" {
				continue
			}
			switch name {
			case "brant":
				if brant != nil && brant.OK {
					vt.Tests = append(vt.Tests, brantTerm(brant, d, term))
				}
			case "wald":
				if np.OK() {
					vt.Tests = append(vt.Tests, fit.WaldEqualSlopes(np.Result, term.Columns))
				}
			case "lr":
				if len(or.Terms) > 1 {
					vt.Tests = append(vt.Tests, lrOf(or.Find(auxID(approach, pred, link)), np))
				} else {
					vt.Tests = append(vt.Tests, lrOf(par, np))
				}
			case "score":
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
	pairs := [][2]string{
		{LevelParallel, LevelConstrained}, {LevelConstrained, LevelPartial}, {LevelParallel, LevelPartial},
		{LevelPartial, LevelNonparallel}, {LevelParallel, LevelNonparallel},
		{LevelParallel, LevelStereotype}, {LevelStereotype, LevelNonparallel},
	}
	for _, pr := range pairs {
		r, f := or.Find(id(pr[0])), or.Find(id(pr[1]))
		if r == nil || f == nil || r.Auxiliary && f.Auxiliary {
			continue
		}
		t := lrOf(r, f)
		if pw {
			t = missingTest("lr", pseudoReason)
		}
		tb.Nested = append(tb.Nested, NestedTest{Restricted: r.ID, Full: f.ID, Test: t})
	}
	return tb
}

// pseudoReason says why likelihood-based tests are not reported with
// probability weights.
const pseudoReason = "not valid with probability weights: the fits maximize a pseudo-likelihood; use the Wald test"

func lrOf(r, f *FitEntry) fit.Test {
	if r == nil || f == nil || r.Result == nil || f.Result == nil {
		return missingTest("lr", "a model was not fitted")
	}
	return fit.LRTest(r.Result, f.Result)
}

func scoreOf(d *fit.Data, par, np *FitEntry) fit.Test {
	if !par.OK() || np == nil {
		return missingTest("score", "the parallel model has no usable fit")
	}
	m, err := np.Spec.Model()
	if err != nil {
		return missingTest("score", err.Error())
	}
	return fit.ScoreTest(d, par.Result, m)
}

// brantTerm is the Brant test of one term: the per-column test for a
// single-column term, the joint test of its columns for a term of several.
func brantTerm(b *fit.BrantResult, d *fit.Data, term fit.Term) fit.Test {
	if len(term.Columns) != 1 {
		t := b.Joint(term.Columns)
		t.Name = "brant"
		return t
	}
	k := slices.Index(d.Predictors, term.Columns[0])
	t := b.PerVariable[k]
	t.Name = "brant"
	return t
}
