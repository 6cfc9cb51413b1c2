package fit_test

import (
	"fmt"
	"math"

	"ordplan/runner/fit"
)

// tasting is an invented panel: 80 tasters rate a drink low, mid or high,
// 40 of them after a dose of sweetener (dose = 1). Each row is one cell of
// the 2 x 3 table, its count a frequency weight.
//
//	dose   low  mid  high
//	   0    20   15     5
//	   1     8   14    18
func tasting() *fit.Data {
	return &fit.Data{
		J:          3,
		Categories: []string{"low", "mid", "high"},
		Predictors: []string{"dose"},
		Y:          []int{0, 1, 2, 0, 1, 2},
		X:          []float64{0, 0, 0, 1, 1, 1},
		Weights:    []float64{20, 15, 5, 8, 14, 18},
	}
}

// Fit a cumulative logit model with one slope for dose at both category
// boundaries (proportional odds) and read the result.
func ExampleFit() {
	m := fit.Model{Comparison: fit.Cumulative, Link: fit.Logit, Effects: []fit.Effect{fit.Parallel}}
	r, err := fit.Fit(tasting(), m, fit.Options{})
	if err != nil {
		fmt.Println(err) // bad input: the message names the problem
		return
	}
	if !r.OK() {
		fmt.Println(r.Status, r.Message) // no finite maximum, not converged, ...
		return
	}
	fmt.Printf("%s: %s, log-likelihood %.4f, AIC %.3f, %d observations\n", r.Name, r.Status, r.LogLik, r.AIC, int(r.NObs))
	for i, name := range r.ParamNames {
		fmt.Printf("%-6s %8.4f (%.4f)\n", name, r.Estimates[i], r.StdErrors[i])
	}
	// A positive slope moves answers towards the higher categories.
	b := r.Effects[0][0]
	fmt.Printf("odds of answering above a boundary, dose 1 over dose 0: %.3f\n", math.Exp(b))
	// Output:
	// cumulative/parallel/logit: ok, log-likelihood -81.1020, AIC 168.204, 80 observations
	// tau[1]   0.0416 (0.3056)
	// tau[2]   1.7891 (0.3764)
	// dose     1.5401 (0.4463)
	// odds of answering above a boundary, dose 1 over dose 0: 4.665
}

// With a slope per boundary (nonparallel) and one binary predictor, the
// model is saturated: the estimates are the empirical cumulative log odds,
// which can be checked by hand, and the predicted probabilities are the
// observed proportions of each row of the table, with binomial standard
// errors.
func ExampleResult_Predict() {
	m := fit.Model{Comparison: fit.Cumulative, Link: fit.Logit, Effects: []fit.Effect{fit.Nonparallel}}
	r, err := fit.Fit(tasting(), m, fit.Options{})
	if err != nil || !r.OK() {
		fmt.Println(err, r)
		return
	}
	logit := func(p float64) float64 { return math.Log(p / (1 - p)) }
	// Printed to 4 decimals: a maximum of exactly 0 found to the last digits
	// prints 0.0000, whichever sign its rounding error has.
	r4 := func(x float64) float64 { return math.Round(x*1e4)/1e4 + 0 }
	// Boundary 1 (low | mid): P(y <= low) is 20/40 at dose 0 and 8/40 at dose 1.
	fmt.Printf("tau[1] %.4f, by hand %.4f\n", r4(r.Cutpoints[0]), logit(20.0/40))
	fmt.Printf("dose at boundary 1 %.4f, by hand %.4f\n", r.Effects[0][0], logit(20.0/40)-logit(8.0/40))
	// Boundary 2 (mid | high): P(y <= mid) is 35/40 and 22/40.
	fmt.Printf("dose at boundary 2 %.4f, by hand %.4f\n", r.Effects[1][0], logit(35.0/40)-logit(22.0/40))

	pred, err := r.Predict([]float64{0, 1}, nil) // two rows: dose 0 and dose 1
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, dose := range []int{0, 1} {
		fmt.Printf("dose %d:", dose)
		for j, category := range r.Categories {
			fmt.Printf(" %s %.3f (%.3f)", category, pred.Prob[i*pred.J+j], pred.SE[i*pred.J+j])
		}
		fmt.Printf("; most likely %s\n", r.Categories[pred.MostLikely[i]])
	}
	// Saturated, the standard error of a probability is the binomial one.
	fmt.Printf("by hand, dose 0: low %.3f mid %.3f high %.3f\n", math.Sqrt(0.5*0.5/40), math.Sqrt(0.375*0.625/40), math.Sqrt(0.125*0.875/40))
	// Output:
	// tau[1] 0.0000, by hand 0.0000
	// dose at boundary 1 1.3863, by hand 1.3863
	// dose at boundary 2 1.7452, by hand 1.7452
	// dose 0: low 0.500 (0.079) mid 0.375 (0.077) high 0.125 (0.052); most likely low
	// dose 1: low 0.200 (0.063) mid 0.350 (0.075) high 0.450 (0.079); most likely high
	// by hand, dose 0: low 0.079 mid 0.077 high 0.052
}

// Test the parallel-lines assumption for dose by a likelihood ratio: the
// parallel model is the restricted one, the nonparallel the full one.
func ExampleLRTest() {
	d := tasting()
	parallel := fit.Model{Comparison: fit.Cumulative, Link: fit.Logit, Effects: []fit.Effect{fit.Parallel}}
	full := parallel
	full.Effects = []fit.Effect{fit.Nonparallel}
	r0, err0 := fit.Fit(d, parallel, fit.Options{})
	r1, err1 := fit.Fit(d, full, fit.Options{})
	if err0 != nil || err1 != nil {
		fmt.Println(err0, err1)
		return
	}
	t := fit.LRTest(r0, r1)
	fmt.Printf("%s: chi2 %.4f on %d df, p = %.4f\n", t.Name, t.Chi2, t.DF, t.P)
	// Output:
	// lr: chi2 0.3666 on 1 df, p = 0.5449
}
