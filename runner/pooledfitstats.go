package runner

import (
	"fmt"
	"math"

	"ordplan/runner/fit"
	"ordplan/runner/impute"
)

// runPooledFitStats is runFitStats on imputed data: every usable pooled
// candidate against the thresholds-only model of its approach and link,
// both fitted on every imputed set. The likelihood-ratio test is pooled by
// D3 (the thresholds-only model at the mean of the sets' thresholds, the
// candidate at its pooled estimates); LL0 and the pseudo-R2 measures are
// the means over the sets of each set's value. The Lipsitz and
// Pulkstenis-Robinson tests are pooled by runPooledGoodnessOfFit.
func runPooledFitStats(a *Analysis, or *OutcomeResult) {
	type nulls struct {
		rec  *NullRecord
		per  []*fit.Result
		mean []float64 // the thresholds averaged over the sets
	}
	byKey := map[string]*nulls{}
	im := or.Imputed
	for _, f := range or.Fits {
		if f.Auxiliary || !f.OK() || f.Pooled == nil {
			continue
		}
		key := fit.ModelID(f.Result.Model.ComparisonName(), "thresholds-only", f.Link)
		n := byKey[key]
		if n == nil {
			n = &nulls{rec: &NullRecord{Approach: f.Approach, Link: f.Link}}
			for k, d := range im.Sets {
				r, _ := fit.FitNull(d, f.Result.Model, a.Fit)
				if r == nil || !r.OK() {
					n.rec.Error = fmt.Sprintf("the thresholds-only model has no finite maximum in imputed set %d", k+1)
					n.per = nil
					break
				}
				n.per = append(n.per, r)
			}
			if n.per != nil {
				n.rec.Result = n.per[0]
				n.mean = make([]float64, len(n.per[0].Estimates))
				for _, r := range n.per {
					for j, v := range r.Estimates {
						n.mean[j] += v / float64(len(n.per))
					}
				}
			}
			byKey[key] = n
			or.Nulls = append(or.Nulls, n.rec)
		}
		o := pooledOverall(or, f, n.per, n.mean)
		if a.Errors.Sampling && (o.LR.OK || o.LR.Negative) {
			o.LR = fit.Test{Name: o.LR.Name, Reason: likelihoodNote}
		}
		or.Overall = append(or.Overall, OverallRecord{Model: f.ID, Null: key, Overall: o})
	}
}

// pooledOverall is the overall fit of pooled candidate f against its
// thresholds-only fits of each set (nil when one failed) with their mean
// thresholds.
func pooledOverall(or *OutcomeResult, f *FitEntry, nulls []*fit.Result, nullMean []float64) fit.Overall {
	nan := math.NaN()
	o := fit.Overall{NullLogLik: nan, McFadden: nan, CoxSnell: nan, Nagelkerke: nan, McKelveyZavoina: nan}
	if nulls == nil {
		o.LR = missingTest(fit.TestLR, "the thresholds-only model has no fit in every imputed set")
		o.LR.Name = "lr_vs_null"
		o.MZNote = "no finite log-likelihood"
		return o
	}
	im := or.Imputed
	m := float64(len(im.Sets))
	fits := or.perSetOf(f)
	own, at := make([]float64, len(im.Sets)), make([]float64, len(im.Sets))
	tol, negative := 0.0, ""
	o.NullLogLik, o.McFadden, o.CoxSnell, o.Nagelkerke, o.McKelveyZavoina = 0, 0, 0, 0, 0
	for k, d := range im.Sets {
		ok := fit.OverallFit(d, fits[k].Result, nulls[k])
		o.NullLogLik += ok.NullLogLik / m
		o.McFadden += ok.McFadden / m
		o.CoxSnell += ok.CoxSnell / m
		o.Nagelkerke += ok.Nagelkerke / m
		o.McKelveyZavoina += ok.McKelveyZavoina / m // NaN when not defined in the sets
		if k == 0 {
			o.MZNote = ok.MZNote
		}
		var why string
		if own[k], why = setLR(k, nulls[k], fits[k].Result); why != "" && negative == "" {
			negative = why // the measures are averaged all the same
		}
		tol = max(tol, fit.LRTolerance(nulls[k].LogLik, fits[k].Result.LogLik))
		lf, err := fit.PartitionSums(d, f.Result.Model, f.Result.Estimates, 0)
		if err != nil || lf.Bad {
			o.LR = missingTest(fit.TestLR, fmt.Sprintf("the model cannot be evaluated at its pooled estimates in imputed set %d", k+1))
			o.LR.Name = "lr_vs_null"
			return o
		}
		nd := &fit.Data{Y: d.Y, J: d.J, Categories: d.Categories, Weights: d.Weights, Offset: d.Offset}
		l0, err := fit.PartitionSums(nd, fit.NullModel(f.Result.Model), nullMean, 0)
		if err != nil || l0.Bad {
			o.LR = missingTest(fit.TestLR, fmt.Sprintf("the thresholds-only model cannot be evaluated at its pooled thresholds in imputed set %d", k+1))
			o.LR.Name = "lr_vs_null"
			return o
		}
		at[k] = 2 * (lf.LogLik - l0.LogLik)
	}
	df := f.Result.NParams - nulls[0].NParams
	if df < 1 {
		o.LR = missingTest(fit.TestLR, "the model has no slope")
	} else if negative != "" {
		o.LR = negativeTest(negative, &fit.Result{LogLik: o.NullLogLik}, f.Result)
	} else if why := negativeAtPooled(at, tol, "fitted", "thresholds-only"); why != "" {
		o.LR = negativeTest(why, &fit.Result{LogLik: o.NullLogLik}, f.Result)
	} else if t, err := impute.D3(own, at, df); err != nil {
		o.LR = missingTest(fit.TestLR, err.Error())
	} else {
		o.LR = fTest(fit.TestLR, t, o.NullLogLik, f.Result.LogLik)
	}
	o.LR.Name = "lr_vs_null"
	return o
}
