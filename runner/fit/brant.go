package fit

import (
	"errors"
	"fmt"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// BrantResult is the Brant test of the parallel-lines assumption of the
// cumulative logit: separate binary logits of 1[y > m], their joint
// covariance, and Wald tests of equal slopes.
type BrantResult struct {
	OK          bool
	Reason      string
	Omnibus     Test
	PerVariable []Test      // one per predictor, Name = predictor
	Slopes      [][]float64 // [m][k] slopes of the binary logits
	// the stacked slopes and their joint covariance, for tests of groups
	// of predictors
	beta, cov  []float64
	predictors []string
}

// Joint is the Brant test that every predictor in names has the same
// slope in every binary logit, jointly (df: len(names) (J-2)): the test
// of a term whose columns are names.
func (br *BrantResult) Joint(names []string) Test {
	if !br.OK {
		return failedTest(TestBrant.String(), "%s", br.Reason)
	}
	rows, err := br.equalSlopes(names)
	if err != nil {
		return failedTest(TestBrant.String(), "%v", err)
	}
	x, err := waldStat(rows, br.beta, br.cov, 0)
	if err != nil {
		return failedTest(TestBrant.String(), "%v", err)
	}
	return chi2Test(TestBrant.String(), x, len(rows))
}

// equalSlopes are the rows of the hypothesis that every predictor in
// names has the same slope in every binary logit (columns: the stacked
// slopes).
func (br *BrantResult) equalSlopes(names []string) ([][]float64, error) {
	K := len(br.predictors)
	q := len(br.Slopes)
	var rows [][]float64
	for _, n := range names {
		k := indexOf(br.predictors, n)
		if k < 0 {
			return nil, fmt.Errorf("%s is not a predictor", n)
		}
		rows = append(rows, equalSlopeRows(k, q, K)...)
	}
	return rows, nil
}

// Stacked returns the binary logits' slopes, stacked logit by logit, their
// joint covariance (row-major), and the rows (row-major, one per
// restriction) of the hypothesis that every predictor in names has the
// same slope in every binary logit: what a Wald test pooled over imputed
// data sets needs. It fails when the test could not be computed.
func (br *BrantResult) Stacked(names []string) (beta, cov, rows []float64, err error) {
	if !br.OK {
		return nil, nil, nil, errors.New(br.Reason)
	}
	r, err := br.equalSlopes(names)
	if err != nil {
		return nil, nil, nil, err
	}
	for _, row := range r {
		rows = append(rows, row...)
	}
	return br.beta, br.cov, rows, nil
}

// binaryFits fits the J-1 binary logits of 1[y > m].
func binaryFits(d *Data, opt Options) ([]*Result, error) {
	q := d.J - 1
	fits := make([]*Result, q)
	var bad []string
	for m := 0; m < q; m++ {
		bd := &Data{J: 2, X: d.X, Predictors: d.Predictors, Weights: d.Weights, Offset: d.Offset,
			Categories: []string{"<= " + d.categories()[m], "> " + d.categories()[m]}}
		bd.Y = make([]int, len(d.Y))
		for i, y := range d.Y {
			if y > m {
				bd.Y[i] = 1
			}
		}
		r, err := Fit(bd, Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(len(d.Predictors), Parallel)}, Options{Workers: opt.Workers})
		if err != nil {
			bad = append(bad, fmt.Sprintf("logit of 1[y > %s]: %v", d.categories()[m], err))
			continue
		}
		if !r.OK() {
			bad = append(bad, fmt.Sprintf("logit of 1[y > %s]: %s", d.categories()[m], r.Status))
		}
		fits[m] = r
	}
	if len(bad) > 0 {
		return fits, fmt.Errorf("a binary logit has no finite maximum or did not converge (%s)", strings.Join(bad, "; "))
	}
	return fits, nil
}

// Brant computes the Brant test. It needs the logit link's binary fits and
// is defined for the cumulative comparison only. Its phases: the J-1 binary
// logits of 1[y > m], their fitted probabilities, the joint covariance of
// their slopes, and Wald tests that each predictor's slopes are equal.
func Brant(d *Data, opt Options) *BrantResult {
	br := &BrantResult{}
	if err := d.validate(); err != nil {
		br.Reason = err.Error()
		return br
	}
	if d.J < 3 {
		br.Reason = "the Brant test needs at least 3 categories"
		return br
	}
	fits, err := binaryFits(d, opt)
	if err != nil {
		br.Reason = err.Error()
		return br
	}
	for _, f := range fits {
		br.Slopes = append(br.Slopes, f.Effects[0])
	}
	V, err := brantCovariance(d, binaryProbs(d, fits))
	if err != nil {
		br.Reason = err.Error()
		return br
	}
	K := len(d.Predictors)
	beta := make([]float64, len(fits)*K)
	for m, b := range br.Slopes {
		copy(beta[m*K:], b)
	}
	if err := br.equalSlopeTests(d.Predictors, beta, V); err != nil {
		br.Reason = err.Error()
		return br
	}
	br.beta, br.cov, br.predictors = beta, V, d.Predictors
	br.OK = true
	return br
}

// binaryProbs returns pi[m][i] = P(y > m | x_i) from binary fit m.
func binaryProbs(d *Data, fits []*Result) [][]float64 {
	n, K := len(d.Y), len(d.Predictors)
	pi := make([][]float64, len(fits))
	for m, f := range fits {
		pi[m] = make([]float64, n)
		for i := 0; i < n; i++ {
			eta := -f.Cutpoints[0]
			for k := 0; k < K; k++ {
				eta += d.X[i*K+k] * f.Effects[0][k]
			}
			if d.Offset != nil {
				eta += d.Offset[i]
			}
			F, _ := logistic(eta)
			pi[m][i] = F
		}
	}
	return pi
}

// brantCovariance is the joint covariance of the stacked slopes of the
// binary logits (intercepts dropped), (J-1)K x (J-1)K: the inverse
// information of each logit on the diagonal, and off it the products
// inv(I_m) X' W_ml X inv(I_l) with W_ml = diag(pi_l - pi_m pi_l).
func brantCovariance(d *Data, pi [][]float64) ([]float64, error) {
	n, K, q := len(d.Y), len(d.Predictors), len(pi)
	k1 := K + 1
	// cross is X' diag(weight) X with the constant column first.
	cross := func(weight func(i int) float64) *mat.Dense {
		A := mat.NewDense(k1, k1, nil)
		xt := make([]float64, k1)
		for i := 0; i < n; i++ {
			wi := weight(i)
			if wi == 0 {
				continue
			}
			xt[0] = 1
			copy(xt[1:], d.X[i*K:(i+1)*K])
			for a := 0; a < k1; a++ {
				for b := 0; b < k1; b++ {
					A.Set(a, b, A.At(a, b)+wi*xt[a]*xt[b])
				}
			}
		}
		return A
	}
	inv := make([]*mat.Dense, q)
	for m := 0; m < q; m++ {
		A := cross(func(i int) float64 { return d.weight(i) * pi[m][i] * (1 - pi[m][i]) })
		var Ai mat.Dense
		if err := Ai.Inverse(A); err != nil {
			return nil, fmt.Errorf("the information of the logit of 1[y > %s] is singular", d.categories()[m])
		}
		inv[m] = &Ai
	}
	N := q * K
	V := make([]float64, N*N)
	for m := 0; m < q; m++ {
		for l := m; l < q; l++ {
			var C mat.Dense
			if l == m {
				C.CloneFrom(inv[m])
			} else {
				B := cross(func(i int) float64 { return d.weight(i) * (pi[l][i] - pi[m][i]*pi[l][i]) })
				var t mat.Dense
				t.Mul(inv[m], B)
				C.Mul(&t, inv[l])
			}
			for a := 0; a < K; a++ {
				for b := 0; b < K; b++ {
					v := C.At(a+1, b+1)
					V[(m*K+a)*N+l*K+b] = v
					V[(l*K+b)*N+m*K+a] = v
				}
			}
		}
	}
	return V, nil
}

// equalSlopeRows are the J-2 rows of the hypothesis that predictor k
// (of K) has the same slope in all q binary logits (stacked slopes, logit
// by logit): beta_1k - beta_mk = 0 for m = 2..q.
func equalSlopeRows(k, q, K int) [][]float64 {
	var rows [][]float64
	for m := 1; m < q; m++ {
		r := make([]float64, q*K)
		r[k] = 1
		r[m*K+k] = -1
		rows = append(rows, r)
	}
	return rows
}

// equalSlopeTests sets the Wald test of equal slopes across the binary
// logits for each predictor (beta_1k = beta_mk for m = 2..J-1) and the
// omnibus test of all of them, from the stacked slopes beta and their
// covariance V.
func (br *BrantResult) equalSlopeTests(predictors []string, beta, V []float64) error {
	K := len(predictors)
	q := len(beta) / max(K, 1)
	var all [][]float64
	for k := 0; k < K; k++ {
		rows := equalSlopeRows(k, q, K)
		all = append(all, rows...)
		x, err := waldStat(rows, beta, V, 0)
		t := chi2Test(TestBrant.String(), x, len(rows))
		if err != nil {
			t = failedTest(TestBrant.String(), "%v", err)
		}
		t.Name = predictors[k]
		br.PerVariable = append(br.PerVariable, t)
	}
	x, err := waldStat(all, beta, V, 0)
	if err != nil {
		return err
	}
	br.Omnibus = chi2Test(TestBrant.String(), x, len(all))
	return nil
}

// WolfeGould compares the multinomial log-likelihoods implied by stacked
// binary logits with common slopes and by separate binary logits of
// 1[y <= m]: an approximate likelihood-ratio test of parallel lines for the
// cumulative logit that needs no nonparallel cumulative fit.
func WolfeGould(d *Data, opt Options) Test {
	if err := d.validate(); err != nil {
		return failedTest(TestWolfeGould.String(), "%v", err)
	}
	K := len(d.Predictors)
	if d.J < 3 || K == 0 {
		return failedTest(TestWolfeGould.String(), "needs at least 3 categories and one predictor")
	}
	cum := Model{Comparison: Cumulative, Link: Logit}
	implied := func(e Effect) (float64, error) {
		m := Model{Comparison: stackedBinary, Link: Logit, Effects: allEffects(K, e)}
		ly, _ := newLayout(m, d.J, d.Predictors)
		start := make([]float64, len(ly.params))
		copy(start, marginalCutpoints(d, cum))
		pr := newProblem(d.design(), m, ly, opt.Workers)
		st := pr.newton(start, 200, false)
		if !st.converged {
			return 0, fmt.Errorf("stacked binary logits did not converge (%s)", st.reason)
		}
		info := make([]float64, len(st.hess))
		for i := range info {
			info[i] = -st.hess[i]
		}
		if cond, _, pd := scaledCondition(info, len(st.theta)); !pd || cond > conditionLimit {
			return 0, fmt.Errorf("binary logits separated (no finite maximum)")
		}
		cm := Model{Comparison: Cumulative, Link: Logit, Effects: m.Effects}
		cp := newProblem(d.design(), cm, ly, opt.Workers)
		a := cp.evaluate(st.theta, 0, false)
		if a.bad {
			return 0, fmt.Errorf("the separate binary logits imply a non-positive probability for an observed category")
		}
		return a.ll, nil
	}
	llp, err := implied(Parallel)
	if err != nil {
		return failedTest(TestWolfeGould.String(), "%v", err)
	}
	llnp, err := implied(Nonparallel)
	if err != nil {
		return failedTest(TestWolfeGould.String(), "%v", err)
	}
	return lrChi2Test(TestWolfeGould.String(), llp, llnp, K*(d.J-2), func(x float64) string {
		return fmt.Sprintf("the statistic is negative (%s): the cumulative log-likelihood the separate binary logits imply (%.6f) is below the one the parallel binary logits imply (%.6f) by more than the fits' convergence tolerance allows (%.2g), so the approximation the test rests on fails for these data; no p-value (the likelihood-ratio test compares the fitted models themselves)",
			strconv.FormatFloat(x, 'g', 6, 64), llnp, llp, LRTolerance(llp, llnp))
	})
}
