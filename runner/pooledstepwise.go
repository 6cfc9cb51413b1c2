package runner

import (
	"fmt"
	"sync"

	"ordplan/runner/fit"
	"ordplan/runner/impute"
)

// pooledStepwise gives stepwise selection on imputed data its fits and
// tests: every model of the selection is fitted on each imputed set and
// pooled by Rubin's rules (the selection reads the pooled fit: pooled
// estimates, total covariance, mean log-likelihood), the Wald tests of
// equal slopes are D1 tests and the likelihood-ratio tests D3 tests. So
// each step makes parallel the term whose pooled test has the largest
// p-value, and one partial set serves every imputed set.
func pooledStepwise(an *Analysis, or *OutcomeResult) fit.StepwiseFits {
	im := or.Imputed
	type pooledFit struct {
		per    []*fit.Result
		pooled *impute.Pooled
	}
	var mu sync.Mutex // approaches are selected in parallel
	fits := map[*fit.Result]pooledFit{}
	lookup := func(r *fit.Result) (pooledFit, bool) {
		mu.Lock()
		defer mu.Unlock()
		pf, ok := fits[r]
		return pf, ok
	}
	// Each set fits as a selection on one data set does (its fit and
	// the step of CovariancePolicy.Settle), with that set's rows; the
	// pooled fit flags a term any set flags (poolResults).
	setFit := make([]func(fit.Model) (*fit.Result, error), len(im.Sets))
	for k, d := range im.Sets {
		opt := an.Fit
		opt.Settle = an.Errors.Settle(im.Data[k], d, or.Terms)
		setFit[k] = fit.DataStepwiseFits(d, opt).Fit
	}
	sf := fit.StepwiseFits{Predictors: or.FitData.Predictors}
	sf.Fit = func(m fit.Model) (*fit.Result, error) {
		per := make([]*fit.Result, len(im.Sets))
		for k := range im.Sets {
			r, err := setFit[k](m)
			if err != nil {
				return nil, fmt.Errorf("imputed set %d: %w", k+1, err)
			}
			if !r.OK() {
				c := *r
				c.Message = fmt.Sprintf("in imputed set %d: %s", k+1, r.Message)
				return &c, nil
			}
			per[k] = r
		}
		r, pl, err := poolResults(per, im.obs, im.Sets)
		if err != nil {
			return nil, err
		}
		mu.Lock()
		fits[r] = pooledFit{per, pl}
		mu.Unlock()
		return r, nil
	}
	sf.Wald = func(r *fit.Result, cols []string) fit.Test {
		pf, ok := lookup(r)
		if !ok {
			return missingTest(fit.TestWald, "the model has no usable fit in every imputed set")
		}
		return pooledEqualSlopesOf(r, pf.pooled, cols)
	}
	sf.LR = func(restricted, full *fit.Result) fit.Test {
		pr, ok1 := lookup(restricted)
		pf, ok2 := lookup(full)
		if !ok1 || !ok2 {
			return missingTest(fit.TestLR, "a model has no usable fit in every imputed set")
		}
		return pooledLROf(im.Sets, im.Sets, restricted, full, pr.per, pf.per, 0)
	}
	return sf
}
