package runner

import (
	"fmt"
	"math"
)

// Rate is a proportion of R replicates (a power study's simulated data
// sets, or selection_stability's bootstrap resamples) with its Monte
// Carlo standard error sqrt(p (1 - p) / R).
type Rate struct {
	Count int     `json:"count"`
	Of    int     `json:"of"`
	Rate  float64 `json:"rate"`
	SE    float64 `json:"mc_se"`
}

// Text is how every rate of a power study is written, in its report and
// on the command's summary line: the share with its Monte Carlo standard
// error in brackets, se naming it ("": none, "MC se "), "0.268 (0.022)".
// At 0 or R of R replicates the standard error is 0 and says nothing of
// the rate's uncertainty: the bracket gives the count and the exact
// one-sided 95% confidence bound instead (Clopper-Pearson: the rate is
// below 1 - 0.05^(1/R) when none of R replicates counts, above 0.05^(1/R)
// when all do), "0.000 (0 of 100; below 0.030 with 95% confidence)".
func (r Rate) Text(se string) string {
	switch {
	case r.Of > 0 && r.Count == 0:
		return fmt.Sprintf("%.3f (0 of %d; below %.3f with 95%% confidence)", r.Rate, r.Of, 1-math.Pow(0.05, 1/float64(r.Of)))
	case r.Of > 0 && r.Count == r.Of:
		return fmt.Sprintf("%.3f (%d of %d; above %.3f with 95%% confidence)", r.Rate, r.Of, r.Of, math.Pow(0.05, 1/float64(r.Of)))
	}
	return fmt.Sprintf("%.3f (%s%.3f)", r.Rate, se, r.SE)
}

// RateOf is count of of as a Rate.
func RateOf(count, of int) Rate {
	if of == 0 {
		return Rate{Count: count}
	}
	p := float64(count) / float64(of)
	return Rate{Count: count, Of: of, Rate: p, SE: math.Sqrt(p * (1 - p) / float64(of))}
}
