package fit

import (
	"fmt"
	"math"
)

// Baseline is the adjacent nonparallel logit shown in baseline-category
// (multinomial logit) form: for every category j other than Ref,
// ln[P(y=j)/P(y=Ref)] = Cut[j] + x'Coef[j] (note the plus sign).
type Baseline struct {
	Ref        int       `json:"reference"`  // reference category (0-based)
	Categories []int     `json:"categories"` // the non-reference categories, in order (0-based)
	Names      []string  `json:"names"`      // "alpha[1]".., "x[1]".. indexed by position in Categories
	Estimates  []float64 `json:"estimates"`
	StdErrors  []float64 `json:"std_errors"`
	Cov        []float64 `json:"-"`
}

// Baseline converts an adjacent nonparallel logit fit to baseline-category
// form against reference category ref (0-based), with delta-method (here
// exact, the map being linear) standard errors, NaN for those resting on
// parameters NotEstimable marks (r.linearMap).
func (r *Result) Baseline(ref int) (*Baseline, error) {
	if r.Model.Comparison != Adjacent || r.Model.Link != Logit || r.Model.Structure() != NonparallelEffects {
		return nil, fmt.Errorf("the baseline-category form exists for the adjacent nonparallel logit only, not %s", r.Name)
	}
	if !r.OK() {
		return nil, fmt.Errorf("%s has no finite estimates", r.Name)
	}
	J, K := r.J, len(r.Predictors)
	if ref < 0 || ref >= J {
		return nil, fmt.Errorf("reference category %d outside 1..%d", ref+1, J)
	}
	q := J - 1
	P := len(r.Estimates)
	// alpha_j = -sum_{k<j} tau_k and c_j = sum_{k<j} b_k, relative to
	// category 0; then subtract the reference.
	ly, _ := newLayout(r.Model, J, r.Predictors)
	var cats []int
	for j := 0; j < J; j++ {
		if j != ref {
			cats = append(cats, j)
		}
	}
	out := &Baseline{Ref: ref, Categories: cats}
	nOut := q * (K + 1)
	A := make([]float64, nOut*P)
	row := 0
	// intercepts
	for i, j := range cats {
		out.Names = append(out.Names, IndexedName(alphaBase, i+1))
		for k := 0; k < j; k++ {
			A[row*P+ly.cut[k]] -= 1
		}
		for k := 0; k < ref; k++ {
			A[row*P+ly.cut[k]] += 1
		}
		row++
	}
	for p, name := range r.Predictors {
		s := ly.slope[p]
		for i, j := range cats {
			out.Names = append(out.Names, IndexedName(name, i+1))
			for k := 0; k < j; k++ {
				A[row*P+s+k] += 1
			}
			for k := 0; k < ref; k++ {
				A[row*P+s+k] -= 1
			}
			row++
		}
	}
	out.Estimates, out.Cov = r.linearMap(A, nOut)
	out.StdErrors = make([]float64, nOut)
	for i := range out.StdErrors {
		out.StdErrors[i] = math.Sqrt(out.Cov[i*nOut+i])
	}
	return out, nil
}

// linearMap returns A theta and A V A' for an n x P matrix A.
func linearMap(A []float64, n int, theta, V []float64) ([]float64, []float64) {
	P := len(theta)
	est := make([]float64, n)
	for i := 0; i < n; i++ {
		est[i] = dot(A[i*P:(i+1)*P], theta)
	}
	return est, aMAt(A, n, P, V)
}
