package runner

import (
	"fmt"
	"math"
	"slices"

	"ordplan/render/numfmt"
	"ordplan/runner/fit"
	"ordplan/runner/impute"
)

// Tests on imputed data, each computed on every imputed set and pooled:
// likelihood-ratio tests by D3 (pooledLR), Wald tests of the pooled fits
// by D1 (pooledEqualSlopes, pooledLinear), the Brant test by D1 on the
// binary logits' stacked slopes and their joint covariance from each set
// (pooledBrant), and the tests known only by their chi-square statistics
// (score, Wolfe-Gould) by D2 (pooledChi2).

// perSetOf returns fit entry f (one of or.Fits) as fitted on each imputed
// set.
func (or *OutcomeResult) perSetOf(f *FitEntry) []*FitEntry {
	i := slices.Index(or.Fits, f)
	out := make([]*FitEntry, len(or.Imputed.Fits))
	for k, fits := range or.Imputed.Fits {
		out[k] = fits[i]
	}
	return out
}

// pooledChi2 pools a chi-square test computed on each imputed set by D2.
// A negative statistic of a set (possible for approximate likelihood-ratio
// constructions) counts as 0. A negative D2 is set to 0, as is the usual
// practice, but its p-value of 1 would read as a perfect fit where it
// says only that the sets disagree: the test keeps its statistic (F = 0
// on its df) and has no p-value (Negative, P NaN, OK false), Reason saying
// why, so no table shows p = 1 and no rule reads it. The sets' statistics
// are kept in the test (BySet).
func pooledChi2(name string, per []fit.Test) fit.Test {
	chi := make([]float64, len(per))
	for k, t := range per {
		if !t.OK {
			return fit.Test{Name: name, Reason: fmt.Sprintf("in imputed set %d: %s", k+1, t.Reason)}
		}
		if t.DF != per[0].DF {
			return fit.Test{Name: name, Reason: fmt.Sprintf("imputed set %d gives %d degrees of freedom but set 1 %d", k+1, t.DF, per[0].DF)}
		}
		chi[k] = math.Max(t.Chi2, 0)
	}
	d, err := impute.D2(chi, per[0].DF)
	if err != nil {
		return fit.Test{Name: name, Reason: err.Error()}
	}
	t := fTest(0, d, math.NaN(), math.NaN())
	t.Name = name
	t.BySet = chi
	if d.Warnings != "" {
		t.OK, t.Negative, t.P, t.Warning = false, true, math.NaN(), ""
		t.Reason = fmt.Sprintf("%s; the %d imputed sets' statistics (from %s to %s on %d df) vary more than their size allows, so the pooled test is not informative (the p = 1 of F = 0 would not mean that the model fits)",
			D2NegativeWords, len(chi), numfmt.Num(slices.Min(chi)), numfmt.Num(slices.Max(chi)), per[0].DF)
	}
	return t
}

// D2NegativeWords begins the reason of a test pooled by D2 whose statistic
// came out below zero (pooledChi2).
const D2NegativeWords = "no p-value: the D2 statistic came out negative and is shown as 0"

// pooledScore is the score test of restricted (at each set's own
// estimates) against model full, pooled by D2.
func pooledScore(or *OutcomeResult, restricted *FitEntry, full fit.Model) fit.Test {
	if !restricted.OK() || restricted.Pooled == nil {
		return missingTest(fit.TestScore, "the restricted model has no usable fit in every imputed set")
	}
	sets := or.perSetOf(restricted)
	per := make([]fit.Test, len(sets))
	for k, e := range sets {
		per[k] = fit.ScoreTest(or.Imputed.Sets[k], e.Result, full)
	}
	return pooledChi2(fit.TestScore.String(), per)
}

// pooledWolfeGould is the Wolfe-Gould test of each set pooled by D2.
func pooledWolfeGould(or *OutcomeResult, fopt fit.Options) fit.Test {
	per := make([]fit.Test, len(or.Imputed.Sets))
	for k, d := range or.Imputed.Sets {
		per[k] = fit.WolfeGould(d, fopt)
	}
	return pooledChi2(fit.TestWolfeGould.String(), per)
}

// pooledBrant holds the Brant construction of every imputed set.
type pooledBrant struct {
	per []*fit.BrantResult
	dfc impute.Complete // complete-data analysis of the binary logits
}

// pooledBrant returns the Brant construction of every imputed set, made
// on first use.
func (or *OutcomeResult) pooledBrant(fopt fit.Options) *pooledBrant {
	if or.Imputed.brant == nil {
		or.Imputed.brant = newPooledBrant(or, fopt)
	}
	return or.Imputed.brant
}

func newPooledBrant(or *OutcomeResult, fopt fit.Options) *pooledBrant {
	pb := &pooledBrant{}
	for _, d := range or.Imputed.Sets {
		pb.per = append(pb.per, fit.Brant(d, fopt))
	}
	// The binary logits' parameters: J-1 intercepts and slopes; their
	// joint covariance is model-based under any covariance of the fits.
	d := or.Imputed.Sets[0]
	pb.dfc = completeDF(or.Imputed.obs, (d.J-1)*(len(d.Predictors)+1), nil)
	return pb
}

// test is the D1 test that every column in names has equal slopes in all
// binary logits: the stacked slopes and their joint covariance of each
// set pooled by Rubin's rules.
func (pb *pooledBrant) test(names []string) fit.Test {
	sets := make([]impute.Set, len(pb.per))
	var C []float64
	for k, br := range pb.per {
		beta, cov, rows, err := br.Stacked(names)
		if err != nil {
			return missingTest(fit.TestBrant, fmt.Sprintf("in imputed set %d: %v", k+1, err))
		}
		sets[k], C = impute.Set{Est: beta, Cov: cov}, rows
	}
	pl, err := impute.Pool(sets, pb.dfc)
	if err != nil {
		return missingTest(fit.TestBrant, err.Error())
	}
	t, err := impute.D1(pl, C, nil)
	if err != nil {
		return missingTest(fit.TestBrant, err.Error())
	}
	return fTest(fit.TestBrant, t, math.NaN(), math.NaN())
}

// pooledPairTest is pairTest on imputed data: the named test of
// restricted f against full, pooled over the imputed sets.
func pooledPairTest(or *OutcomeResult, kind fit.TestKind, f, full *FitEntry) fit.Test {
	switch kind {
	case fit.TestWald:
		return pooledEqualSlopes(full, freedIn(f, full))
	case fit.TestScore:
		m, err := full.Spec.Model()
		if err != nil {
			return missingTest(fit.TestScore, err.Error())
		}
		return pooledScore(or, f, m)
	case fit.TestBrant:
		return or.pooledBrant(fit.Options{Workers: 1}).test(or.FitData.Predictors)
	case fit.TestLR:
		return pooledLR(or, or.Imputed.Fits, f, full)
	}
	return missingTest(kind, "not a test between two models")
}
