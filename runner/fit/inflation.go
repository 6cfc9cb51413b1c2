package fit

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/mat"

	"ordplan/internal/words"
)

// InflationLimit is the variance inflation of a term's slopes at which a
// fit is said to be nearly collinear (Result.Collinear). For a term of
// one column its standard error is then at least sqrt(100) = 10 times
// what it would be were the column unrelated to the other terms' (1 - R^2
// at most 0.01); for a term of df > 1 slopes GVIF^(1/df) is a geometric
// mean over the term's df dimensions, so the statement holds on average,
// not for each slope. The rank check refuses only exact combinations
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
	// Sets: for a fit pooled over imputed sets, the sets (numbered from
	// 1) whose fits flag the term; Factor is then the largest of theirs.
	Sets []int `json:"imputed_sets,omitempty"`
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
// fit (r.Collinear), naming the terms through name (the identity for
// plain text, an escaping for Markdown); "" when there is none. A pooled
// fit's terms name the imputed sets that flag them.
func (r *Result) CollinearNote(name func(string) string) string {
	if len(r.Collinear) == 0 {
		return ""
	}
	names := make([]string, len(r.Collinear))
	parts := make([]string, len(r.Collinear))
	for i, v := range r.Collinear {
		names[i] = name(v.Term)
		parts[i] = fmt.Sprintf("%.3g", v.Factor)
		if len(v.Sets) > 0 {
			parts[i] += " (" + setList(v.Sets) + ")"
		}
	}
	return fmt.Sprintf("near-collinearity: the slopes of %s have variance inflation %s; %s",
		words.AndList(names), strings.Join(parts, ", "), CollinearMeaning)
}

// CollinearMeaning says what a variance inflation at or above
// InflationLimit means, after the terms and their factors are named.
var CollinearMeaning = fmt.Sprintf("at least %d means standard errors about %d times or more those of columns unrelated to the other terms (exactly so for a term of one column; for a term of several columns GVIF^(1/df) is a geometric mean over its dimensions); their columns are nearly linear combinations of the other terms' columns, so their separate effects and tests are poorly determined, though the fit is valid",
	InflationLimit, int(math.Sqrt(InflationLimit)))

// setList names imputed sets: "imputed set 2", "imputed sets 1, 2 and 4".
func setList(sets []int) string {
	s := make([]string, len(sets))
	for i, k := range sets {
		s[i] = fmt.Sprint(k)
	}
	if len(s) == 1 {
		return "imputed set " + s[0]
	}
	return "imputed sets " + words.AndList(s)
}
