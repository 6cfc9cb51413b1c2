package fit

import (
	"fmt"
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
	K := len(br.predictors)
	q := len(br.Slopes)
	N := q * K
	var rows [][]float64
	for _, n := range names {
		k := indexOf(br.predictors, n)
		if k < 0 {
			return failedTest(TestBrant.String(), "%s is not a predictor", n)
		}
		for m := 1; m < q; m++ {
			r := make([]float64, N)
			r[k] = 1
			r[m*K+k] = -1
			rows = append(rows, r)
		}
	}
	x, err := waldStat(rows, br.beta, br.cov)
	if err != nil {
		return failedTest(TestBrant.String(), "%v", err)
	}
	return chi2Test(TestBrant.String(), x, len(rows))
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
// is defined for the cumulative comparison only.
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
		br.Reason = "Brant test cannot be computed: " + err.Error()
		return br
	}
	n, K, q := len(d.Y), len(d.Predictors), d.J-1
	k1 := K + 1
	// pi[m][i] = P(y > m | x_i) from binary fit m.
	pi := make([][]float64, q)
	for m, f := range fits {
		pi[m] = make([]float64, n)
		br.Slopes = append(br.Slopes, f.Effects[0])
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
	w := func(i int) float64 {
		if d.Weights == nil {
			return 1
		}
		return d.Weights[i]
	}
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
		A := cross(func(i int) float64 { return w(i) * pi[m][i] * (1 - pi[m][i]) })
		var Ai mat.Dense
		if err := Ai.Inverse(A); err != nil {
			br.Reason = fmt.Sprintf("Brant test cannot be computed: the information of the logit of 1[y > %s] is singular", d.categories()[m])
			return br
		}
		inv[m] = &Ai
	}
	// Joint covariance of the stacked slopes (intercepts dropped).
	N := q * K
	V := make([]float64, N*N)
	for m := 0; m < q; m++ {
		for l := m; l < q; l++ {
			var C mat.Dense
			if l == m {
				C.CloneFrom(inv[m])
			} else {
				B := cross(func(i int) float64 { return w(i) * (pi[l][i] - pi[m][i]*pi[l][i]) })
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
	beta := make([]float64, N)
	for m := 0; m < q; m++ {
		copy(beta[m*K:], br.Slopes[m])
	}
	rowsFor := func(k int) [][]float64 {
		var rows [][]float64
		for m := 1; m < q; m++ {
			r := make([]float64, N)
			r[k] = 1
			r[m*K+k] = -1
			rows = append(rows, r)
		}
		return rows
	}
	var all [][]float64
	for k := 0; k < K; k++ {
		rows := rowsFor(k)
		all = append(all, rows...)
		x, err := waldStat(rows, beta, V)
		t := chi2Test(TestBrant.String(), x, len(rows))
		if err != nil {
			t = failedTest(TestBrant.String(), "%v", err)
		}
		t.Name = d.Predictors[k]
		br.PerVariable = append(br.PerVariable, t)
	}
	x, err := waldStat(all, beta, V)
	if err != nil {
		br.Reason = "Brant test cannot be computed: " + err.Error()
		return br
	}
	br.Omnibus = chi2Test(TestBrant.String(), x, len(all))
	br.beta, br.cov, br.predictors = beta, V, d.Predictors
	br.OK = true
	return br
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
	t := chi2Test(TestWolfeGould.String(), 2*(llnp-llp), K*(d.J-2))
	if t.Chi2 < 0 {
		t.P = 1
	}
	t.LLRestricted, t.LLFull = llp, llnp
	return t
}
