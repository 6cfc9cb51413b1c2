package fit

import (
	"errors"
	"fmt"
	"math"
	"slices"
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
	Categories []string
	Counts     []float64 // weighted count of each category
	Rows       int
	// Spread of the predictors over all partitions (nil: not known). With
	// it, a fit whose coefficients grow implausibly large is probed for a
	// direction of rising likelihood, as a local fit is.
	Spread *Spread
	// Shift is the shift of each predictor (Spread.Shift of the whole
	// data; nil: none; fewer values than predictors: the later ones
	// unshifted). With it, FitFromSums runs centred, as a fit of the rows
	// in one place does: it asks for the sums of the rows with their
	// predictors less Shift (Data.Centred) at parameters in those centred
	// coordinates, and gives the result in the data's units.
	Shift []float64
	// Moments are the predictors' weighted means and centred
	// cross-products over all partitions (nil: not known). With them
	// FitFromSums refuses a constant predictor, or one collinear with
	// others, as the rank check of a fit of the rows in one place does
	// (CheckMoments), instead of reporting no finite maximum.
	Moments *Moments
	// Notes are remarks on the whole data the user must see (a value of a
	// subset condition no row holds).
	Notes []string
}

// Spread is the weighted mean and sum of squared deviations of each
// predictor over a set of rows. The spreads of partitions merge into the
// spread of their union.
type Spread struct {
	Weight float64   `json:"weight"`
	Mean   []float64 `json:"mean"`
	SS     []float64 `json:"ss"` // sum of w (x - mean)^2
}

// SpreadOf is the spread of the predictors over the rows of d.
func SpreadOf(d *Data) *Spread {
	s, _ := spreadOf(d, false)
	return s
}

// spreadOf is SpreadOf and, when third is set, each predictor's weighted
// third absolute central moment sum(w |x - mean|^3) / sum(w), from the
// same pass as the sums of squares (the approximation's allowance,
// surrogate.go).
func spreadOf(d *Data, third bool) (*Spread, []float64) {
	K := len(d.Predictors)
	s := &Spread{Mean: make([]float64, K), SS: make([]float64, K)}
	for i := range d.Y {
		w := d.weight(i)
		s.Weight += w
		for k := 0; k < K; k++ {
			s.Mean[k] += w * d.at(i, k)
		}
	}
	for k := range s.Mean {
		s.Mean[k] /= s.Weight
	}
	if !third {
		for i := range d.Y {
			w := d.weight(i)
			for k := 0; k < K; k++ {
				v := d.at(i, k) - s.Mean[k]
				s.SS[k] += w * v * v
			}
		}
		return s, nil
	}
	m3 := make([]float64, K)
	for i := range d.Y {
		w := d.weight(i)
		for k := 0; k < K; k++ {
			v := d.at(i, k) - s.Mean[k]
			s.SS[k] += w * v * v
			m3[k] += w * math.Abs(v*v*v)
		}
	}
	for k := range m3 {
		m3[k] /= s.Weight
	}
	return s, m3
}

// Merge adds the rows summarized by o to s (the pairwise update of means
// and sums of squares, exact up to rounding).
func (s *Spread) Merge(o *Spread) {
	if o.Weight == 0 {
		return
	}
	if s.Weight == 0 {
		s.Weight = o.Weight
		s.Mean = append([]float64(nil), o.Mean...)
		s.SS = append([]float64(nil), o.SS...)
		return
	}
	tot := s.Weight + o.Weight
	for k := range s.Mean {
		delta := o.Mean[k] - s.Mean[k]
		s.SS[k] += o.SS[k] + delta*delta*s.Weight*o.Weight/tot
		s.Mean[k] += delta * o.Weight / tot
	}
	s.Weight = tot
}

// SD is the weighted standard deviation of each predictor (1 for a
// constant one, so that it can scale a coefficient).
func (s *Spread) SD() []float64 {
	sd := make([]float64, len(s.SS))
	for k := range sd {
		sd[k] = math.Sqrt(s.SS[k] / s.Weight)
		if sd[k] == 0 {
			sd[k] = 1
		}
	}
	return sd
}

// CheckWhole makes the checks FitFromSums makes of the whole data before
// any sum is asked for: every category observed, a model that can be
// summed over parts, no more parameters than observations
// (tooFewObservations, as a fit of the rows in one place refuses), no
// constant or collinear predictor (CheckMoments), the options and shift
// it can take. A caller makes them before it sends any part to a worker.
func CheckWhole(w Whole, m Model, opt Options) error {
	_, err := checkWhole(w, m, opt)
	return err
}

// checkWhole is CheckWhole, also returning the observations.
func checkWhole(w Whole, m Model, opt Options) (float64, error) {
	if w.J < 2 || len(w.Counts) != w.J {
		return 0, inputErr("the whole data need %d category counts", w.J)
	}
	nobs := 0.0
	for c, n := range w.Counts {
		if n <= 0 {
			lv := fmt.Sprint(c + 1)
			if c < len(w.Categories) {
				lv = w.Categories[c]
			}
			return 0, inputErr("category %q of the outcome is never observed", lv)
		}
		nobs += n
	}
	nobs = Observations(w.Rows, nobs, opt.Sampling)
	ly, err := newLayout(m, w.J, w.Predictors)
	if err != nil {
		return 0, &InputError{Msg: err.Error()}
	}
	if err := OverParts(m); err != nil {
		return 0, inputErr("%s: %v", m.Name(), err)
	}
	if err := tooFewObservations(m, len(ly.params), nobs); err != nil {
		return 0, err
	}
	if w.Moments != nil {
		if err := CheckMoments(w.Predictors, w.Moments); err != nil {
			return 0, err
		}
	}
	if opt.Covariance == Expected {
		return 0, inputErr("partitioned fits give observed-information errors only (covariance %q): the expected information needs the rows", Observed)
	}
	if len(w.Shift) > len(w.Predictors) || !finite(w.Shift) {
		return 0, inputErr("the whole data's shift has %d values for %d predictors, or a value that is not a finite number", len(w.Shift), len(w.Predictors))
	}
	return nobs, nil
}

// FitFromSums fits model m by the Newton engine with the log-likelihood
// summed by sums (for example over partitions held by workers). diag, when
// not nil, returns the negative-probability row count and the smallest
// fitted probability at the estimates. With w.Shift set, sums and diag
// are asked about the rows centred by it, at parameters in centred
// coordinates (see Whole.Shift), and opt.Start and the result are in the
// data's units. Models with constrained predictors
// are refused (their multi-start search needs the rows). The result
// matches a local Fit to rounding.
func FitFromSums(w Whole, m Model, sums func(theta []float64, order int) (*Sums, error), diag func(theta []float64) (int, float64, error), opt Options) (*Result, error) {
	nobs, err := checkWhole(w, m, opt)
	if err != nil {
		return nil, err
	}
	ly, err := newLayout(m, w.J, w.Predictors)
	if err != nil {
		return nil, &InputError{Msg: err.Error()}
	}
	c := centringBy(w.Shift, len(w.Predictors))
	if c != nil && opt.Start != nil {
		opt.Start = c.start(m, w.J, w.Predictors, opt.Start)
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
	src := &source{
		predictors: w.Predictors, categories: cd.categoriesOr(w.Categories), J: w.J, nobs: nobs, nrows: w.Rows,
		fitted: func(theta []float64) (float64, int, error) {
			if diag == nil {
				return 0, 0, nil
			}
			neg, minP, err := diag(theta)
			return minP, neg, err
		},
		loglik: ev,
	}
	if w.Spread != nil {
		src.sd = w.Spread.SD()
	}
	r, err := finish(src, m, ly, st, opt)
	if err == nil && evalErr != nil {
		err = evalErr
	}
	if c != nil {
		c.restore(r)
	}
	return r, err
}

// CheckMoments is the rank check of a fit of the rows m summarizes (their
// predictors named names): an InputError for a constant predictor or one
// collinear with those before it and the constant, in the words of the
// rank check of a fit of the rows in one place.
func CheckMoments(names []string, m *Moments) error {
	K := len(names)
	if len(m.Mean) != K || len(m.Cross) != K*K {
		return inputErr("the moments of %d columns for %d predictors", len(m.Mean), K)
	}
	if K == 0 || m.Weight <= 0 {
		return nil
	}
	_, err := rankVerdict(names, m.Mean, m.Weight, m.Cross)
	return err
}

// Spread is the spread of the predictors m summarizes (the diagonal of
// the cross-products).
func (m *Moments) Spread() *Spread {
	K := len(m.Mean)
	s := &Spread{Weight: m.Weight, Mean: slices.Clone(m.Mean), SS: make([]float64, K)}
	for k := range s.SS {
		s.SS[k] = m.Cross[k*K+k]
	}
	return s
}

// OverParts says why FitFromSums cannot fit model m (nil: it can).
func OverParts(m Model) error {
	if len(constrainedPredictors(m)) > 0 {
		return errors.New("constrained and stereotype models are not summed over parts: their search from several starts needs the rows in one place")
	}
	return nil
}

func (d *Data) categoriesOr(l []string) []string {
	if len(l) == d.J {
		return l
	}
	return d.categories()
}
