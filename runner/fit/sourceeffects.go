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
// method with the analytic Jacobian of the effect in the parameters
// (averageSlope).
func (r *Result) AverageSlope(name string, X, dX, offset, w []float64, level float64) ([]MarginalEffect, error) {
	pr, err := r.problem()
	if err != nil {
		return nil, err
	}
	K := len(r.Predictors)
	if len(X) != len(dX) || K > 0 && len(X)%K != 0 {
		return nil, fmt.Errorf("design rows of different sizes")
	}
	n := 1
	if K > 0 {
		n = len(X) / K
	}
	eff, jac := pr.averageSlope(r.Estimates, n, rowsOf2(X, dX, K), offset, w, true)
	return r.effectRows(name, false, eff, jac, level), nil
}

// AverageSlopeRows is AverageSlope on n rows given one at a time, so that
// neither X nor dX is held whole: row(i) returns the design row i and the
// derivative of its columns (each K values, read before the next call).
// The same values as AverageSlope on those rows, to the last bit.
func (r *Result) AverageSlopeRows(name string, n int, row func(i int) (x, dx []float64), offset, w []float64, level float64) ([]MarginalEffect, error) {
	pr, err := r.problem()
	if err != nil {
		return nil, err
	}
	eff, jac := pr.averageSlope(r.Estimates, n, row, offset, w, true)
	return r.effectRows(name, false, eff, jac, level), nil
}

// rowsOf2 gives row i of X and of dX (n x K each).
func rowsOf2(X, dX []float64, K int) func(i int) (x, dx []float64) {
	return func(i int) (x, dx []float64) { return X[i*K : (i+1)*K], dX[i*K : (i+1)*K] }
}

// averageSlope returns the weighted average over the n rows (row(i): the
// design row x and its direction dx, K values each) of the derivative of
// the category probabilities along dx at theta,
//
//	e_j = sum_m dP_j/dL_m (L) s_m,  s_m = dL_m along dx = -sum_k b_mk dx_k,
//
// and, with jacobian, its Jacobian in theta (J x P) written out:
//
//	de_j/dtheta = sum_m sum_l d2P_j/dL_m dL_l s_m dL_l/dtheta + sum_m dP_j/dL_m ds_m/dtheta,
//
// where ds_m/dtheta is the Jacobian of L at dx without the cutpoints (L is
// affine in x; for a constrained predictor b_mk = phi_m g_k, both factors
// parameters). It holds to rounding whatever the scale of a column, where
// differences in theta would need steps matched to each column.
func (pr *problem) averageSlope(theta []float64, n int, row func(i int) (x, dx []float64), offset, w []float64, jacobian bool) (eff, jac []float64) {
	K, q, P := pr.ly.K, pr.q, len(theta)
	J := q + 1
	c := pr.coefs(theta)
	dv := pr.derivs(theta)
	B := pr.ly.effects(theta, pr.model.Effects)
	eff = make([]float64, J)
	L, dL, D := make([]float64, q), make([]float64, q), make([]float64, J*q)
	var T, dLt, dS, v []float64
	if jacobian {
		jac = make([]float64, J*P)
		T, dLt, dS, v = make([]float64, J*q*q), make([]float64, q*P), make([]float64, q*P), make([]float64, q)
	}
	tot := eachWeightedRow(n, w, offset, func(i int, wi, off float64) {
		x, dx := row(i)
		pr.linearRow(c, x, off, L)
		pr.ker.dprobsDL(L, D, T)
		for m := 0; m < q; m++ {
			s := 0.0
			for k := 0; k < K; k++ {
				if dx[k] != 0 {
					s += B[m*K+k] * dx[k]
				}
			}
			dL[m] = -s
		}
		for j := 0; j < J; j++ {
			for m := 0; m < q; m++ {
				eff[j] += wi * D[j*q+m] * dL[m]
			}
		}
		if !jacobian {
			return
		}
		pr.linearJacobian(dv, c, x, true, dLt)
		pr.linearJacobian(dv, c, dx, false, dS)
		for j := 0; j < J; j++ {
			// v_l = sum_m d2P_j/dL_m dL_l s_m
			for l := range v {
				v[l] = 0
			}
			for m := 0; m < q; m++ {
				if dL[m] == 0 {
					continue
				}
				for l := 0; l < q; l++ {
					v[l] += T[(j*q+m)*q+l] * dL[m]
				}
			}
			row := jac[j*P : (j+1)*P]
			for l := 0; l < q; l++ {
				if t := wi * v[l]; t != 0 {
					axpy(row, t, dLt[l*P:(l+1)*P])
				}
				if t := wi * D[j*q+l]; t != 0 {
					axpy(row, t, dS[l*P:(l+1)*P])
				}
			}
		}
	})
	for j := range eff {
		eff[j] /= tot
	}
	for a := range jac {
		jac[a] /= tot
	}
	return eff, jac
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
		se := math.Sqrt(r.variance(jac[j*P : (j+1)*P]))
		me := MarginalEffect{Predictor: name, Category: r.Categories[j], Discrete: discrete, Effect: eff[j], SE: se}
		switch {
		case math.IsNaN(se):
			// Not estimable under clustered errors (NotEstimable): no
			// statistic either.
			me.Z, me.P = math.NaN(), math.NaN()
		case se > 0:
			me.Z = eff[j] / se
			me.P = TSurvival2(me.Z, df)
		default:
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
