package fit

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// InflationLimit is the variance inflation of a term's slopes at which a
// fit is said to be nearly collinear (Result.Collinear): the term's
// standard errors are then at least sqrt(100) = 10 times what they would
// be were its columns unrelated to the other terms' (1 - R^2 at most 0.01
// for a single column). The rank check refuses only exact combinations
// (1 - R^2 below 1e-10); between the two, a fit is valid but its separate
// effects are poorly determined.
const InflationLimit = 100

// Inflation is the variance inflation of one term's slopes in a fit: the
// generalized variance inflation factor of its block of slope parameters
// (every equation's, for a nonparallel term) among all the model's slope
// parameters, with the cutpoints and the common factors phi profiled out,
// GVIF = det(V_AA) det((V_SS^-1)_AA) for the model-based covariance V of
// the slopes S and the term's block A, read as GVIF^(1/df): the variance
// inflation factor 1 / (1 - R^2) of a term of one column, with the fit's
// weights. It does not depend on the units of the columns, nor on where
// they are centred (the cutpoints take up a shift).
type Inflation struct {
	Term       string   `json:"term"`
	Parameters []string `json:"parameters"`
	Factor     float64  `json:"variance_inflation"` // GVIF^(1/df)
}

// CheckCollinearity sets r.Collinear to the terms whose variance
// inflation (Inflation) is at least InflationLimit. It reads the
// model-based covariance, so it is called before a sandwich replaces it
// (runner.CovariancePolicy.Settle); it does nothing for a fit without
// usable estimates, one of fewer than two terms with slopes, or one whose
// covariance is already a sandwich.
func (r *Result) CheckCollinearity(terms []Term) {
	r.Collinear = nil
	for _, v := range r.VarianceInflation(terms) {
		if v.Factor >= InflationLimit {
			r.Collinear = append(r.Collinear, v)
		}
	}
}

// VarianceInflation is the variance inflation of each term's slopes
// (Inflation), for the terms with slopes in the model, in the order of
// terms; nil when it cannot be formed (see CheckCollinearity).
func (r *Result) VarianceInflation(terms []Term) []Inflation {
	if !r.OK() || r.CovType.IsSandwich() || len(r.Cov) != r.NParams*r.NParams {
		return nil
	}
	ly, err := newLayout(r.Model, r.J, r.Predictors)
	if err != nil || len(ly.params) != r.NParams {
		return nil // stereotype models have a layout of their own
	}
	col := map[string]int{}
	for k, p := range r.Predictors {
		col[p] = k
	}
	termOf := make([]int, ly.K)
	for k := range termOf {
		termOf[k] = -1
	}
	for t, tm := range terms {
		for _, c := range tm.Columns {
			if k, ok := col[c]; ok {
				termOf[k] = t
			}
		}
	}
	// S: the slope parameters, and each term's block within them.
	var S []int
	blocks := make([][]int, len(terms))
	for i, p := range ly.params {
		if p.kind == pParallel || p.kind == pFree || p.kind == pGamma {
			if t := termOf[p.k]; t >= 0 {
				blocks[t] = append(blocks[t], len(S))
			}
			S = append(S, i)
		}
	}
	used := 0
	for _, b := range blocks {
		if len(b) > 0 {
			used++
		}
	}
	if used < 2 {
		return nil
	}
	n := len(S)
	V := make([]float64, n*n)
	for a, i := range S {
		for b, j := range S {
			V[a*n+b] = r.Cov[i*r.NParams+j]
		}
	}
	M, err := invertSym(V, n)
	if err != nil {
		return nil
	}
	var out []Inflation
	for t, b := range blocks {
		if len(b) == 0 {
			continue
		}
		lv, okv := logDetBlock(V, n, b)
		lm, okm := logDetBlock(M, n, b)
		f := math.NaN()
		if okv && okm {
			f = math.Exp((lv + lm) / float64(len(b)))
		}
		names := make([]string, len(b))
		for a, i := range b {
			names[a] = r.ParamNames[S[i]]
		}
		out = append(out, Inflation{Term: terms[t].Name, Parameters: names, Factor: f})
	}
	return out
}

// logDetBlock is log det of the block of the n x n symmetric A on the
// indices b: the log of the diagonal's product plus that of the
// determinant of the block scaled to unit diagonal (Cholesky); not ok
// when the block is not positive definite.
func logDetBlock(A []float64, n int, b []int) (float64, bool) {
	k := len(b)
	s := make([]float64, k)
	ld := 0.0
	for a, i := range b {
		v := A[i*n+i]
		if !(v > 0) || math.IsInf(v, 0) {
			return 0, false
		}
		s[a] = 1 / math.Sqrt(v)
		ld += math.Log(v)
	}
	C := mat.NewSymDense(k, nil)
	for a, i := range b {
		for c := a; c < k; c++ {
			C.SetSym(a, c, A[i*n+b[c]]*s[a]*s[c])
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(C) {
		return 0, false
	}
	return ld + ch.LogDet(), true
}

// CollinearNote is the sentence that warns of near-collinearity in the
// fit (r.Collinear), naming the terms; "" when there is none.
func (r *Result) CollinearNote() string {
	if len(r.Collinear) == 0 {
		return ""
	}
	parts := make([]string, len(r.Collinear))
	for i, v := range r.Collinear {
		parts[i] = fmt.Sprintf("%.3g", v.Factor)
	}
	return fmt.Sprintf("near-collinearity: the slopes of %s have variance inflation %s (at least %d: standard errors at least %d times those of columns unrelated to the other terms); their columns are nearly linear combinations of the other terms' columns, so their separate effects and tests are poorly determined, though the fit is valid",
		termList(r.Collinear), strings.Join(parts, ", "), InflationLimit, int(math.Sqrt(InflationLimit)))
}

func termList(v []Inflation) string {
	names := make([]string, len(v))
	for i, x := range v {
		names[i] = x.Term
	}
	switch len(names) {
	case 1:
		return names[0]
	case 2:
		return names[0] + " and " + names[1]
	}
	return strings.Join(names[:len(names)-1], ", ") + " and " + names[len(names)-1]
}
