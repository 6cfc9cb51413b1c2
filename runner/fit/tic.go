package fit

import "fmt"

// TIC returns Takeuchi's information criterion of a fit,
//
//	TIC = -2 logL + 2 tr(A^-1 B),
//
// with A the observed information and B the sum of the outer products of
// the weighted row scores (the parts of the sandwich covariance), and the
// penalty tr(A^-1 B). For a correctly specified model the penalty is close
// to the number of parameters and TIC to AIC; unlike AIC it stays valid
// for a pseudo-likelihood. With sampling weights (probability true) the
// weights are first scaled to sum to the number of rows, which leaves the
// estimates unchanged and puts the criterion on the scale of the sample
// (see docs/models.md); then A = sum w_i H_i and B = sum w_i^2 s_i s_i'.
// With frequency weights B = sum w_i s_i s_i'.
func TIC(d *Data, r *Result, probability bool) (value, penalty float64, err error) {
	if !r.OK() {
		return 0, 0, fmt.Errorf("%s has no usable estimates (%s)", r.Name, r.Status)
	}
	_, info, err := sandwich(d, r, nil, probability, false)
	if err != nil {
		return 0, 0, err
	}
	scale := 1.0
	if probability && d.Weights != nil {
		scale = d.observations(true) / d.NObs()
	}
	penalty = scale * info.Trace
	return scale*(-2*r.LogLik) + 2*penalty, penalty, nil
}

// Probabilities returns the category probabilities (N x J, row-major) of
// rows X (N x K, in the fit's predictor order) with offsets (nil: none),
// without standard errors.
func (r *Result) Probabilities(X, offset []float64) ([]float64, error) {
	pr, err := r.problem()
	if err != nil {
		return nil, err
	}
	K := len(r.Predictors)
	if K == 0 || len(X)%K != 0 {
		return nil, fmt.Errorf("X has %d values, not a multiple of %d predictors", len(X), K)
	}
	n := len(X) / K
	out := make([]float64, n*r.J)
	for i := 0; i < n; i++ {
		off := 0.0
		if offset != nil {
			off = offset[i]
		}
		pr.probsAt(r.Estimates, X[i*K:(i+1)*K], off, out[i*r.J:(i+1)*r.J])
	}
	return out, nil
}
