package fit

import (
	"errors"
	"fmt"
	"math"
)

// Data is the array-level input of a fit.
type Data struct {
	Y          []int     // category index 0..J-1 per row
	J          int       // number of categories
	X          []float64 // row-major N x K, no intercept column
	Predictors []string  // K names
	Categories []string  // J category labels (optional; default "1".."J")
	Weights    []float64 // frequency weights (nil: all 1)
	Offset     []float64 // added to x'b in every equation (nil: none)
	// ind, when set, makes the last ind.count predictors 0/1 columns that
	// X does not hold: indicators of each row's group (see indicators).
	ind *indicators
	// uncentred, when set, is the data these were centred from (see
	// centring.data): facts told to the user, such as the values behind a
	// separation, read its values, the data's own.
	uncentred *Data
}

// indicators are 0/1 columns held as one group number per row: with w
// columns in X, predictor w+g-1 is 1 in the rows of group g (g = 1..count)
// and 0 elsewhere, group 0 having none. LipsitzTest fits its group
// indicators this way, without a copy of X.
type indicators struct {
	group []int
	count int
}

// width is the number of predictors X holds per row.
func (d *Data) width() int {
	if d.ind == nil {
		return len(d.Predictors)
	}
	return len(d.Predictors) - d.ind.count
}

// at is the value of predictor k in row i.
func (d *Data) at(i, k int) float64 {
	w := d.width()
	if k < w {
		return d.X[i*w+k]
	}
	if d.ind.group[i] == k-w+1 {
		return 1
	}
	return 0
}

// columns fills u (the columns X holds, of rows rows, column-major) with
// the rows lo..lo+rows-1 of X; all is 0, 1, ..., width-1.
func (d *Data) columns(lo, rows int, u []float64, all []int) {
	w := d.width()
	gatherRows(u, all, d.X[lo*w:(lo+rows)*w], w, rows, all, nil, nil)
}

// ScreenRows is the number of rows above which the starts of a search
// are screened on the approximation: ScreenAbove with its default
// (negative: at any size).
func (o Options) ScreenRows() int { return o.screenAbove() }

// screenAbove is ScreenAbove with its default.
func (o Options) screenAbove() int {
	if o.ScreenAbove == 0 {
		return defaultScreenAbove
	}
	return o.ScreenAbove
}

// subsampleAbove is SubsampleAbove with its default.
func (o Options) subsampleAbove() int {
	if o.SubsampleAbove == 0 {
		return defaultSubsampleAbove
	}
	return o.SubsampleAbove
}

// N is the number of rows.
func (d *Data) N() int { return len(d.Y) }

// Options tunes a fit. The zero value is the default.
type Options struct {
	Covariance Covariance `json:"covariance"`        // Observed (default) or Expected
	MaxIter    int        `json:"newton_iterations"` // Newton iterations (default 200)
	Workers    int        `json:"workers"`           // goroutines over row blocks (default GOMAXPROCS)
	Start      []float64  `json:"start_values"`      // starting values in parameter order (optional)
	Scoring    bool       `json:"scoring"`           // Fisher scoring instead of Newton-Raphson
	// RandomStarts is the number of random starts of a model with
	// constrained predictors: 0 means 5, a negative number none.
	RandomStarts int `json:"random_starts"`
	// ScreenAbove: with more rows than this, a model with constrained
	// predictors runs on the data only the user's start and the first
	// deterministic one, and screens the others on the quadratic
	// approximation around the unconstrained partial fit first. 0 means
	// 5000; a negative number screens at any size.
	ScreenAbove int `json:"screen_above"`
	// SubsampleAbove: a fit on at least this many rows (after merging
	// repeated rows) without a Start begins its full-data Newton
	// iterations at the maximum on a fixed subsample (subsample.go).
	// 0 means 200000; a negative number never.
	SubsampleAbove int `json:"subsample_above"`
	// KeepStarts runs every start of a model with constrained predictors
	// to its end. Without it a start is abandoned once it cannot reach the
	// best log-likelihood found so far (runStart), which saves iterations
	// and leaves the maximum reported as it is (the tests check this).
	KeepStarts bool `json:"keep_starts,omitempty"`
	// Sampling says the weights are sampling weights: their scale is
	// arbitrary (weights that sum to 1 describe the same sample as weights
	// that sum to the population), so what a fit counts (observations
	// against parameters, for BIC, the groups of the calibration table)
	// are rows, not the weights' sum (Observations). The log-likelihood is
	// on the weights' scale: rescaled to sum to the rows (as the runner's
	// reader does), it is on the sample's.
	Sampling bool `json:"sampling,omitempty"`
	// Settle, when set, is the step every usable fit that Stepwise makes
	// takes before it tests, as the fits of a plan's grid do (the
	// near-collinearity flag, then robust or cluster-robust errors).
	// Fit itself ignores it.
	Settle func(*Result) error `json:"-"`
	// maximumOnly asks for the maximized log-likelihood alone (a refit
	// that only enters a likelihood-ratio statistic, such as LipsitzTest's):
	// a model without constrained predictors is then iterated by
	// maximumLoop and finished without a covariance (finish).
	maximumOnly bool
	// restarts counts the times finish has carried the iterations on
	// from a point of higher log-likelihood than the one they stopped at
	// (at most maxRestarts).
	restarts int
}

// Status of a fit.
type Status string

// The statuses a fit can end with.
const (
	StatusOK              Status = "ok"
	StatusNegativeProbs   Status = "ok_negative_probabilities"
	StatusNoFiniteMaximum Status = "no_finite_maximum"
	StatusNotConverged    Status = "not_converged"
	// StatusFlatMaximum: the log-likelihood's maximum is proved finite
	// and was reached (the log-likelihood and criteria are kept), but it
	// is nearly flat along some direction of the parameters (Flat names
	// them), so their estimates and standard errors are unreliable: a
	// fit with no usable estimates (not OK), as a model too rich for the
	// data.
	StatusFlatMaximum Status = "flat_maximum"
)

// Result is a frozen fit.
type Result struct {
	Model      Model
	Name       string
	Predictors []string
	Categories []string
	J          int

	Status     Status
	Message    string
	Converged  bool
	Iterations int
	Reason     string // why the Newton engine stopped

	LogLik  float64 // NaN unless the maximum is finite
	NObs    float64
	NRows   int
	NParams int
	AIC     float64
	BIC     float64

	ParamNames []string
	Estimates  []float64
	StdErrors  []float64
	Cov        []float64 // NParams x NParams, row-major
	CovType    Covariance
	// Clusters is the number of clusters G of a cluster-robust covariance
	// (CovType Clustered; 0 otherwise): its rank is at most G-1, and a
	// Wald test of more restrictions is refused (waldDefined).
	Clusters int
	// DF is, per parameter, the degrees of freedom of the t distribution
	// its intervals and p-values refer to: set on a fit pooled over
	// imputed data sets (the Barnard-Rubin degrees of freedom), nil on a
	// fit of one data set, whose reference is the normal (Inference).
	DF []float64
	// RefDF, when above 0, is the degrees of freedom of the reference of
	// every quantity made from the covariance of a fit of one data set:
	// G-1 under a cluster-robust covariance of G clusters (the clustered
	// sandwich, SandwichEstimate, or the delete-one-cluster jackknife,
	// ClusterJackknife; set by UseCovariance). A single estimate, contrast
	// or marginal effect then refers to t on RefDF degrees of freedom, a
	// joint Wald statistic W of q restrictions as W (G-q)/((G-1) q) to
	// F(q, G-q) (waldTest). 0: normal and chi-square.
	RefDF float64
	// Correction is the few-cluster correction of the covariance
	// (Jackknife: the delete-one-cluster jackknife; NoCorrection for the
	// clustered sandwich and any other).
	Correction ClusterCorrection
	// NotEstimable names the parameters whose cluster-robust standard
	// errors cannot be estimated (their rows and columns of Cov and their
	// StdErrors are NaN), with the reason; nil when none (onecluster.go).
	NotEstimable *NotEstimable
	// bound: the cluster-robust covariance as computed, which the
	// quantities that do not load on NotEstimable's combinations read.
	bound *clusterBound

	Cutpoints []float64   // tau_1..tau_{J-1}
	Effects   [][]float64 // [m][k]: slope of predictor k in equation m
	Phi       [][]float64 // per constraint group: phi_1..phi_{J-1} (phi_1 = 1)
	PhiGroups []string

	MaxAbsScore float64 // of the parameters as reported (in the data's units when Centred)
	Decrement   float64
	// Condition is that of the information scaled to unit diagonal, in the
	// coordinates the iterations ran in: of the centred parameters when
	// Centred names predictors (there the cutpoints are tau'_m = tau_m -
	// c'b_m; in the data's units the condition would mostly measure how
	// far from zero those predictors lie, which centring takes out).
	Condition float64
	// Centred names the predictors fitted centred inside the fit (less
	// their weighted mean, being further from zero than 1e3 standard
	// deviations); the estimates, errors and MaxAbsScore are given back in
	// the data's units.
	Centred       []string
	MinFittedProb float64 // smallest fitted probability of an observed category
	NegativeRows  int     // rows with a negative predicted category probability
	Separation    *Separation
	Flat          *Flatness // the parameters of a flat maximum (StatusFlatMaximum)
	SupLogLik     float64   // log-likelihood reached when there is no finite maximum
	// Collinear: the terms whose slopes' variance inflation is at least
	// InflationLimit (CheckCollinearity; nil when none or not checked).
	Collinear []Inflation

	// Models with constrained predictors: every start of the search for the
	// maximum, the number that reached the best log-likelihood (within
	// 1e-6), and notes on phi (e.g. equation-1 slopes small relative to the
	// others).
	Starts         []StartRecord
	StartsAgreeing int
	PhiNotes       []string
	// PhiOther: for constraint groups whose slopes vanish in equation 1 at
	// the maximum (StatusNotIdentified), phi normalized by another equation.
	PhiOther []PhiNormalization
	// NearZeroScale: the constraint groups whose g is near zero at the
	// maximum, where phi is near non-identification (CheckScale).
	NearZeroScale []NearZeroScale

	// score: the score at the estimates, in the coordinates of the
	// iterations (nil when not known: a fit through another
	// parametrization), which centring's restore turns into the data's.
	score []float64
	// rank: the sums of the rank check of the rows fitted, which a refit
	// of the same rows with indicator columns (LipsitzTest) starts from
	// (nil for fits made elsewhere, such as on a queue's workers).
	rank *rankSums
	// last: the sums of the fit's last evaluation to second order, which
	// the same refit's first evaluation takes its X parts from (nil when
	// unknown); of the size of the information (a few KB), not of the rows.
	last *lastSums
}

// Separation describes a fit with no finite maximum.
type Separation struct {
	// Parameters: those that diverge when Proved (that some direction of
	// recession, in which the log-likelihood rises to its supremum,
	// moves); else those with weight in the directions of no curvature of
	// the information where the iterations stopped, read by some row, or,
	// when it has none, those along the direction in which the signs were
	// seen. A constrained predictor x alone in its group is named by its
	// effects at the boundaries, "x" and "phi[m]*x" (nameRecession).
	Parameters []string `json:"parameters"`
	Predictors []string `json:"predictors"` // the predictors of Parameters, and of Evidence
	Boundaries []string `json:"boundaries"` // "lower/upper" category boundaries of Parameters
	Evidence   []string `json:"evidence"`   // data facts such as `category "1" occurs only at temp = 0`
	// NotDetermined are the parameters along which the log-likelihood is
	// constant: no row's probability reads them (or, when Proved, only a
	// combination of them), so the data do not determine them. No name is
	// in both lists.
	NotDetermined []string `json:"not_determined,omitempty"`
	// Proved: a direction of recession was found in the data (the
	// log-likelihood keeps rising along it); false when only the signs
	// were seen (a singular information, a ray along which the
	// log-likelihood held) and nothing proves whether the maximum is finite.
	Proved bool `json:"proved"`
	// byCurvature: not Proved, the parameters were named from the null
	// space of the information where the iterations stopped
	// (nameNullSpace), not along one direction.
	byCurvature bool
}

// Flatness describes a finite maximum that is nearly flat
// (StatusFlatMaximum): the parameters carrying the direction along which
// the log-likelihood barely changes, their predictors and boundaries.
type Flatness struct {
	Parameters []string `json:"parameters"`
	Predictors []string `json:"predictors"`
	Boundaries []string `json:"boundaries"`
}

// Estimate returns the estimate named name.
func (r *Result) Estimate(name string) (float64, bool) {
	for i, n := range r.ParamNames {
		if n == name {
			return r.Estimates[i], true
		}
	}
	return 0, false
}

// MaximumKnown reports whether LogLik is the maximum of the
// log-likelihood: a usable fit (OK), or one whose maximum is finite and
// reached though some parameters are not determined by it
// (StatusNotIdentified, StatusFlatMaximum).
func (r *Result) MaximumKnown() bool {
	return r.OK() || ((r.Status == StatusNotIdentified || r.Status == StatusFlatMaximum) && !math.IsNaN(r.LogLik))
}

// LikelihoodUsable reports whether the fit's log-likelihood can enter
// criteria and likelihood ratios: a usable fit (OK), or a flat maximum
// (StatusFlatMaximum: the maximum is finite and reached, only some
// estimates are not determined by it).
func (r *Result) LikelihoodUsable() bool {
	return r.OK() || (r.Status == StatusFlatMaximum && !math.IsNaN(r.LogLik))
}

// OK reports whether the fit has a finite maximum and converged.
func (r *Result) OK() bool {
	return r.Status == StatusOK || r.Status == StatusNegativeProbs
}

// InputError is bad input to a fit, with a message for the user.
type InputError struct {
	Msg string
	// Collinear, when set, is the collinearity the message describes,
	// for a caller that names the predictors in its own terms.
	Collinear *Collinearity
	// FewObservations: the model has more parameters than observations
	// (tooFewObservations), a refusal that counts the rows used.
	FewObservations bool
}

// Collinearity is a predictor that is a linear combination of earlier
// ones and the constant, or (Constant) of the constant alone.
type Collinearity struct {
	Predictor int   // index of the predictor
	With      []int // indices of the earlier predictors in the combination
	// Constant: the predictor takes one value, Value, in every row (With
	// is empty).
	Constant bool
	Value    float64
	// Unexplained is the share of the predictor's variance the others and
	// the constant leave unexplained (1 - R^2): below 1e-10, at the level
	// of rounding for an exact combination.
	Unexplained float64
}

func (e *InputError) Error() string { return e.Msg }

func inputErr(format string, a ...any) error { return &InputError{Msg: fmt.Sprintf(format, a...)} }

// tooFewObservations refuses model m of params parameters on nobs
// observations when it has more parameters than observations: the one
// check and wording, for a fit of rows (fitChecked) and over parts
// (CheckWhole).
func tooFewObservations(m Model, params int, nobs float64) error {
	if float64(params) <= nobs {
		return nil
	}
	return &InputError{Msg: fmt.Sprintf("model %s has %d parameters but only %g observations", m.Name(), params, nobs), FewObservations: true}
}

// TooFewObservations is the refusal a fit of model m on d makes when the
// model has more parameters than observations (tooFewObservations; the
// rows count as observations under sampling weights), nil otherwise, and
// for a model it cannot lay out (the fit says why): for a caller that asks
// before fitting.
func TooFewObservations(d *Data, m Model, sampling bool) error {
	ly, err := newLayout(m, d.J, d.Predictors)
	if err != nil {
		return nil
	}
	return tooFewObservations(m, len(ly.params), d.observations(sampling))
}

// Fit estimates model m on data d.
func Fit(d *Data, m Model, opt Options) (*Result, error) {
	return fitFrom(d, m, opt, nil)
}

// fitFrom is Fit, its rank check taking the sums of X's columns from base
// when base was formed on the rows of d.
func fitFrom(d *Data, m Model, opt Options, base *rankSums) (*Result, error) {
	return fitFromWith(d, m, opt, base, nil)
}

// fitFromWith is fitFrom, with the sums of the first evaluation at
// first's point made from the fit it extends (nil: evaluated).
func fitFromWith(d *Data, m Model, opt Options, base *rankSums, first *firstSums) (*Result, error) {
	// X's non-finite values are found by the rank check below (or were
	// found when the sums it takes from base were formed).
	if err := d.validateRows(true); err != nil {
		return nil, err
	}
	sh := &shared{base: base, first: first}
	cd, c := sh.centred(d, opt.Workers)
	return sh.fitOuter(d, cd, c, m, opt, nil)
}

// fitValid is Fit on data that passed validate; sh holds what the fits
// on these data share (the rank check, the compressed design, and in a
// grid the fitted models a constrained fit builds its starts from). The
// result keeps the sums of the rank check.
func fitValid(d *Data, m Model, opt Options, sh *shared) (*Result, error) {
	res, err := fitChecked(d, m, opt, sh)
	if res != nil {
		res.rank = sh.sums
	}
	return res, err
}

// fitChecked is fitValid but for the sums it keeps.
func fitChecked(d *Data, m Model, opt Options, sh *shared) (res *Result, err error) {
	ly, err := newLayout(m, d.J, d.Predictors)
	if err != nil {
		return nil, &InputError{Msg: err.Error()}
	}
	if err := tooFewObservations(m, len(ly.params), d.observations(opt.Sampling)); err != nil {
		return nil, err
	}
	sd, err := sh.rank(d, opt.Workers)
	if err != nil {
		return nil, err
	}
	if opt.MaxIter <= 0 {
		opt.MaxIter = 200
	}
	pr := newProblem(sh.design(d), m, ly, opt.Workers)
	pr.first = sh.first
	defer func() {
		if l := pr.last; res != nil && l != nil && bitsEqual(l.theta, res.Estimates) {
			res.last = l
		}
	}()
	start := opt.Start
	if start != nil && len(start) != len(ly.params) {
		return nil, inputErr("start has %d values for %d parameters", len(start), len(ly.params))
	}
	if len(ly.groups) > 0 {
		// Constrained predictors: several starts, the best kept (finished
		// with their covariance, which the normalizations read).
		opt.maximumOnly = false
		return multiStart(d, m, ly, pr, opt, sh)
	}
	if start == nil {
		start = startValues(d, m, ly)
		// A fit that is not usable from there is made again from the
		// usual start, so that it reads as it does without the stage.
		if st, ok := pr.subsampleNewton(sh.subsample(d, opt), start, opt); ok {
			if res, err := finish(localSource(d, pr, sd, opt.Sampling), m, ly, st, opt); err == nil && res.OK() {
				return res, nil
			}
		}
	}
	var st newtonState
	if opt.maximumOnly {
		st = maximumLoop(start, opt.MaxIter, pr.evaluator(opt.Scoring))
	} else {
		st = pr.newton(start, opt.MaxIter, opt.Scoring)
	}
	src := localSource(d, pr, sd, opt.Sampling)
	return finish(src, m, ly, st, opt)
}

// weight is the frequency weight of row i.
func (d *Data) weight(i int) float64 {
	if d.Weights == nil {
		return 1
	}
	return d.Weights[i]
}

// NObs is the number of observations: the rows, or the sum of the
// frequency weights.
func (d *Data) NObs() float64 { return weightSum(d.Weights, len(d.Y)) }

func (d *Data) categories() []string {
	if len(d.Categories) == d.J {
		return d.Categories
	}
	out := make([]string, d.J)
	for i := range out {
		out[i] = fmt.Sprint(i + 1)
	}
	return out
}

func (d *Data) design() *design {
	des := &design{n: len(d.Y), K: len(d.Predictors), x: d.X, y: d.Y, w: d.Weights, off: d.Offset}
	if d.ind != nil {
		des.group, des.groups = d.ind.group, d.ind.count
	}
	return des
}

func (d *Data) validate() error { return d.validateRows(false) }

// validateRows is validate, which leaves the non-finite values of X to
// the rank check that follows when rankNext is set: its first pass over
// the rows finds them (checkRankWith), so X is not read an extra time.
func (d *Data) validateRows(rankNext bool) error {
	n, K := len(d.Y), d.width()
	if d.J < 2 {
		return inputErr("the outcome needs at least 2 categories, got %d", d.J)
	}
	if n == 0 {
		return inputErr("no observations")
	}
	if len(d.X) != n*K {
		return inputErr("X has %d values, want %d rows x %d predictors", len(d.X), n, K)
	}
	if d.Categories != nil && len(d.Categories) != d.J {
		return inputErr("%d category labels for %d categories", len(d.Categories), d.J)
	}
	if d.Weights != nil && len(d.Weights) != n {
		return inputErr("%d weights for %d rows", len(d.Weights), n)
	}
	if d.Offset != nil && len(d.Offset) != n {
		return inputErr("%d offsets for %d rows", len(d.Offset), n)
	}
	counts := make([]float64, d.J)
	for i, y := range d.Y {
		if y < 0 || y >= d.J {
			return inputErr("row %d: category index %d outside 0..%d", i+1, y, d.J-1)
		}
		w := 1.0
		if d.Weights != nil {
			w = d.Weights[i]
			if !(w >= 0) || math.IsInf(w, 0) {
				return inputErr("row %d: weight %g is not a finite non-negative number", i+1, w)
			}
		}
		counts[y] += w
		if d.Offset != nil && (math.IsNaN(d.Offset[i]) || math.IsInf(d.Offset[i], 0)) {
			return inputErr("row %d: offset %g is not finite", i+1, d.Offset[i])
		}
	}
	if !rankNext {
		if err := d.nonFiniteX(); err != nil {
			return err
		}
	}
	lv := d.categories()
	for c, n := range counts {
		if n == 0 {
			return inputErr("category %q of the outcome is never observed: drop it from the category list or merge it with a neighbour", lv[c])
		}
	}
	seen := map[string]bool{}
	for _, p := range d.Predictors {
		if seen[p] {
			return inputErr("predictor %q is listed twice", p)
		}
		seen[p] = true
	}
	return nil
}

// nonFiniteX refuses the first non-finite value of X (nil: none).
func (d *Data) nonFiniteX() error {
	i := firstNonFinite(d.X)
	if i < 0 {
		return nil
	}
	K := d.width()
	return inputErr("row %d: predictor %q has the non-finite value %g", i/K+1, d.Predictors[i%K], d.X[i])
}

// firstNonFinite is the index of the first NaN or infinite value of x, or
// -1; parts of x are searched in parallel.
func firstNonFinite(x []float64) int {
	const part = 1 << 16
	first := make([]int, (len(x)+part-1)/part)
	forEach(len(first), 0, func(p int) {
		first[p] = -1
		for i := p * part; i < min(len(x), (p+1)*part); i++ {
			if math.IsNaN(x[i]) || math.IsInf(x[i], 0) {
				first[p] = i
				return
			}
		}
	})
	for _, i := range first {
		if i >= 0 {
			return i
		}
	}
	return -1
}

// startValues: cutpoints from the marginal distribution with zero slopes.
// (Models with constrained predictors start from several points instead:
// see multiStart.)
func startValues(d *Data, m Model, ly *layout) []float64 {
	theta := make([]float64, len(ly.params))
	for j, t := range marginalCutpoints(d, m) {
		theta[ly.cut[j]] = t
	}
	return theta
}

// marginalCutpoints gives the cutpoints that reproduce the marginal
// category distribution when every slope is zero.
func marginalCutpoints(d *Data, m Model) []float64 {
	J := d.J
	p := make([]float64, J)
	tot := 0.0
	for i, y := range d.Y {
		w := 1.0
		if d.Weights != nil {
			w = d.Weights[i]
		}
		p[y] += w
		tot += w
	}
	for i := range p {
		p[i] /= tot
	}
	// With an offset, L = tau - offset at zero slopes: shift the cutpoints
	// by the weighted mean offset.
	shift := 0.0
	if d.Offset != nil {
		for i, o := range d.Offset {
			w := 1.0
			if d.Weights != nil {
				w = d.Weights[i]
			}
			shift += w * o
		}
		shift /= tot
	}
	tau := make([]float64, J-1)
	for j := 0; j < J-1; j++ {
		var pr float64
		switch {
		case m.Comparison == Cumulative:
			for c := 0; c <= j; c++ {
				pr += p[c]
			}
		case m.Comparison == Stage && !m.Backward:
			rest := 0.0
			for c := j; c < J; c++ {
				rest += p[c]
			}
			pr = p[j] / rest
		case m.Comparison == Stage:
			below := 0.0
			for c := 0; c <= j+1; c++ {
				below += p[c]
			}
			pr = (below - p[j+1]) / below
		default:
			pr = p[j] / (p[j] + p[j+1])
		}
		pr = math.Min(math.Max(pr, 1e-6), 1-1e-6)
		tau[j] = m.Link.Quantile(pr) + shift
		if m.Comparison == Cumulative && j > 0 && tau[j] <= tau[j-1] {
			// Proportions beyond the bounds above (a category or two
			// weighing less than 1e-6 of the whole): cutpoints one apart,
			// so that no category starts with a zero probability.
			tau[j] = tau[j-1] + 1
		}
	}
	return tau
}

var errSingular = errors.New("singular information")
