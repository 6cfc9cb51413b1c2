package fit

import (
	"fmt"
	"math"
	"slices"
)

// Prediction holds, for new rows, the category probabilities, cumulative
// probabilities, expected category (scores 1..J), most likely category and
// linear predictors, each with delta-method standard errors.
type Prediction struct {
	N, J       int
	Prob       []float64 // N x J: P(y = j)
	SE         []float64 // N x J
	Cum        []float64 // N x (J-1): P(y <= m)
	CumSE      []float64
	Expected   []float64 // N: sum_j j P(y = j), categories scored 1..J
	ExpectedSE []float64
	MostLikely []int     // N: 0-based category with the largest probability
	Linear     []float64 // N x (J-1): L_m = tau_m - x'b_m - offset
	LinearSE   []float64
	Negative   []bool // a category probability is negative (cumulative partial/nonparallel)
}

// probsAt fills p (length J) with the category probabilities of one row x
// (length K) with offset off, at parameters theta.
func (pr *problem) probsAt(theta []float64, x []float64, off float64, p []float64) {
	pr.rowProbs(pr.coefs(theta), x, off, make([]float64, pr.q), p)
}

// rowProbs is probsAt at the coefficients c of the parameters, with L
// (length J-1) to hold the row's linear predictors.
func (pr *problem) rowProbs(c *coefs, x []float64, off float64, L, p []float64) {
	pr.linearRow(c, x, off, L)
	pr.ker.probs(L, p)
}

// dprobsDL fills D (J x (J-1)) with dP_j/dL_m at L and, when T is not nil,
// T (J x (J-1) x (J-1)) with the second derivatives d2P_j/dL_m dL_l. For a
// cumulative model P_j = F(L_j) - F(L_j-1) (F(L_-1) = 0, F(L_J-1) = 1):
// D holds the densities f and T their derivatives f' on its diagonals; for
// the others P_j = exp(log P_j), so dP_j/dL_m = P_j g_m and d2P_j/dL_m dL_l =
// P_j (h_ml + g_m g_l) with g and h the derivatives of log P_j (kernel.eval).
func (k *kernel) dprobsDL(L, D, T []float64) {
	q := k.nEq
	J := q + 1
	for i := range D[:J*q] {
		D[i] = 0
	}
	if T != nil {
		for i := range T[:J*q*q] {
			T[i] = 0
		}
	}
	if k.cmp == Cumulative {
		for m := 0; m < q; m++ {
			lf, r := k.link.logDensity(L[m])
			f := math.Exp(lf)
			D[m*q+m] += f
			D[(m+1)*q+m] -= f
			if T != nil {
				fp := mulZero(f, r) // f' = f (f'/f); 0 where f is 0 in floating point
				T[(m*q+m)*q+m] += fp
				T[((m+1)*q+m)*q+m] -= fp
			}
		}
		return
	}
	g := make([]float64, q)
	var h []float64
	if T != nil {
		h = make([]float64, q*q)
	}
	for j := 0; j < J; j++ {
		lp, ok := k.eval(L, j, g, h)
		if !ok {
			continue
		}
		P := math.Exp(lp)
		for m := 0; m < q; m++ {
			D[j*q+m] = P * g[m]
			if T == nil {
				continue
			}
			for l := 0; l < q; l++ {
				T[(j*q+m)*q+l] = mulZero(P, h[m*q+l]+g[m]*g[l])
			}
		}
	}
}

// rowLinear returns the J-1 linear predictors of one row.
func (pr *problem) rowLinear(theta []float64, x []float64, off float64) []float64 {
	L := make([]float64, pr.q)
	pr.linearRow(pr.coefs(theta), x, off, L)
	return L
}

// rowJacobian returns dP_j/dtheta (J x P) for one row, analytically:
// dP/dL times dL/dtheta.
func (pr *problem) rowJacobian(theta []float64, x []float64, off float64) []float64 {
	out, _ := pr.rowJacobians(theta, x, off)
	return out
}

// rowJacobians returns dP_j/dtheta (J x P) and dL_m/dtheta ((J-1) x P).
func (pr *problem) rowJacobians(theta []float64, x []float64, off float64) ([]float64, []float64) {
	q, P := pr.q, len(theta)
	J := q + 1
	c := pr.coefs(theta)
	L := make([]float64, q)
	pr.linearRow(c, x, off, L)
	D := make([]float64, J*q)
	pr.ker.dprobsDL(L, D, nil)
	dL := make([]float64, q*P)
	pr.linearJacobian(pr.derivs(theta), c, x, true, dL)
	out := make([]float64, J*P)
	for j := 0; j < J; j++ {
		for m := 0; m < q; m++ {
			if D[j*q+m] == 0 {
				continue
			}
			for i := 0; i < P; i++ {
				out[j*P+i] += D[j*q+m] * dL[m*P+i]
			}
		}
	}
	return out, dL
}

// linearJacobian fills dL ((J-1) x P) with dL_m/dtheta at the predictor
// values x, for the derivatives dv (problem.derivs) and coefficients c of
// the same theta. Without cuts the cutpoints' column counts 0: L is affine
// in x, so that is the Jacobian of L(x0 + x) - L(x0), the change of the
// linear predictors along a direction x, whatever x0.
func (pr *problem) linearJacobian(dv []pderiv, c *coefs, x []float64, cuts bool, dL []float64) {
	P := len(dv)
	for i := range dL {
		dL[i] = 0
	}
	for i, dd := range dv {
		if dd.parallel {
			xv := x[pr.parCols[dd.col]]
			for m := 0; m < pr.q; m++ {
				dL[m*P+i] = -xv
			}
			continue
		}
		col := pr.freeCols[dd.col]
		if col.kind == constantColumn && !cuts {
			continue
		}
		u := col.value(x, pr.ly.groups, c.gam)
		for _, e := range dd.c {
			dL[e.m*P+i] += e.v * u
		}
	}
}

// rowColumns returns the per-equation columns of one row.
func (pr *problem) rowColumns(theta []float64, x []float64) []float64 {
	c := pr.coefs(theta)
	u := make([]float64, len(pr.freeCols))
	for j, col := range pr.freeCols {
		u[j] = col.value(x, pr.ly.groups, c.gam)
	}
	return u
}

func (r *Result) problem() (*problem, error) {
	if !r.OK() || r.Cov == nil {
		return nil, fmt.Errorf("%s has no usable estimates (%s)", r.Name, r.Status)
	}
	ly, err := newLayout(r.Model, r.J, r.Predictors)
	if err != nil {
		return nil, err
	}
	return newProblem(&design{K: len(r.Predictors)}, r.Model, ly, 1), nil
}

// Predict returns the category probabilities of rows X (N x K, in the
// fit's predictor order) with offsets (nil: none), with delta-method
// standard errors from the fit's covariance, and flags rows with a
// negative probability.
func (r *Result) Predict(X []float64, offset []float64) (*Prediction, error) {
	pr, err := r.problem()
	if err != nil {
		return nil, err
	}
	K := len(r.Predictors)
	if K == 0 && len(X) != 0 || K > 0 && len(X)%K != 0 {
		return nil, fmt.Errorf("X has %d values, not a multiple of %d predictors", len(X), K)
	}
	n := 1
	if K > 0 {
		n = len(X) / K
	}
	J, P := r.J, len(r.Estimates)
	q := J - 1
	out := &Prediction{N: n, J: J, Prob: make([]float64, n*J), SE: make([]float64, n*J),
		Cum: make([]float64, n*q), CumSE: make([]float64, n*q), Expected: make([]float64, n), ExpectedSE: make([]float64, n),
		MostLikely: make([]int, n), Linear: make([]float64, n*q), LinearSE: make([]float64, n*q), Negative: make([]bool, n)}
	g := make([]float64, P)
	for i := 0; i < n; i++ {
		x := X[i*K : (i+1)*K]
		off := 0.0
		if offset != nil {
			off = offset[i]
		}
		p := out.Prob[i*J : (i+1)*J]
		pr.probsAt(r.Estimates, x, off, p)
		G, dL := pr.rowJacobians(r.Estimates, x, off)
		L := pr.rowLinear(r.Estimates, x, off)
		best := 0
		for j, v := range p {
			if v < 0 {
				out.Negative[i] = true
			}
			if v > p[best] {
				best = j
			}
			out.SE[i*J+j] = math.Sqrt(r.variance(G[j*P : (j+1)*P]))
			out.Expected[i] += float64(j+1) * v
		}
		out.MostLikely[i] = best
		// cumulative probabilities and the expected category
		for a := range g {
			g[a] = 0
		}
		cum := 0.0
		for m := 0; m < q; m++ {
			cum += p[m]
			out.Cum[i*q+m] = cum
			for a := 0; a < P; a++ {
				g[a] += G[m*P+a]
			}
			out.CumSE[i*q+m] = math.Sqrt(r.variance(g))
			out.Linear[i*q+m] = L[m]
			out.LinearSE[i*q+m] = math.Sqrt(r.variance(dL[m*P : (m+1)*P]))
		}
		for a := range g {
			g[a] = 0
			for j := 0; j < J; j++ {
				g[a] += float64(j+1) * G[j*P+a]
			}
		}
		out.ExpectedSE[i] = math.Sqrt(r.variance(g))
	}
	return out, nil
}

func quadForm(g, V []float64) float64 {
	P := len(g)
	s := 0.0
	for a := 0; a < P; a++ {
		if g[a] == 0 {
			continue
		}
		for b := 0; b < P; b++ {
			s += g[a] * V[a*P+b] * g[b]
		}
	}
	return math.Max(s, 0)
}

// MarginalEffect is the average effect of one predictor on the probability
// of one category.
type MarginalEffect struct {
	Predictor string  `json:"predictor"`
	Category  string  `json:"category"`
	Discrete  bool    `json:"discrete"`         // a change between two values (a level, the two values of a numeric column) instead of a derivative
	Change    string  `json:"change,omitempty"` // "per unit", "0 to 1", or "reference to level" for a categorical predictor
	Effect    float64 `json:"effect"`
	SE        float64 `json:"se"`
	Z         float64 `json:"z"`
	P         float64 `json:"p"`
	Low       float64 `json:"low"`
	High      float64 `json:"high"`
}

// AverageMarginalEffects returns, for every predictor and category, the
// weighted average over the rows of d of dP(y=j)/dx_k (or, for a 0/1
// predictor, of P(y=j | x_k=1) - P(y=j | x_k=0)), with delta-method
// standard errors (AverageDifference and AverageSlope: the Jacobian in the
// parameters written out) and intervals at the given level.
func (r *Result) AverageMarginalEffects(d *Data, level float64) ([]MarginalEffect, error) {
	binary := make([]bool, len(d.Predictors))
	for k := range binary {
		binary[k] = isBinary(d, k)
	}
	return r.marginalEffects(d, binary, level)
}

// MarginalEffectsAt returns the marginal effects at one point x (for
// example the means of the predictors, or values a plan gives): the
// derivative dP(y=j)/dx_k, or for the predictors flagged in binary the
// change from x_k = 0 to x_k = 1 with the others held at x.
func (r *Result) MarginalEffectsAt(x []float64, binary []bool, level float64) ([]MarginalEffect, error) {
	K := len(r.Predictors)
	if len(x) != K || len(binary) != K {
		return nil, fmt.Errorf("need %d values and %d flags", K, K)
	}
	one := &Data{J: r.J, Predictors: r.Predictors, Y: []int{0}, X: append([]float64(nil), x...)}
	return r.marginalEffects(one, binary, level)
}

func (r *Result) marginalEffects(d *Data, binaryOf []bool, level float64) ([]MarginalEffect, error) {
	K := len(r.Predictors)
	if len(d.Predictors) != K {
		return nil, fmt.Errorf("data have %d predictors, the fit %d", len(d.Predictors), K)
	}
	n := d.N()
	var out []MarginalEffect
	for k := 0; k < K; k++ {
		var eff []MarginalEffect
		var err error
		if binaryOf[k] {
			// the change from x_k = 0 to x_k = 1
			X0, X1 := slices.Clone(d.X[:n*K]), slices.Clone(d.X[:n*K])
			for i := 0; i < n; i++ {
				X0[i*K+k], X1[i*K+k] = 0, 1
			}
			eff, err = r.AverageDifference(r.Predictors[k], X0, X1, d.Offset, d.Weights, level)
		} else {
			// the derivative: x_k moves by 1, the other columns stay
			dX := make([]float64, n*K)
			for i := 0; i < n; i++ {
				dX[i*K+k] = 1
			}
			eff, err = r.AverageSlope(r.Predictors[k], d.X[:n*K], dX, d.Offset, d.Weights, level)
		}
		if err != nil {
			return nil, err
		}
		out = append(out, eff...)
	}
	return out, nil
}

// isBinary reports whether predictor k takes only the values 0 and 1.
func isBinary(d *Data, k int) bool {
	K := len(d.Predictors)
	for i := 0; i < d.N(); i++ {
		v := d.X[i*K+k]
		if v != 0 && v != 1 {
			return false
		}
	}
	return true
}

// ProbInterval is the interval of a probability p with delta-method
// standard error se at quantile q (z, or t on its degrees of freedom):
// BoundedInterval on (0, 1).
func ProbInterval(p, se, q float64) (lo, hi float64) { return BoundedInterval(p, se, q, 0, 1) }

// BoundedInterval is the interval of a quantity v that lies between a and
// b (a probability: 0 and 1; the expected category: 1 and J), with
// delta-method standard error se, at quantile q. It is made on the log-odds
// scale of v's place u = (v-a)/(b-a) in the range, where the delta method
// gives the error se/((b-a) u (1-u)): logit(u) -/+ q times that error,
// transformed back. So it stays inside (a, b), and near an end it is not
// symmetric about v. A v outside [a, b] (a negative probability, where a
// model's cumulative probabilities cross) has no such interval (NaN, NaN);
// at an end of the range, or with se 0, the interval is v itself.
func BoundedInterval(v, se, q, a, b float64) (lo, hi float64) {
	u := (v - a) / (b - a)
	switch {
	case math.IsNaN(u) || math.IsNaN(se) || u < 0 || u > 1:
		return math.NaN(), math.NaN()
	case u == 0 || u == 1 || se == 0:
		return v, v
	}
	eta := math.Log(u) - math.Log1p(-u)
	h := q * se / ((b - a) * u * (1 - u))
	back := func(x float64) float64 { return a + (b-a)/(1+math.Exp(-x)) }
	return back(eta - h), back(eta + h)
}
