package runner

import (
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"ordplan/internal/rscript"
	"ordplan/runner/fit"
)

// TestPooledPredictionsAgainstMice checks the pooled predictions of new rows
// against R: on five imputed sets of a two-category outcome, R fits the
// binary glm of each set, predicts the probability of the upper category
// with its delta-method standard error (predict, se.fit = TRUE), and pools
// each row with the general-purpose multiple-imputation package mice
// (pool.scalar, complete-data degrees of freedom n - 3). The program's fits
// are the two-category cumulative logit model (glm's, checked in
// runner/fit), its predictions pooled by poolPredictions.
func TestPooledPredictionsAgainstMice(t *testing.T) {
	rscript.RequirePackages(t, "mice")
	const m, n = 5, 150
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(41, 3))
	x1, x2, y, miss := binaryStudy(rng, n, 0.35)
	newX := []float64{0, 0, 1, -1, -0.5, 1.5}
	rscript.WriteCSV(t, filepath.Join(dir, "new.csv"), []string{"x1", "x2"}, [][]float64{{0, 1, -0.5}, {0, -1, 1.5}})
	os.WriteFile(filepath.Join(dir, "m.txt"), []byte(strconv.Itoa(m)+"\n"), 0o644)
	model := fit.Model{Comparison: fit.Cumulative, Link: fit.Logit, Effects: []fit.Effect{fit.Parallel, fit.Parallel}}
	preds := make([]*fit.Prediction, m)
	var first *fit.Result
	for k := 1; k <= m; k++ {
		xi := make([]float64, n)
		yi := make([]int, n)
		X := make([]float64, 2*n)
		for i := range n {
			xi[i] = x2[i]
			if miss[i] {
				xi[i] = 0.5*x1[i] + rng.NormFloat64()
			}
			yi[i] = int(y[i])
			X[2*i], X[2*i+1] = x1[i], xi[i]
		}
		rscript.WriteCSV(t, filepath.Join(dir, "imp"+strconv.Itoa(k)+".csv"), []string{"y", "x1", "x2"}, [][]float64{y, x1, xi})
		r, err := fit.Fit(&fit.Data{Y: yi, J: 2, X: X, Predictors: []string{"x1", "x2"}}, model, fit.Options{})
		if err != nil || !r.OK() {
			t.Fatal(err, r)
		}
		if first == nil {
			first = r
		}
		if preds[k-1], err = r.Predict(newX, nil); err != nil {
			t.Fatal(err)
		}
	}
	vals := rscript.Run(t, dir, "testdata/rcheck/predpool.R")
	pooled, df, err := poolPredictions(preds, completeDF(first.NObs, first.NParams, nil).DF)
	if err != nil {
		t.Fatal(err)
	}
	for j := 0; j < 3; j++ {
		r := vals.Get(t, "row"+strconv.Itoa(j+1))
		a := j*2 + 1 // the upper category: glm's P(y = 1)
		for _, c := range []struct {
			what      string
			got, want float64
		}{{"pooled probability", pooled.Prob[a], r[0]}, {"total variance", pooled.SE[a] * pooled.SE[a], r[1]}, {"df", df.Prob[a], r[2]}} {
			if d := math.Abs(c.got - c.want); !(d <= 1e-6*math.Max(1e-3, math.Abs(c.want))) {
				t.Errorf("row %d %s: got %.10g, mice %.10g", j+1, c.what, c.got, c.want)
			}
		}
		t.Logf("row %d: pooled P(y = 1) %.6f (se %.5f, df %.1f); mice %.6f (se %.5f, df %.1f); between variance %.3g", j+1, pooled.Prob[a], pooled.SE[a], df.Prob[a], r[0], math.Sqrt(r[1]), r[2], r[3])
	}
}

// TestPooledEstimatesAgainstMice checks the inference on a fit pooled over
// imputed sets against R: on five imputed sets of a two-category outcome
// R fits the binary glm of each and pools them with the general-purpose
// multiple-imputation package mice (summary of pool(), complete-data
// degrees of freedom n - 3): each coefficient's t statistic, Barnard-Rubin
// degrees of freedom, p-value and 95% interval. The program's fit is the
// two-category cumulative logit model (glm's with the intercept's sign
// turned: L = tau - x'b), pooled by poolResults; its estimates' p-values
// and intervals (ParamInference) and its odds ratios must refer to the
// same t, not to the normal.
func TestPooledEstimatesAgainstMice(t *testing.T) {
	rscript.RequirePackages(t, "mice")
	const m, n = 5, 60
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(97, 5))
	x1, x2, y, miss := binaryStudy(rng, n, 0.4)
	os.WriteFile(filepath.Join(dir, "m.txt"), []byte(strconv.Itoa(m)+"\n"), 0o644)
	model := fit.Model{Comparison: fit.Cumulative, Link: fit.Logit, Effects: []fit.Effect{fit.Parallel, fit.Parallel}}
	rs := make([]*fit.Result, m)
	for k := 1; k <= m; k++ {
		xi := make([]float64, n)
		yi := make([]int, n)
		X := make([]float64, 2*n)
		for i := range n {
			xi[i] = x2[i]
			if miss[i] {
				xi[i] = 0.5*x1[i] + 1.5*rng.NormFloat64()
			}
			yi[i] = int(y[i])
			X[2*i], X[2*i+1] = x1[i], xi[i]
		}
		rscript.WriteCSV(t, filepath.Join(dir, "imp"+strconv.Itoa(k)+".csv"), []string{"y", "x1", "x2"}, [][]float64{y, x1, xi})
		r, err := fit.Fit(&fit.Data{Y: yi, J: 2, X: X, Predictors: []string{"x1", "x2"}}, model, fit.Options{})
		if err != nil || !r.OK() {
			t.Fatal(err, r)
		}
		rs[k-1] = r
	}
	vals := rscript.Run(t, dir, "testdata/rcheck/estpool.R")
	pooled, _, err := poolResults(rs, rs[0].NObs, nil)
	if err != nil {
		t.Fatal(err)
	}
	ors, err := pooled.OddsRatios(0.95)
	if err != nil {
		t.Fatal(err)
	}
	near := func(what string, got, want float64) {
		t.Helper()
		if d := math.Abs(got - want); !(d <= 1e-6*math.Max(1, math.Abs(want))) {
			t.Errorf("%s: got %.10g, mice %.10g", what, got, want)
		}
	}
	for j, name := range pooled.ParamNames {
		// R's coefficient j: the intercept is -tau[1] (glm models
		// P(y = 1) = F(a + x'c), the program P(y = 0) = F(tau - x'b)); a
		// slope is b.
		r := vals.Get(t, "coef"+strconv.Itoa(j+1)) // estimate, se, t, df, p, low, high
		sign := 1.0
		if j == 0 {
			sign = -1
		}
		inf := pooled.ParamInference(j, 0.95)
		low, high := sign*r[5], sign*r[6]
		if sign < 0 {
			low, high = high, low
		}
		near(name+" estimate", pooled.Estimates[j], sign*r[0])
		near(name+" t", inf.Stat, sign*r[2])
		near(name+" df", inf.DF, r[3])
		near(name+" p", inf.P, r[4])
		near(name+" low", inf.Low, low)
		near(name+" high", inf.High, high)
		if j > 0 {
			or := ors[j-1]
			near(name+" odds ratio low", math.Log(or.Low), low)
			near(name+" odds ratio high", math.Log(or.High), high)
		}
		t.Logf("%s: t %.4f on %.2f df, p %.5f, interval [%.5f, %.5f]; mice t %.4f on %.2f df, p %.5f", name, inf.Stat, inf.DF, inf.P, inf.Low, inf.High, sign*r[2], r[3], r[4])
	}
}

// binaryStudy draws the invented study of the pooled checks against mice:
// n rows of x1 ~ N(0, 1), x2 = 0.5 x1 + N(0, 1), y from a logistic model
// in both, and x2 marked missing with probability pMiss (rng goes on to
// draw the imputations).
func binaryStudy(rng *rand.Rand, n int, pMiss float64) (x1, x2, y []float64, miss []bool) {
	x1, x2, y = make([]float64, n), make([]float64, n), make([]float64, n)
	miss = make([]bool, n)
	for i := range n {
		x1[i] = rng.NormFloat64()
		x2[i] = 0.5*x1[i] + rng.NormFloat64()
		if rng.Float64() < 1/(1+math.Exp(-(0.2+0.9*x1[i]-0.7*x2[i]))) {
			y[i] = 1
		}
		miss[i] = rng.Float64() < pMiss
	}
	return x1, x2, y, miss
}
