package fit

import (
	"fmt"
	"math"
	"slices"
)

// NumParams returns the number of parameters of model m for J categories
// and the given predictors.
func NumParams(m Model, J int, predictors []string) (int, error) {
	ly, err := newLayout(m, J, predictors)
	if err != nil {
		return 0, err
	}
	return len(ly.params), nil
}

// CheckShape checks that a result received from elsewhere (a worker) is
// one this package could have produced for model m and the predictors:
// vectors and matrices of the lengths the model's layout gives, parameter
// names in order, finite estimates for a usable fit. It does not check the
// numbers themselves.
func (r *Result) CheckShape(m Model, predictors []string) error {
	if !sameModel(r.Model, m) {
		return fmt.Errorf("the result is of model %s, not %s", r.Model.Name(), m.Name())
	}
	if !slices.Equal(r.Predictors, predictors) {
		return fmt.Errorf("the result has predictors %v, not %v", r.Predictors, predictors)
	}
	if r.J < 2 || len(r.Categories) != r.J {
		return fmt.Errorf("the result has %d categories and %d labels", r.J, len(r.Categories))
	}
	ly, err := newLayout(m, r.J, predictors)
	if err != nil {
		return err
	}
	P, q := len(ly.params), r.J-1
	switch r.Status {
	case StatusOK, StatusNegativeProbs, StatusNoFiniteMaximum, StatusNotConverged, StatusNotIdentified, StatusFlatMaximum:
	default:
		return fmt.Errorf("unknown status %q", r.Status)
	}
	if r.NParams != P || !slices.Equal(r.ParamNames, ly.names()) {
		return fmt.Errorf("the result has %d parameters (%d names) where the model has %d", r.NParams, len(r.ParamNames), P)
	}
	if len(r.Estimates) != P {
		return fmt.Errorf("%d estimates for %d parameters", len(r.Estimates), P)
	}
	if r.NRows < 0 || r.NegativeRows < 0 || r.Iterations < 0 || !(r.NObs > 0) || math.IsInf(r.NObs, 0) {
		return fmt.Errorf("bad counts (rows %d, observations %g, iterations %d)", r.NRows, r.NObs, r.Iterations)
	}
	if !r.OK() {
		return nil
	}
	if len(r.StdErrors) != P || len(r.Cov) != P*P || len(r.Cutpoints) != q || len(r.Effects) != q {
		return fmt.Errorf("a usable fit with %d standard errors, %d covariances, %d cutpoints and %d effect rows for %d parameters and %d categories",
			len(r.StdErrors), len(r.Cov), len(r.Cutpoints), len(r.Effects), P, r.J)
	}
	for _, row := range r.Effects {
		if len(row) != len(predictors) || !finite(row) {
			return fmt.Errorf("effects: a row of %d values for %d predictors, or a value that is not finite", len(row), len(predictors))
		}
	}
	if !finite(r.Estimates) || !finite(r.Cutpoints) || !finite([]float64{r.LogLik, r.AIC, r.BIC}) {
		return fmt.Errorf("a usable fit with an estimate, cutpoint or log-likelihood that is not a finite number")
	}
	if !(r.LogLik <= 0) {
		return fmt.Errorf("log-likelihood %g above 0", r.LogLik)
	}
	for i, s := range r.StdErrors {
		if math.IsInf(s, 0) || s < 0 {
			return fmt.Errorf("standard error of %s is %g", r.ParamNames[i], s)
		}
	}
	if len(r.Phi) != len(ly.groups) {
		return fmt.Errorf("%d common factors for %d constraint groups", len(r.Phi), len(ly.groups))
	}
	for _, ph := range r.Phi {
		if len(ph) != q {
			return fmt.Errorf("a common factor of %d values for %d equations", len(ph), q)
		}
	}
	return nil
}

func sameModel(a, b Model) bool {
	return a.Comparison == b.Comparison && a.Backward == b.Backward && a.Link == b.Link &&
		slices.Equal(a.Effects, b.Effects) && slices.Equal(a.Groups, b.Groups) && slices.Equal(a.GroupNames, b.GroupNames)
}

func finite(v []float64) bool {
	for _, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}

// CheckShape checks partition sums received from elsewhere for P
// parameters and the derivative order asked.
func (s *Sums) CheckShape(P, order int) error {
	if s.Bad {
		if len(s.Score) != 0 || len(s.Hessian) != 0 {
			return fmt.Errorf("derivatives where a category has no probability")
		}
		return nil
	}
	if math.IsNaN(s.LogLik) || math.IsInf(s.LogLik, 0) || s.LogLik > 0 {
		return fmt.Errorf("log-likelihood %g", s.LogLik)
	}
	want := func(n int, on bool) int {
		if on {
			return n
		}
		return 0
	}
	if len(s.Score) != want(P, order >= 1) || len(s.Hessian) != want(P*P, order >= 2) {
		return fmt.Errorf("%d score values and %d second derivatives for %d parameters at order %d", len(s.Score), len(s.Hessian), P, order)
	}
	if !finite(s.Score) || !finite(s.Hessian) {
		return fmt.Errorf("a derivative that is not a finite number")
	}
	return nil
}
