package fit

import (
	"fmt"
	"math"
)

// StereotypeScores is the one-dimensional stereotype model (the adjacent
// logit with every predictor in one constraint group) written with category
// scores:
//
//	ln[P(y=j)/P(y=1)] = Alpha[j] + Score[j] * x'Beta,   j = 1..J,
//
// with Alpha[1] = Score[1] = 0 and Score[J] = 1. With scores that increase
// from the first category to the last, a positive Beta moves towards higher
// categories, as a positive slope does everywhere else.
//
// From the adjacent form ln[P(m)/P(m+1)] = tau_m - phi_m x'g:
// ln[P(j)/P(1)] = -sum_{m<j} tau_m + (sum_{m<j} phi_m) x'g, so with
// S = sum_{m<J} phi_m: Alpha[j] = -sum_{m<j} tau_m, Score[j] =
// sum_{m<j} phi_m / S and Beta = S g.
type StereotypeScores struct {
	Normalization string
	Categories    []string
	Alpha         []float64 // J values, Alpha[0] = 0
	AlphaSE       []float64
	Score         []float64 // J values, Score[0] = 0, Score[J-1] = 1
	ScoreSE       []float64
	Predictors    []string
	Beta          []float64
	BetaSE        []float64
	// The free parameters (alpha[2..J], score[2..J-1], then Beta by
	// predictor name) with their delta-method covariance.
	Names     []string
	Estimates []float64
	StdErrors []float64
	Cov       []float64
}

// StereotypeNormalization states the identification of the scores.
const StereotypeNormalization = "ln[P(y=j)/P(y=1)] = alpha_j + score_j x'beta; the first category is the baseline: alpha_1 = 0, score_1 = 0, and score_J = 1"

// StereotypeScores reports the category scores of a stereotype fit (adjacent
// logit, every predictor constrained, one group), with delta-method
// standard errors from r.Cov (r.linearMap: NaN for those resting on
// parameters NotEstimable marks).
func (r *Result) StereotypeScores() (*StereotypeScores, error) {
	if r.Model.Comparison != Adjacent || r.Model.Link != Logit || r.Model.Structure() != StereotypeEffects {
		return nil, fmt.Errorf("category scores exist for the stereotype model (adjacent logit, every predictor constrained in one group), not %s", r.Name)
	}
	if !r.OK() || r.Cov == nil {
		return nil, fmt.Errorf("%s has no finite estimates (%s)", r.Name, r.Status)
	}
	ly, err := newLayout(r.Model, r.J, r.Predictors)
	if err != nil {
		return nil, err
	}
	J, q, K := r.J, r.J-1, len(r.Predictors)
	P := len(r.Estimates)
	th := r.Estimates
	phi := ly.phi(th, 0)
	C := make([]float64, J) // C[j] = sum_{m<j} phi_m (0-based: categories 0..J-1)
	for j := 1; j < J; j++ {
		C[j] = C[j-1] + phi[j-1]
	}
	S := C[J-1]
	big := 0.0
	for _, c := range C {
		big = math.Max(big, math.Abs(c))
	}
	if !(math.Abs(S) > 1e-8*big) {
		return nil, fmt.Errorf("the first and last categories have the same score (sum of phi = %.3g): the scores cannot be normalized to run from 0 to 1", S)
	}
	// Free outputs: alpha[1..q] (categories 2..J), score[1..J-2], beta[K].
	n := q + (J - 2) + K
	A := make([]float64, n*P)
	est := make([]float64, n)
	out := &StereotypeScores{Normalization: StereotypeNormalization, Categories: r.Categories, Predictors: r.Predictors}
	row := 0
	for j := 1; j < J; j++ {
		out.Names = append(out.Names, IndexedName(alphaBase, j+1))
		for m := 0; m < j; m++ {
			est[row] -= th[ly.cut[m]]
			A[row*P+ly.cut[m]] = -1
		}
		row++
	}
	for j := 1; j < J-1; j++ {
		out.Names = append(out.Names, IndexedName("score", j+1))
		est[row] = C[j] / S
		for m := 1; m < q; m++ { // phi_1 is fixed
			in := 0.0
			if m < j {
				in = 1
			}
			A[row*P+ly.phiIndex[0][m]] = (in*S - C[j]) / (S * S)
		}
		row++
	}
	for k := 0; k < K; k++ {
		out.Names = append(out.Names, r.Predictors[k])
		s := ly.slope[k]
		est[row] = S * th[s]
		A[row*P+s] = S
		for m := 1; m < q; m++ {
			A[row*P+ly.phiIndex[0][m]] = th[s]
		}
		row++
	}
	_, cov := r.linearMap(A, n)
	out.Estimates, out.Cov = est, cov
	out.StdErrors = make([]float64, n)
	for i := range out.StdErrors {
		out.StdErrors[i] = math.Sqrt(math.Max(cov[i*n+i], 0))
	}
	out.Alpha = append([]float64{0}, est[:q]...)
	out.AlphaSE = append([]float64{0}, out.StdErrors[:q]...)
	out.Score = append(append([]float64{0}, est[q:q+J-2]...), 1)
	out.ScoreSE = append(append([]float64{0}, out.StdErrors[q:q+J-2]...), 0)
	out.Beta = est[q+J-2:]
	out.BetaSE = out.StdErrors[q+J-2:]
	return out, nil
}
