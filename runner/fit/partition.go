package fit

import (
	"fmt"
	"math"
)

// Sums are the additive pieces of a log-likelihood over a set of rows. The
// log-likelihood is a sum over rows, so partitions of the data can be
// evaluated apart (on other machines) and added.
type Sums struct {
	LogLik  float64   `json:"loglik"`
	Bad     bool      `json:"bad"`               // an observed category has a non-positive probability
	Score   []float64 `json:"score,omitempty"`   // P, when order >= 1
	Hessian []float64 `json:"hessian,omitempty"` // P x P second derivatives, when order >= 2
}

// Add adds o into s.
func (s *Sums) Add(o *Sums) {
	s.LogLik += o.LogLik
	s.Bad = s.Bad || o.Bad
	if o.Score != nil {
		if s.Score == nil {
			s.Score = make([]float64, len(o.Score))
		}
		addTo(s.Score, o.Score)
	}
	if o.Hessian != nil {
		if s.Hessian == nil {
			s.Hessian = make([]float64, len(o.Hessian))
		}
		addTo(s.Hessian, o.Hessian)
	}
}

// PartitionSums evaluates model m at theta over the rows of d, one
// partition of a larger data set: the log-likelihood (order 0), the score
// (1) and the observed second derivatives (2). d.J must be the number of
// categories of the whole data; a partition may lack some categories.
func PartitionSums(d *Data, m Model, theta []float64, order int) (*Sums, error) {
	ly, err := newLayout(m, d.J, d.Predictors)
	if err != nil {
		return nil, err
	}
	if len(theta) != len(ly.params) {
		return nil, fmt.Errorf("theta has %d values for %d parameters", len(theta), len(ly.params))
	}
	pr := newProblem(d.design(), m, ly, 0)
	a := pr.evaluate(theta, order, false)
	s := &Sums{LogLik: a.ll, Bad: a.bad}
	if a.bad {
		return s, nil
	}
	if order >= 1 {
		s.Score = pr.gradient(theta, a)
	}
	if order >= 2 {
		s.Hessian = pr.hessian(theta, a, true)
	}
	return s, nil
}

// PartitionDiagnostics counts, over the rows of d at theta, the rows with a
// negative predicted category probability and the smallest fitted
// probability of an observed category.
func PartitionDiagnostics(d *Data, m Model, theta []float64) (int, float64, error) {
	ly, err := newLayout(m, d.J, d.Predictors)
	if err != nil {
		return 0, 0, err
	}
	pr := newProblem(d.design(), m, ly, 1)
	minP, neg := pr.fittedCheck(theta)
	return neg, minP, nil
}

// Whole describes the whole data set of a partitioned fit.
type Whole struct {
	J          int
	Predictors []string
	Levels     []string
	Counts     []float64 // weighted count of each category
	Rows       int
}

// FitFromSums fits model m by the Newton engine with the log-likelihood
// summed by sums (for example over partitions held by workers). diag, when
// not nil, returns the negative-probability row count and the smallest
// fitted probability at the estimates. Models with constrained predictors
// are refused (their multi-start search needs the rows). The result
// matches a local Fit to rounding.
func FitFromSums(w Whole, m Model, sums func(theta []float64, order int) (*Sums, error), diag func(theta []float64) (int, float64, error), opt Options) (*Result, error) {
	if w.J < 2 || len(w.Counts) != w.J {
		return nil, inputErr("the whole data need %d category counts", w.J)
	}
	nobs := 0.0
	for c, n := range w.Counts {
		if n <= 0 {
			lv := fmt.Sprint(c + 1)
			if c < len(w.Levels) {
				lv = w.Levels[c]
			}
			return nil, inputErr("category %q of the outcome is never observed", lv)
		}
		nobs += n
	}
	ly, err := newLayout(m, w.J, w.Predictors)
	if err != nil {
		return nil, &InputError{err.Error()}
	}
	if len(constrainedPredictors(m)) > 0 {
		return nil, inputErr("partitioned fits of constrained models are not available (their multi-start search needs the rows): fit %s locally", m.Name())
	}
	if opt.MaxIter <= 0 {
		opt.MaxIter = 200
	}
	// Starting values from the category counts (a Data with one row per
	// category carries them).
	cd := &Data{J: w.J, Predictors: w.Predictors, Y: make([]int, w.J), Weights: w.Counts, X: make([]float64, w.J*len(w.Predictors))}
	for c := range cd.Y {
		cd.Y[c] = c
	}
	theta := opt.Start
	if theta == nil {
		theta = make([]float64, len(ly.params))
		copy(theta, marginalCutpoints(cd, m))
	}
	var evalErr error
	ev := func(th []float64, order int) evalOut {
		s, err := sums(th, order)
		if err != nil {
			evalErr = err
			return evalOut{bad: true, ll: math.Inf(-1)}
		}
		out := evalOut{ll: s.LogLik, bad: s.Bad || math.IsNaN(s.LogLik) || math.IsInf(s.LogLik, 0), order: order, g: s.Score, H: s.Hessian}
		return out
	}
	st := newtonLoop(theta, opt.MaxIter, ev)
	if evalErr != nil {
		return nil, evalErr
	}
	P := len(ly.params)
	r := &Result{Model: m, Name: m.Name(), Predictors: w.Predictors, Levels: cd.levelsOr(w.Levels), J: w.J,
		Converged: st.converged, Iterations: st.iters, Reason: st.reason, NObs: nobs, NRows: w.Rows, NParams: P,
		ParamNames: ly.names(), Estimates: st.theta, Decrement: st.decrement, LogLik: st.ll, SupLogLik: st.ll}
	ly.fillEstimates(r, m, st)
	if diag != nil {
		if r.NegativeRows, r.MinFittedProb, err = diag(st.theta); err != nil {
			return nil, err
		}
	}
	if math.IsInf(st.ll, -1) {
		r.Status, r.Message, r.LogLik = StatusNotConverged, "no valid starting point: "+st.reason, math.NaN()
		return r, nil
	}
	info := make([]float64, P*P)
	for i := range info {
		info[i] = -st.hess[i]
	}
	cond, _, pd := scaledCondition(info, P)
	r.Condition = cond
	switch {
	case !pd || cond > conditionLimit:
		r.Status, r.LogLik = StatusNoFiniteMaximum, math.NaN()
		r.Message = fmt.Sprintf("no finite maximum likelihood estimate: the information is singular at the end of the iterations (condition %.2g); the log-likelihood approaches %.6f", cond, st.ll)
		return r, nil
	case !st.converged:
		r.Status, r.LogLik = StatusNotConverged, math.NaN()
		r.Message = fmt.Sprintf("Newton-Raphson stopped after %d iterations: %s", st.iters, st.reason)
		return r, nil
	}
	r.Status = StatusOK
	if r.NegativeRows > 0 {
		r.Status = StatusNegativeProbs
		r.Message = fmt.Sprintf("%d of %d rows have a negative predicted category probability (crossing cumulative probabilities)", r.NegativeRows, r.NRows)
	}
	r.AIC = -2*r.LogLik + 2*float64(P)
	r.BIC = -2*r.LogLik + math.Log(nobs)*float64(P)
	cov, err := invertSym(info, P)
	if err != nil {
		r.Status, r.LogLik = StatusNoFiniteMaximum, math.NaN()
		r.Message = "the information matrix cannot be inverted at the maximum"
		return r, nil
	}
	r.Cov, r.CovType = cov, CovOIM
	r.StdErrors = make([]float64, P)
	for i := range r.StdErrors {
		r.StdErrors[i] = math.Sqrt(cov[i*P+i])
	}
	return r, nil
}

func (d *Data) levelsOr(l []string) []string {
	if len(l) == d.J {
		return l
	}
	return d.levels()
}
