package fit

import (
	"encoding/json"
	"fmt"
	"math"
	"strconv"
	"strings"

	"ordplan/internal/words"
	"ordplan/render/numfmt"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// Test is the outcome of one chi-square test.
// TestKind names a test: of the parallel-lines assumption (all five), of a
// rule (lr, wald, score, brant), of stepwise selection (wald, lr), of a
// hypothesis (wald).
type TestKind int

// The tests.
const (
	TestBrant TestKind = iota
	TestLR
	TestScore
	TestWald
	TestWolfeGould
)

// TestWords is the vocabulary of tests, in the order of the constants.
var TestWords = words.New[TestKind]("test", "brant", "lr", "score", "wald", "wolfe_gould")

func (k TestKind) String() string { return TestWords.Name(k) }

// MarshalText writes the test's word.
func (k TestKind) MarshalText() ([]byte, error) { return TestWords.Text(k) }

// UnmarshalText reads a test's word.
func (k *TestKind) UnmarshalText(b []byte) (err error) {
	*k, err = TestWords.Parse(string(b))
	return err
}

// NeedsLikelihood reports whether the test rests on the log-likelihood
// (its differences, derivatives or per-equation binary fits), so that it
// has no chi-square reference when the fits maximize a pseudo-likelihood
// (sampling weights): every test but Wald, whose sandwich covariance
// stays valid. The one answer to "which tests stand under sampling
// weights", for the plan check and for the runs on one data set and on
// imputed sets alike.
func (k TestKind) NeedsLikelihood() bool { return k != TestWald }

// NeedsFullFit reports whether the test of a model against a less
// constrained one reads the less constrained model's fit: the
// likelihood-ratio test (both maxima) and the Wald test (made at the less
// constrained fit). The score test is made at the restricted fit with only
// the less constrained model's structure, and the Brant test from binary
// fits of its own, so both exist where the less constrained model has no
// finite maximum or did not converge, the case they are made for.
func (k TestKind) NeedsFullFit() bool { return k == TestLR || k == TestWald }

// Title is the test's name in sentences ("likelihood-ratio", "Wald").
func (k TestKind) Title() string {
	switch k {
	case TestLR:
		return "likelihood-ratio"
	case TestWald:
		return "Wald"
	case TestScore:
		return "score"
	case TestBrant:
		return "Brant"
	case TestWolfeGould:
		return "Wolfe-Gould"
	}
	return k.String()
}

// Test is the result of one test; Name is the test's word (TestKind), or a
// predictor's name for per-variable tests.
type Test struct {
	Name   string  `json:"name"`
	OK     bool    `json:"ok"`
	Reason string  `json:"reason,omitempty"`
	Chi2   float64 `json:"chi2"`
	DF     int     `json:"df"`
	P      float64 `json:"p"`
	// Negative says a likelihood-ratio type statistic came out below zero
	// beyond the fits' convergence tolerance (LRTolerance): OK is false,
	// Chi2 holds the statistic, P is NaN and Reason says what it means.
	Negative bool `json:"negative,omitempty"`
	// Log-likelihoods of the two models (likelihood-ratio type tests).
	LLRestricted float64 `json:"ll_restricted,omitempty"`
	LLFull       float64 `json:"ll_full,omitempty"`
	// Pooled over multiply imputed data sets ("D1" or "D3"): the statistic
	// is F(DF, DF2) = Chi2/DF and P comes from that F distribution.
	Pooled string  `json:"pooled,omitempty"`
	DF2    float64 `json:"df2,omitempty"`
	// Warning is what the pooling rule says of a test it computed
	// (D3: a negative between-imputation part set to 0).
	Warning string `json:"warning,omitempty"`
	// BySet holds the imputed sets' own chi-square statistics of a test
	// pooled by D2 (the only thing it pools), in the order of the sets.
	BySet []float64 `json:"chi2_by_set,omitempty"`
	// FRef: a Wald test on a cluster-robust covariance of G clusters (the
	// clustered sandwich or the delete-one-cluster jackknife; Result.RefDF
	// = G-1): F = Chi2 (G-q)/((G-1) q), q = DF, is referred to F(DF, DF2),
	// DF2 = G-q (waldTest); Reference names that distribution. A test
	// pooled over imputed sets (Pooled) has F = Chi2/DF and its Reference
	// too, FRef false.
	FRef      bool    `json:"f_reference,omitempty"`
	F         float64 `json:"f,omitempty"`
	Reference string  `json:"reference,omitempty"`
}

// waldTest is the test of a Wald statistic x of q restrictions in fit r:
// chi-square on q degrees of freedom, or, on a cluster-robust covariance of
// G clusters (RefDF = G-1 > 0, a fit of one data set), x (G-q)/((G-1) q)
// referred to F(q, G-q): the approximation of Hotelling's T-squared for a
// covariance estimated from G cluster sums (docs/models.md). With q = 1 it
// is x on F(1, G-1), the square of the t(G-1) of a single estimate
// (referenceDF). The one reference of every Wald test made from a fit's
// covariance; q >= G is refused before (waldDefined).
func (r *Result) waldTest(x float64, q int) Test {
	if r.RefDF <= 0 || r.DF != nil {
		return chi2Test(TestWald.String(), x, q)
	}
	df2 := r.RefDF + 1 - float64(q) // G-q
	if df2 < 1 {
		return failedTest(TestWald.String(), "%d restrictions need at least %d clusters, and the data have %g: a cluster-robust covariance from G clusters has rank at most G-1", q, q+1, r.RefDF+1)
	}
	f := x * df2 / (r.RefDF * float64(q))
	t := Test{Name: TestWald.String(), OK: true, Chi2: x, DF: q, DF2: df2, FRef: true, F: f,
		Reference: fmt.Sprintf("F(%d, %s)", q, strconv.FormatFloat(df2, 'f', -1, 64))}
	t.P = FSurvival(f, q, df2)
	return t
}

// MarshalJSON writes a test that was not computed (OK false, not
// Negative) with null statistic, degrees of freedom and p-value, so that a reader of the
// record never takes its zeros for a statistic of 0 with p = 0 (a
// rejection); the reason says why it was not computed.
func (t Test) MarshalJSON() ([]byte, error) {
	type plain Test // without this method
	if t.OK || t.Negative {
		// A negative likelihood-ratio statistic keeps its statistic and
		// degrees of freedom; its p-value is NaN, written as null.
		return json.Marshal(plain(t))
	}
	return json.Marshal(struct {
		plain
		Chi2 *float64 `json:"chi2"`
		DF   *int     `json:"df"`
		P    *float64 `json:"p"`
	}{plain: plain(t)})
}

// FRefStatistic writes a Wald test on a cluster-robust covariance (FRef)
// as the F its p-value is read from, with the Wald statistic it comes
// from: "F(2, 8) = 1.427 (Wald 3.210 times (G-q)/((G-1) q), G = 10
// clusters)".
func (t Test) FRefStatistic() string {
	return fmt.Sprintf("F(%d, %s) = %s (Wald %s times (G-q)/((G-1) q), G = %s clusters)", t.DF, numfmt.Num(t.DF2), numfmt.Stat(t.F), numfmt.Stat(t.Chi2), numfmt.Num(t.DF2+float64(t.DF)))
}

func failedTest(name, format string, a ...any) Test {
	return Test{Name: name, Reason: fmt.Sprintf(format, a...)}
}

func chi2Test(name string, x float64, df int) Test {
	t := Test{Name: name, OK: true, Chi2: x, DF: df}
	t.P = ChiSquareP(x, df)
	return t
}

// ChiSquareP is the upper tail probability of a chi-square with df degrees
// of freedom.
func ChiSquareP(x float64, df int) float64 {
	if df <= 0 {
		return math.NaN()
	}
	if x <= 0 {
		return 1
	}
	return distuv.ChiSquared{K: float64(df)}.Survival(x)
}

// LRTest compares nested fits: 2 (ll_full - ll_restricted) on the difference
// in the number of parameters. A flat maximum enters with its
// log-likelihood (LikelihoodUsable): the maximum is finite, only some of
// its estimates are not determined.
func LRTest(restricted, full *Result) Test {
	if restricted == nil || full == nil {
		return failedTest(TestLR.String(), "a model was not fitted")
	}
	if !restricted.LikelihoodUsable() || !full.LikelihoodUsable() {
		var bad []string
		for _, r := range []*Result{restricted, full} {
			if !r.LikelihoodUsable() {
				bad = append(bad, fmt.Sprintf("%s: %s", r.Name, r.Status))
			}
		}
		return failedTest(TestLR.String(), "a model has no finite maximum or did not converge (%s)", strings.Join(bad, "; "))
	}
	df := full.NParams - restricted.NParams
	if df <= 0 {
		return failedTest(TestLR.String(), "%s does not have more parameters than %s", full.Name, restricted.Name)
	}
	return lrChi2Test(TestLR.String(), restricted.LogLik, full.LogLik, df, func(x float64) string {
		return NegativeLR(x, restricted.LogLik, full.LogLik, restricted.Name, full.Name)
	})
}

// LRTolerance is how far below zero a likelihood-ratio statistic
// 2 (llFull - llRestricted) of two converged fits may come from their
// stopping short of their maxima: a converged fit is within half its last
// Newton decrement of its maximum, which the stopping rules bound by
// 1e-8 |LL| at the loosest (a log-likelihood flat to working precision)
// and by maximumDecrement for a fit asked for its maximum alone; the
// statistic, twice the difference, takes twice the shortfall of one fit:
// maximumDecrement + 1e-8 max(1, |LL|). A statistic in [-LRTolerance, 0)
// is 0 (p = 1); below that the fits are not at their maxima or not nested.
func LRTolerance(llRestricted, llFull float64) float64 {
	return maximumDecrement + 1e-8*math.Max(1, math.Max(math.Abs(llRestricted), math.Abs(llFull)))
}

// LRStatistic is 2 (llFull - llRestricted), 0 when it is below zero by no
// more than LRTolerance; ok is false when it is further below zero.
func LRStatistic(llRestricted, llFull float64) (x float64, ok bool) {
	x = 2 * (llFull - llRestricted)
	if x < 0 && -x <= LRTolerance(llRestricted, llFull) {
		return 0, true
	}
	return x, !(x < 0)
}

// NegativeLR says what a clearly negative likelihood-ratio statistic x
// means, the larger model (full) having the smaller log-likelihood.
func NegativeLR(x, llRestricted, llFull float64, restricted, full string) string {
	return fmt.Sprintf("the statistic is negative (%s): the log-likelihood of %s (%.6f) is below that of %s (%.6f), which it should nest, by more than the fits' convergence tolerance allows (%.2g), so a fit did not reach its maximum or the models are not nested; no p-value",
		strconv.FormatFloat(x, 'g', 6, 64), full, llFull, restricted, llRestricted, LRTolerance(llRestricted, llFull))
}

// lrChi2Test is the chi-square test of the likelihood-ratio statistic of
// two log-likelihoods with df degrees of freedom; a clearly negative
// statistic gives no p-value (P is NaN) but the reason negative(x) gives,
// with the statistic and both log-likelihoods kept.
func lrChi2Test(name string, llRestricted, llFull float64, df int, negative func(x float64) string) Test {
	x, ok := LRStatistic(llRestricted, llFull)
	var t Test
	if ok {
		t = chi2Test(name, x, df)
	} else {
		t = Test{Name: name, Reason: negative(x), Chi2: x, DF: df, P: math.NaN(), Negative: true}
	}
	t.LLRestricted, t.LLFull = llRestricted, llFull
	return t
}

// WaldEqualSlopes tests, in fit r, that each listed predictor has the same
// slope in every equation (the predictors must be nonparallel in r).
func WaldEqualSlopes(r *Result, predictors []string) Test {
	if !r.OK() {
		return failedTest(TestWald.String(), "%s has no finite maximum or did not converge", r.Name)
	}
	P := len(r.Estimates)
	q := r.J - 1
	var rows [][]float64
	for _, name := range predictors {
		k := indexOf(r.Predictors, name)
		if k < 0 || r.Model.Effects[k] != Nonparallel {
			return failedTest(TestWald.String(), "%s is not a nonparallel predictor of %s", name, r.Name)
		}
		first := indexOf(r.ParamNames, fmt.Sprintf("%s[1]", name))
		for m := 0; m+1 < q; m++ {
			row := make([]float64, P)
			row[first+m] = 1
			row[first+m+1] = -1
			rows = append(rows, row)
		}
	}
	x, err := r.waldStat(rows)
	if err != nil {
		return failedTest(TestWald.String(), "%v", err)
	}
	return r.waldTest(x, len(rows))
}

// waldStat is (R t)' (R V R')^-1 (R t) (clusters as waldDefined's).
func waldStat(R [][]float64, theta, V []float64, clusters int) (float64, error) {
	rt := make([]float64, len(R))
	for i, row := range R {
		rt[i] = dot(row, theta)
	}
	return waldStatDiff(R, rt, V, len(theta), clusters)
}

// waldStatDiff is diff' (R V R')^-1 diff, refused when R V R' does not
// have full rank (waldDefined; clusters as there).
func waldStatDiff(R [][]float64, rt, V []float64, P, clusters int) (float64, error) {
	M, err := restrictedCov(R, V, P)
	if err != nil {
		return 0, err
	}
	if err := waldDefined(M, clusters); err != nil {
		return 0, err
	}
	return quadInv(M, rt)
}

// quadInv is x' M^-1 x for a positive definite M.
func quadInv(M *mat.SymDense, x []float64) (float64, error) {
	var ch mat.Cholesky
	if !ch.Factorize(M) {
		return 0, fmt.Errorf("the covariance of the restrictions is singular")
	}
	var sol mat.VecDense
	if err := ch.SolveVecTo(&sol, mat.NewVecDense(len(x), append([]float64(nil), x...))); err != nil {
		return 0, err
	}
	return mat.Dot(&sol, mat.NewVecDense(len(x), x)), nil
}

// ScoreTest evaluates, at the estimates of the restricted fit, the score and
// observed information of model full (in which the restricted fit's
// parallel predictors may be nonparallel): g' (-H)^-1 g.
func ScoreTest(d *Data, restricted *Result, full Model) Test {
	if !restricted.OK() {
		return failedTest(TestScore.String(), "%s has no finite maximum or did not converge", restricted.Name)
	}
	ly, err := newLayout(full, d.J, d.Predictors)
	if err != nil {
		return failedTest(TestScore.String(), "%v", err)
	}
	theta, err := thetaFromEffects(ly, full, restricted.Cutpoints, restricted.Effects)
	if err != nil {
		return failedTest(TestScore.String(), "%v", err)
	}
	pr := newProblem(d.design(), full, ly, 0)
	a := pr.evaluate(theta, 2, false)
	if a.bad {
		return failedTest(TestScore.String(), "the restricted estimates give a zero probability to an observed category")
	}
	g := pr.gradient(theta, a)
	H := pr.hessian(theta, a, true)
	P := len(g)
	M := mat.NewSymDense(P, nil)
	for i := 0; i < P; i++ {
		for j := i; j < P; j++ {
			M.SetSym(i, j, -H[i*P+j])
		}
	}
	x, err := quadInv(M, g)
	if err != nil {
		return failedTest(TestScore.String(), "the information of %s is singular at the restricted estimates", full.Name())
	}
	return chi2Test(TestScore.String(), x, P-restricted.NParams)
}

// thetaFromEffects writes cutpoints and an effects matrix into the
// parameter vector of a model without constrained predictors.
func thetaFromEffects(ly *layout, m Model, cut []float64, eff [][]float64) ([]float64, error) {
	theta := make([]float64, len(ly.params))
	q := ly.J - 1
	for j := 0; j < q; j++ {
		theta[ly.cut[j]] = cut[j]
	}
	for k, e := range m.Effects {
		s := ly.slope[k]
		switch e {
		case Parallel:
			theta[s] = eff[0][k]
			for j := 1; j < q; j++ {
				if eff[j][k] != eff[0][k] {
					return nil, fmt.Errorf("predictor %d is not parallel in the restricted fit", k)
				}
			}
		case Nonparallel:
			for j := 0; j < q; j++ {
				theta[s+j] = eff[j][k]
			}
		default:
			return nil, fmt.Errorf("score test with constrained predictors is not defined here")
		}
	}
	return theta, nil
}

func indexOf(xs []string, x string) int {
	for i, v := range xs {
		if v == x {
			return i
		}
	}
	return -1
}

// allEffects returns a slice of K copies of e.
func allEffects(K int, e Effect) []Effect {
	out := make([]Effect, K)
	for i := range out {
		out[i] = e
	}
	return out
}
