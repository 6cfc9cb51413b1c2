package fit

import (
	"fmt"
	"math"
)

// AverageDifference is the weighted average over rows of
// P(y=j | X1_i) - P(y=j | X0_i): the discrete change of a source variable
// (for example a categorical predictor from its reference to a level)
// with everything else in the row as it is. X0 and X1 are design rows
// (n x K); offset and w may be nil. Standard errors by the delta method
// with the analytic Jacobian of the probabilities.
func (r *Result) AverageDifference(name string, X0, X1, offset, w []float64, level float64) ([]MarginalEffect, error) {
	K := len(r.Predictors)
	if len(X0) != len(X1) || K > 0 && len(X0)%K != 0 {
		return nil, fmt.Errorf("design rows of different sizes")
	}
	n := 1
	if K > 0 {
		n = len(X0) / K
	}
	X := [2][]float64{X0, X1}
	out, err := r.AverageDifferences(name, 2, n, func(v, i int, x []float64) error {
		copy(x, X[v][i*K:(i+1)*K])
		return nil
	}, [][2]int{{0, 1}}, offset, w, level)
	if err != nil {
		return nil, err
	}
	return out[0], nil
}

// AverageDifferences is AverageDifference for several pairs of versions
// of the same n rows (a categorical predictor set to each of its levels):
// row(v, i, x) fills x with the design row of row i in version v, and
// pair (a, b) gets the average of P(y=j | version b) - P(y=j | version a),
// the values AverageDifference gives for those two versions' rows to the
// last bit; each row's probabilities and their Jacobian are computed once
// per version, not once per pair.
func (r *Result) AverageDifferences(name string, versions, n int, row func(v, i int, x []float64) error, pairs [][2]int, offset, w []float64, level float64) ([][]MarginalEffect, error) {
	pr, err := r.problem()
	if err != nil {
		return nil, err
	}
	K, J, P := len(r.Predictors), r.J, len(r.Estimates)
	eff := make([][]float64, len(pairs))
	jac := make([][]float64, len(pairs))
	for c := range pairs {
		eff[c], jac[c] = make([]float64, J), make([]float64, J*P)
	}
	p, g := make([][]float64, versions), make([][]float64, versions)
	for v := range p {
		p[v] = make([]float64, J)
	}
	x := make([]float64, K)
	var rowErr error
	tot := eachWeightedRow(n, w, offset, func(i int, wi, off float64) {
		if rowErr != nil {
			return
		}
		for v := range p {
			if rowErr = row(v, i, x); rowErr != nil {
				return
			}
			pr.probsAt(r.Estimates, x, off, p[v])
			g[v] = pr.rowJacobian(r.Estimates, x, off)
		}
		for c, ab := range pairs {
			p0, p1, g0, g1 := p[ab[0]], p[ab[1]], g[ab[0]], g[ab[1]]
			for j := 0; j < J; j++ {
				eff[c][j] += wi * (p1[j] - p0[j])
				for a := 0; a < P; a++ {
					jac[c][j*P+a] += wi * (g1[j*P+a] - g0[j*P+a])
				}
			}
		}
	})
	if rowErr != nil {
		return nil, rowErr
	}
	out := make([][]MarginalEffect, len(pairs))
	for c := range pairs {
		for j := range eff[c] {
			eff[c][j] /= tot
		}
		for a := range jac[c] {
			jac[c][a] /= tot
		}
		out[c] = r.effectRows(name, true, eff[c], jac[c], level)
	}
	return out, nil
}

// AverageSlope is the weighted average over rows of
// sum_k dP(y=j)/dx_k (X_i) * dX_ik: the derivative of the category
// probabilities in a numeric source variable whose design columns move by
// dX (n x K: the derivative of each design column in the variable, through
// transformations, splines and interactions). Standard errors by the delta
// method, the Jacobian in the parameters by central differences.
func (r *Result) AverageSlope(name string, X, dX, offset, w []float64, level float64) ([]MarginalEffect, error) {
	pr, err := r.problem()
	if err != nil {
		return nil, err
	}
	K, J := len(r.Predictors), r.J
	if len(X) != len(dX) || K > 0 && len(X)%K != 0 {
		return nil, fmt.Errorf("design rows of different sizes")
	}
	n := 1
	if K > 0 {
		n = len(X) / K
	}
	slope := func(theta []float64) []float64 {
		eff := make([]float64, J)
		B := pr.ly.effects(theta, r.Model.Effects)
		D := make([]float64, J*(J-1))
		dL := make([]float64, J-1)
		tot := eachWeightedRow(n, w, offset, func(i int, wi, off float64) {
			x, dx := X[i*K:(i+1)*K], dX[i*K:(i+1)*K]
			L := pr.rowLinear(theta, x, off)
			pr.ker.dprobsDL(L, D)
			// dL_m = -sum_k b_mk dx_k
			for m := 0; m < J-1; m++ {
				s := 0.0
				for k := 0; k < K; k++ {
					if dx[k] != 0 {
						s += B[m*K+k] * dx[k]
					}
				}
				dL[m] = -s
			}
			for j := 0; j < J; j++ {
				for m := 0; m < J-1; m++ {
					eff[j] += wi * D[j*(J-1)+m] * dL[m]
				}
			}
		})
		for j := range eff {
			eff[j] /= tot
		}
		return eff
	}
	eff := slope(r.Estimates)
	jac := centralJacobian(slope, r.Estimates)
	return r.effectRows(name, false, eff, jac, level), nil
}

// effectRows turns per-category effects and their Jacobian into rows with
// standard errors, z, p and intervals.
func (r *Result) effectRows(name string, discrete bool, eff, jac []float64, level float64) []MarginalEffect {
	if level <= 0 || level >= 1 {
		level = 0.95
	}
	df := r.ReferenceDF()
	z := TQuantile(0.5+level/2, df)
	P := len(r.Estimates)
	out := make([]MarginalEffect, len(eff))
	for j := range eff {
		se := math.Sqrt(quadForm(jac[j*P:(j+1)*P], r.Cov))
		me := MarginalEffect{Predictor: name, Category: r.Categories[j], Discrete: discrete, Effect: eff[j], SE: se}
		if se > 0 {
			me.Z = eff[j] / se
			me.P = TSurvival2(me.Z, df)
		} else {
			me.P = 1
		}
		me.Low, me.High = eff[j]-z*se, eff[j]+z*se
		out[j] = me
	}
	return out
}

// eachWeightedRow calls f for each of the n rows with a non-zero weight
// (weights nil: all 1), with the row's weight and offset (offset nil: 0),
// and returns the sum of the weights: the rows an average is taken over.
func eachWeightedRow(n int, w, offset []float64, f func(i int, wi, off float64)) float64 {
	tot := 0.0
	for i := 0; i < n; i++ {
		wi := 1.0
		if w != nil {
			wi = w[i]
		}
		if wi == 0 {
			continue
		}
		tot += wi
		off := 0.0
		if offset != nil {
			off = offset[i]
		}
		f(i, wi, off)
	}
	return tot
}
