package fit

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// conditionLimit: an information matrix whose unit-diagonal condition number
// exceeds this is treated as singular (no finite maximum or not identified).
const conditionLimit = 1e10

// source is what finishing a fit needs to know of where its log-likelihood
// comes from: the rows themselves (a local fit) or sums over partitions
// held elsewhere.
type source struct {
	predictors, categories []string
	J                      int
	nobs                   float64 // weighted number of observations
	nrows                  int
	// fitted returns the smallest fitted probability of an observed
	// category and the number of rows with a negative category probability.
	fitted func(theta []float64) (minP float64, neg int, err error)
	// positive: no category probability of the model can be negative (the
	// evaluations' smallest log-probability then gives the smallest
	// fitted probability, and fitted is not needed).
	positive bool
	// negatives counts the rows with a negative category probability
	// (nil: not known apart, fitted gives it): with it a model whose
	// probabilities can be negative takes the smallest fitted probability
	// from the evaluations too, and the pass skips the log-probabilities.
	negatives func(theta []float64) int
	// loglik evaluates the log-likelihood (order 0 is all finish asks of it).
	loglik evalFunc
	// expected returns the expected second derivatives (nil: the source
	// cannot give them, and expected-information errors are refused).
	expected func(theta []float64) []float64
	// sd is the standard deviation of each predictor (nil: not known): with
	// it, implausibly large coefficients are probed for divergence.
	sd []float64
	// rows are the data (nil for partitions): with them a separation is
	// described with the data facts behind it.
	rows *Data
}

// localSource is the source of a fit of the rows of d, evaluated by pr;
// sd is the predictors' standard deviations (nil: computed here).
func localSource(d *Data, pr *problem, sd []float64, sampling bool) *source {
	switch {
	case sd != nil:
	case len(d.Predictors) == 0:
		sd = []float64{} // no pass over the rows for no predictor
	default:
		sd = predictorSD(d)
	}
	return &source{
		predictors: d.Predictors, categories: d.categories(), J: d.J, nobs: d.observations(sampling), nrows: d.N(),
		fitted: func(theta []float64) (float64, int, error) {
			minP, neg := pr.fittedCheck(theta)
			return minP, neg, nil
		},
		negatives: func(theta []float64) int {
			_, neg := pr.fittedRows(theta, false)
			return neg
		},
		positive: pr.ker.positive(),
		loglik:   pr.evaluator(false),
		expected: pr.expectedHessian,
		sd:       sd,
		rows:     d,
	}
}

// expectedHessian is the expected second derivatives at theta.
func (p *problem) expectedHessian(theta []float64) []float64 {
	return p.hessian(theta, p.evaluate(theta, 2, true), false)
}

// finish turns the Newton state of model m into a result: the status and
// its message, the information criteria, the covariance and the standard
// errors. Every fit ends here, local, constrained or partitioned; fits
// whose common factor is not identified then adjust the result
// (markIdentification, normalizedFit) through settleNotIdentified.
func finish(src *source, m Model, ly *layout, st newtonState, opt Options) (*Result, error) {
	// Phase 1: the estimates as reached.
	r := src.newResult(m, ly, st)
	var err error
	switch {
	case st.minKnown && (src.positive || opt.maximumOnly):
		// (A fit asked for its maximum alone does not count the rows
		// with a negative category probability.)
		r.MinFittedProb = math.Exp(st.minLogP)
	case st.minKnown && src.negatives != nil && !math.IsInf(st.ll, -1):
		r.MinFittedProb, r.NegativeRows = math.Exp(st.minLogP), src.negatives(st.theta)
	default:
		if r.MinFittedProb, r.NegativeRows, err = src.fitted(st.theta); err != nil {
			return nil, err
		}
	}
	if math.IsInf(st.ll, -1) {
		return r.fail(StatusNotConverged, "no valid starting point: "+st.reason), nil
	}
	// Phase 2: is the maximum finite, and was it reached?
	info := negated(st.hess)
	v, dir, rec, higher := src.certify(r, ly, st, info)
	if higher != nil && opt.restarts < maxRestarts {
		// The iterations stopped at a local maximum (the log-likelihood
		// is not concave) beside a higher point, and the data have no
		// direction of recession, so the maximum exists: the iterations
		// carry on from the higher point a check found.
		opt.restarts++
		return finish(src, m, ly, newtonLoop(higher, opt.MaxIter, src.loglik), opt)
	}
	switch {
	case v == verdictSeparated || v == verdictDiverging:
		r.Separation = src.describeSeparation(m, ly, st.theta, info, dir, rec)
		return r.fail(StatusNoFiniteMaximum, separationMessage(r, st)), nil
	case !st.converged:
		msg := fmt.Sprintf("Newton-Raphson stopped after %d iterations: %s (max |score| %.3g)", st.iters, st.reason, r.MaxAbsScore)
		if v == verdictFlat {
			msg += "; " + finiteMaximumReason(m)
		}
		return r.fail(StatusNotConverged, msg), nil
	}
	// Phase 3: criteria, covariance and standard errors.
	r.Status = StatusOK
	if r.NegativeRows > 0 {
		r.Status = StatusNegativeProbs
		r.Message = fmt.Sprintf("%d of %d rows have a negative predicted category probability (crossing cumulative probabilities)", r.NegativeRows, r.NRows)
	}
	r.setCriteria(st.ll)
	if opt.maximumOnly {
		// The maximized log-likelihood alone: no covariance.
		return r, nil
	}
	r.CovType = covarianceType(opt)
	if r.CovType == Expected {
		info = negated(src.expected(st.theta))
	}
	cov, err := invertSym(info, r.NParams)
	switch {
	case v == verdictFlat:
		if err == nil {
			r.setCovariance(cov, nil, r.CovType)
		}
		r.settleFlat(src.flatness(ly, dir))
	case err != nil:
		return r.fail(StatusNoFiniteMaximum, "the information matrix cannot be inverted at the maximum: parameters are not identified"), nil
	default:
		r.setCovariance(cov, nil, r.CovType)
	}
	return r, nil
}

// finiteMaximumReason says why a maximum of model m is known to be
// finite although the checks saw signs of divergence.
func finiteMaximumReason(m Model) string {
	if logConcave(m) {
		return "the maximum likelihood estimate is finite: the log-likelihood is concave and the data admit no direction along which it keeps rising (a linear programme over the distinct rows finds none)"
	}
	return "the maximum likelihood estimate is finite: the data admit no direction along which the log-likelihood keeps rising (a linear programme over the distinct rows finds none), so it falls without bound far from any point (with this link it is not concave: the point reached is a local maximum, not proved the highest)"
}

// flatness names the parameters, predictors and category boundaries
// along the direction vec (scaled coordinates) in which a finite maximum
// is nearly flat.
func (src *source) flatness(ly *layout, vec []float64) *Flatness {
	f := &Flatness{}
	if vec != nil {
		var s Separation
		s.nameDirection(ly, vec, src.predictors, src.categories)
		f.Parameters, f.Predictors, f.Boundaries = s.Parameters, s.Predictors, s.Boundaries
	}
	return f
}

// settleFlat turns r, a converged fit whose maximum is proved finite
// though the checks saw the log-likelihood hold along the direction f
// describes, into a StatusFlatMaximum result: the log-likelihood and
// the criteria stand (the maximum), the estimates and errors of the
// parameters named are not to be relied on.
func (r *Result) settleFlat(f *Flatness) {
	r.Status, r.Flat = StatusFlatMaximum, f
	var b strings.Builder
	b.WriteString(finiteMaximumReason(r.Model))
	b.WriteString(", but it is nearly flat: the log-likelihood barely changes far along a direction of the parameters")
	if len(f.Parameters) > 0 {
		fmt.Fprintf(&b, " (%s)", strings.Join(f.Parameters, ", "))
	}
	b.WriteString(", so their estimates and standard errors are unreliable and their Wald tests and intervals meaningless")
	if len(f.Predictors) > 0 {
		fmt.Fprintf(&b, "; predictors involved: %s", strings.Join(f.Predictors, ", "))
	}
	if len(f.Boundaries) > 0 {
		fmt.Fprintf(&b, "; category boundaries: %s", strings.Join(f.Boundaries, ", "))
	}
	reached := "is the maximum"
	if !logConcave(r.Model) {
		reached = "is the highest found"
	}
	fmt.Fprintf(&b, "; the log-likelihood %.6f %s [information condition %.2g]", r.LogLik, reached, r.Condition)
	if r.NegativeRows > 0 {
		fmt.Fprintf(&b, "; %d of %d rows have a negative predicted category probability", r.NegativeRows, r.NRows)
	}
	r.Message = b.String()
}

// newResult is the result of model m at the Newton state, before any
// verdict: the estimates, their names and the score summary.
func (src *source) newResult(m Model, ly *layout, st newtonState) *Result {
	r := &Result{
		Model: m, Name: m.Name(), Predictors: src.predictors, Categories: src.categories, J: src.J,
		Converged: st.converged, Iterations: st.iters, Reason: st.reason,
		NObs: src.nobs, NRows: src.nrows, NParams: len(ly.params),
		ParamNames: ly.names(), Estimates: st.theta, Decrement: st.decrement,
		LogLik: st.ll, SupLogLik: st.ll,
	}
	ly.fillEstimates(r, m, st)
	return r
}

// fail ends r with a status that has no usable maximum: the message says
// why, and the log-likelihood is NaN (SupLogLik keeps the value reached).
func (r *Result) fail(s Status, msg string) *Result {
	r.Status, r.Message, r.LogLik = s, msg, math.NaN()
	return r
}

// setCriteria sets the log-likelihood at the maximum and the information
// criteria it implies.
func (r *Result) setCriteria(ll float64) {
	P := float64(r.NParams)
	r.LogLik = ll
	r.AIC = -2*ll + 2*P
	r.BIC = -2*ll + math.Log(r.NObs)*P
}

// covarianceType is the kind of information the covariance comes from.
func covarianceType(opt Options) Covariance {
	if opt.Covariance == Expected {
		return Expected
	}
	return Observed
}

// setCovariance sets the covariance (NParams x NParams, row-major) and the
// standard errors; parameters marked in drop (nil: none) get NaN in both.
func (r *Result) setCovariance(cov []float64, drop []bool, covType Covariance) {
	P := r.NParams
	r.CovType = covType
	r.StdErrors = make([]float64, P)
	if drop == nil {
		r.Cov = cov
		for i := range r.StdErrors {
			r.StdErrors[i] = math.Sqrt(cov[i*P+i])
		}
		return
	}
	r.Cov = make([]float64, P*P)
	for i := 0; i < P; i++ {
		r.StdErrors[i] = math.NaN()
		if !drop[i] {
			r.StdErrors[i] = math.Sqrt(cov[i*P+i])
		}
		for j := 0; j < P; j++ {
			r.Cov[i*P+j] = math.NaN()
			if !drop[i] && !drop[j] {
				r.Cov[i*P+j] = cov[i*P+j]
			}
		}
	}
}

// settleNotIdentified turns r into the result of a maximum at which some
// parameters (drop) are not determined: the log-likelihood ll is the
// maximum, the covariance cov (NParams x NParams; the rows and columns of
// dropped parameters are ignored) gives the errors of the others, and the
// message gives the reasons, then what the result reports in their place.
func (r *Result) settleNotIdentified(ll float64, cov []float64, drop []bool, covType Covariance, why []string, reported string) {
	r.Status = StatusNotIdentified
	r.Separation = nil
	r.Converged = true // the identified parameters are at their maximum
	r.setCriteria(ll)
	r.SupLogLik = ll
	r.setCovariance(cov, drop, covType)
	r.Message = strings.Join(why, "; ") + fmt.Sprintf("; the log-likelihood %.6f is the maximum; %s", ll, reported)
	if r.NegativeRows > 0 {
		r.Message += fmt.Sprintf("; %d of %d rows have a negative predicted category probability", r.NegativeRows, r.NRows)
	}
}

// negated returns -A.
func negated(A []float64) []float64 {
	out := make([]float64, len(A))
	for i, v := range A {
		out[i] = -v
	}
	return out
}

// verdict is what certify concludes of the point the iterations reached.
type verdict int

const (
	// verdictFinite: no sign of divergence (a finite maximum, as far as
	// the checks go).
	verdictFinite verdict = iota
	// verdictSeparated: the programme found a direction of recession
	// along which the log-likelihood does not fall: it keeps rising as
	// the parameters diverge (proved, for every model).
	verdictSeparated
	// verdictDiverging: the information is singular, or the
	// log-likelihood does not fall along a ray the checks tried, and
	// nothing proves either way whether the maximum is finite (the
	// programme does not decide for this model, could not run, or found
	// no direction along which the log-likelihood holds).
	verdictDiverging
	// verdictFlat: the checks saw the signs of divergence, but the
	// programme proves the maximum finite (programmeDecides): the
	// log-likelihood is merely nearly flat along the direction found.
	verdictFlat
)

// certify sets r.Condition and says whether the log-likelihood has a
// finite maximum at the end of the iterations: first the signs of
// divergence (divergenceSigns), then the data's own answer, a direction
// of recession found by a linear programme over the rows (on every small
// fit, and on larger ones whose estimates or errors look diverging or
// that showed a sign). It returns the verdict and the direction behind
// it (scaled coordinates): the sign's, or the programme's when it alone
// found one. A separation's verdict comes with the programme's direction
// of recession (rec), which describeSeparation names.
//
// higher is, when the verdict is verdictFlat, the point of highest
// log-likelihood the checks evaluated if it lies above st.ll by more than
// rounding (nil otherwise): the iterations then stopped at a local
// maximum of a log-likelihood that is not concave, short of the maximum
// the programme proves exists, and finish carries them on from there.
func (src *source) certify(r *Result, ly *layout, st newtonState, info []float64) (v verdict, dir []float64, rec *recession, higher []float64) {
	probe := *src
	best, bestLL := []float64(nil), st.ll+math.Max(1e-6, 1e-10*math.Abs(st.ll))
	probe.loglik = func(theta []float64, order int) evalOut {
		a := src.loglik(theta, order)
		if !a.bad && a.ll > bestLL {
			best, bestLL = slices.Clone(theta), a.ll
		}
		return a
	}
	flagged, dir, suspect := probe.divergenceSigns(r, ly, st, info)
	found, rec := src.recessionDirection(r, ly, st.theta, st.ll, suspect || flagged)
	switch {
	case found == recessionFound:
		return verdictSeparated, scaledDirection(rec.step, info), rec, nil
	case !flagged:
		return verdictFinite, dir, nil, nil
	case found == recessionNone && programmeDecides(r.Model):
		return verdictFlat, dir, nil, best
	}
	return verdictDiverging, dir, nil, nil
}

// divergenceSigns looks for the signs that the log-likelihood keeps
// rising as parameters diverge: an information singular at the end of
// the iterations (or of condition above conditionLimit), and rays along
// which the log-likelihood does not fall. It returns whether it saw one
// and the direction (scaled coordinates; the weakest direction of the
// information when it saw none), and whether the estimates or errors
// look diverging (suspect). A sign is no proof: a finite maximum far out
// in a link's tail is numerically flat too (certify asks the programme).
func (src *source) divergenceSigns(r *Result, ly *layout, st newtonState, info []float64) (bool, []float64, bool) {
	cond, minVec, pd := scaledCondition(info, r.NParams)
	r.Condition = cond
	if !pd || cond > conditionLimit {
		return true, minVec, true
	}
	if cond > 1e5 && rayRises(src.loglik, st.theta, st.ll, minVec, info) {
		return true, minVec, true
	}
	if src.sd == nil {
		return false, minVec, false
	}
	large := suspectDivergence(ly, st.theta, src.sd)
	if large != nil {
		// Large coefficients: look for a direction along which the
		// likelihood keeps rising (separation that leaves the scaled
		// information well conditioned): the weakest direction, each
		// parameter's axis, the estimates themselves, and the large
		// estimates alone.
		if v := risingDirection(src.loglik, st.theta, st.ll, minVec, info, large); v != nil {
			return true, v, true
		}
	}
	// The two ridge checks read the covariance of the parameters.
	suspect := large != nil
	if cov, err := invertSym(info, len(st.theta)); err == nil {
		if v := flatDirection(src.loglik, ly, st.theta, st.ll, info, cov, src.sd); v != nil {
			return true, v, true
		}
		if v := explodingDirection(src.loglik, ly, st.theta, st.ll, info, cov, src.sd); v != nil {
			return true, v, true
		}
		suspect = suspect || wideErrors(ly, st.theta, cov, src.sd)
	}
	return false, minVec, suspect
}

// fillEstimates sets the score summary, cutpoints, effects matrix and
// common factors of a result from the Newton state.
func (ly *layout) fillEstimates(r *Result, m Model, st newtonState) {
	r.score = st.grad
	for _, g := range st.grad {
		r.MaxAbsScore = math.Max(r.MaxAbsScore, math.Abs(g))
	}
	q := ly.J - 1
	r.Cutpoints = make([]float64, q)
	for j := 0; j < q; j++ {
		r.Cutpoints[j] = st.theta[ly.cut[j]]
	}
	B := ly.effects(st.theta, m.Effects)
	r.Effects = make([][]float64, q)
	for j := 0; j < q; j++ {
		r.Effects[j] = B[j*ly.K : (j+1)*ly.K]
	}
	for g := range ly.groups {
		r.Phi = append(r.Phi, ly.phi(st.theta, g))
		r.PhiGroups = append(r.PhiGroups, ly.gnames[g])
	}
}

// fittedCheck returns the smallest fitted probability of an observed
// category and the number of rows with a negative category probability.
// The probability is the exponential of the smallest log-probability the
// evaluation's own kernel gives at the evaluation's own linear predictors
// (blockColumns, blockLinear), so it is the value an evaluation at theta
// holds (minLP), which finish takes instead when it has it: one value
// whichever way it is reached. A row whose observed category has no
// positive probability gives that probability (0 or less).
func (p *problem) fittedCheck(theta []float64) (float64, int) {
	return p.fittedRows(theta, true)
}

// fittedRows is fittedCheck; without withMin it only counts the rows with
// a negative category probability (and returns +Inf for the smallest
// probability): the evaluation that reached theta knows the smallest.
func (p *problem) fittedRows(theta []float64, withMin bool) (float64, int) {
	c := p.coefs(theta)
	d, q := p.d, p.q
	positive := p.ker.positive()
	nb := (d.n + blockRows - 1) / blockRows
	minLPs := make([]float64, nb)
	mins := make([]float64, nb)
	negs := make([]int, nb)
	p.eachBlock(func(b, lo, hi int) {
		s := p.getScratch()
		defer p.putScratch(s)
		rows := hi - lo
		p.blockColumns(c, lo, rows, s)
		p.blockLinear(c, lo, rows, false, s)
		L := make([]float64, q)
		pr := make([]float64, q+1)
		minLP, minP := math.Inf(1), math.Inf(1)
		neg := 0
		for i := 0; i < rows; i++ {
			r := lo + i
			if d.weight(r) == 0 {
				continue
			}
			for m := range L {
				L[m] = c.tau[m] - s.eta[m*s.etaStride+i]
			}
			lp, ok := math.Inf(1), true
			if withMin {
				lp, ok = p.ker.eval(L, d.y[r], nil, nil)
			}
			minLP = math.Min(minLP, lp)
			if positive && ok {
				continue
			}
			p.ker.probs(L, pr)
			if !ok {
				minP = math.Min(minP, pr[d.y[r]])
			}
			for _, v := range pr {
				if v < 0 {
					neg += d.rowsBehind(r)
					break
				}
			}
		}
		minLPs[b], mins[b], negs[b] = minLP, minP, neg
	})
	minLP, minP := math.Inf(1), math.Inf(1)
	neg := 0
	for b := range mins {
		minLP = math.Min(minLP, minLPs[b])
		minP = math.Min(minP, mins[b])
		neg += negs[b]
	}
	return math.Min(math.Exp(minLP), minP), neg
}

// linear fills L with the J-1 linear predictors of row i (buf: scratch of
// length K, see design.row).
func (p *problem) linear(c *coefs, i int, L, buf []float64) {
	d := p.d
	off := 0.0
	if d.off != nil {
		off = d.off[i]
	}
	p.linearRow(c, d.row(i, buf), off, L)
}

// linearRow fills L with the J-1 linear predictors of a row of predictor
// values xi with offset off.
func (p *problem) linearRow(c *coefs, xi []float64, off float64, L []float64) {
	q := p.q
	e := off
	for j, k := range p.parCols {
		e += xi[k] * c.bp[j]
	}
	for m := 0; m < q; m++ {
		L[m] = c.tau[m] - e
	}
	for a, col := range p.freeCols {
		if col.kind != predictorColumn {
			continue // the constant and group columns have no slopes
		}
		for m := 0; m < q; m++ {
			L[m] -= xi[col.index] * c.bf[a*q+m]
		}
	}
}

// rayRises reports whether the log-likelihood fails to fall when moving far
// (100 units of 1/sqrt(information diagonal)) along the direction of least
// information, either way: the sign of a recession direction (separation)
// rather than a finite but poorly determined maximum.
func rayRises(loglik evalFunc, theta []float64, ll float64, vec, info []float64) bool {
	if vec == nil {
		return false
	}
	P := len(theta)
	step := make([]float64, P)
	for i := range step {
		s := 1.0
		if v := info[i*P+i]; v > 0 {
			s = 1 / math.Sqrt(v)
		}
		step[i] = 100 * s * vec[i]
	}
	for _, sign := range []float64{1, -1} {
		a := loglik(addScaled(theta, step, sign), 0)
		if !a.bad && a.ll >= ll-1e-9*math.Max(1, math.Abs(ll)) {
			return true
		}
	}
	return false
}

// suspectDivergence reports which coefficients are implausibly large (nil
// when none is): a slope moving the linear predictor by more than 10 per
// standard deviation of its predictor, or a cutpoint beyond 15 in
// absolute value.
func suspectDivergence(ly *layout, theta, sd []float64) []bool {
	var large []bool
	for i, pa := range ly.params {
		v := math.Abs(theta[i])
		switch {
		case pa.kind == pCut && v > 15, (pa.kind == pParallel || pa.kind == pFree || pa.kind == pGamma) && v*sd[pa.k] > 10:
			if large == nil {
				large = make([]bool, len(theta))
			}
			large[i] = true
		}
	}
	return large
}

// risingDirection tries the weakest direction of the information, each
// parameter's axis, the direction of the estimates and that of the large
// estimates alone (large: suspectDivergence's); it returns the first (in
// scaled coordinates) along which the log-likelihood does not fall. The
// last finds a separation confined to some equations while others have
// finite estimates (a stage model whose first equation a predictor
// separates): doubling every estimate lowers the likelihood through the
// finite ones, doubling the diverging ones alone does not.
func risingDirection(loglik evalFunc, theta []float64, ll float64, minVec, info []float64, large []bool) []float64 {
	P := len(theta)
	if minVec != nil && rayRises(loglik, theta, ll, minVec, info) {
		return minVec
	}
	for i := 0; i < P; i++ {
		e := make([]float64, P)
		e[i] = 1
		if rayRises(loglik, theta, ll, e, info) {
			return e
		}
	}
	// The estimates scaled up: complete separation; then the large
	// estimates alone. Each is scaled by 2, or, where the log-likelihood
	// cannot be evaluated there (a link's tail beyond the floating-point
	// range, as cloglog's log(1 - F) = -e^z), by 1.25 or 1.05.
	for _, only := range [][]bool{nil, large} {
		dir := make([]float64, P)
		for i := range dir {
			if only == nil || only[i] {
				dir[i] = theta[i]
			}
		}
		for _, t := range []float64{1, 0.25, 0.05} {
			a := loglik(addScaled(theta, dir, t), 0)
			if a.bad {
				continue
			}
			if a.ll >= ll-1e-9*math.Max(1, math.Abs(ll)) {
				return scaledDirection(dir, info)
			}
			break
		}
	}
	return nil
}

// scaledDirection is direction d of the parameters in the scaled
// coordinates certify reports directions in (each parameter times the
// square root of its diagonal information).
func scaledDirection(d, info []float64) []float64 {
	P := len(d)
	v := make([]float64, P)
	for i := range v {
		v[i] = d[i] * math.Sqrt(math.Max(info[i*P+i], 0))
	}
	return v
}

// flatDirection looks for quasi-complete separation whose estimates stay
// moderate where the search stops (a level that separates a category, its
// slope near -14, its standard error 3e4) and that the scaled information
// hides (its condition can be small): when some parameter's standard error
// moves the linear predictor by more than 1000 (a slope's times its
// predictor's SD, a cutpoint's as it is), the direction in which that
// parameter is least determined (its column of the covariance: the
// others following it along the ridge) is stepped by 5 and 20 units of
// the linear predictor (in the parameter that moves it most), both ways.
// A finite maximum falls along it by at least the curvature such an error
// leaves, 0.5 * 5^2 / 1e6 at the first step, far beyond the 1e-9
// allowed; a separation does not fall. It returns the direction (scaled
// coordinates) or nil.
func flatDirection(loglik evalFunc, ly *layout, theta []float64, ll float64, info, cov, sd []float64) []float64 {
	P := len(theta)
	if len(ly.params) != P {
		return nil
	}
	unit := make([]float64, P) // the linear predictor's change per unit of the parameter
	worst, widest := -1, 1e3
	for i, pa := range ly.params {
		switch pa.kind {
		case pCut:
			unit[i] = 1
		case pParallel, pFree, pGamma:
			unit[i] = sd[pa.k]
		}
		if v := cov[i*P+i]; unit[i] > 0 && v > 0 && math.Sqrt(v)*unit[i] > widest {
			worst, widest = i, math.Sqrt(v)*unit[i]
		}
	}
	if worst < 0 {
		return nil
	}
	d := make([]float64, P)
	most := 0.0
	for j := range d {
		d[j] = cov[j*P+worst]
		most = math.Max(most, math.Abs(d[j])*unit[j])
	}
	if !(most > 0) || math.IsInf(most, 0) {
		return nil
	}
	for _, units := range []float64{5, 20} {
		for _, sign := range []float64{1, -1} {
			a := loglik(addScaled(theta, d, sign*units/most), 0)
			if !a.bad && a.ll >= ll-1e-9*math.Max(1, math.Abs(ll)) {
				return scaledDirection(d, info)
			}
		}
	}
	return nil
}

// explodingDirection finds separation whose estimates stay moderate and
// that the checks above miss: several parameters diverging together, or
// a product phi_m * g_k (constrained and stereotype effects) whose ridge is
// curved in g and phi. It works on the pieces of the linear predictor: the
// cutpoints, the unconstrained slopes (times their predictor's SD) and the
// effects phi_m * g_k of each constrained group (times the SD; their
// errors by the delta method); a piece is exploding when its standard
// error exceeds 100 units of the linear predictor. Two rays are tried:
//  1. the exploding pieces scaled together by 1 + t, the others held (in a
//     group the whole equation m: g by c_1 and phi_m by c_m / c_1, which
//     stays in the product's terms);
//  2. in a model with a constrained group, the ridge of its widest effect:
//     that effect's covariance column taken to the pieces (the delta
//     method), followed straight in the pieces and brought back to the
//     product's terms (g from equation 1, phi_m by least squares), stepped
//     by 5 and 20 units of the linear predictor (the piece moving most),
//     each way.
//
// A ray is accepted only when the log-likelihood does not fall (beyond
// 1e-11 relative) at two distances along it, and only when a finite
// maximum would fall there by more than that: by the quadratic bound
// 0.5 * (step / error)^2 of a piece moved by step, at the farther distance
// at least 9 (ray 1) or 16 (ray 2) times the tolerance. It returns the
// direction (scaled coordinates, the tangent at the start) or nil.
func explodingDirection(loglik evalFunc, ly *layout, theta []float64, ll float64, info, cov, sd []float64) []float64 {
	P := len(theta)
	if len(ly.params) != P {
		return nil
	}
	const wide = 1e2
	tol := 1e-11 * math.Max(1, math.Abs(ll))
	q := ly.J - 1
	unit := make([]float64, P) // the linear predictor's change per unit of a cutpoint or unconstrained slope
	for i, pa := range ly.params {
		switch pa.kind {
		case pCut:
			unit[i] = 1
		case pParallel, pFree:
			unit[i] = sd[pa.k]
		}
	}
	phis := make([][]float64, len(ly.groups))
	for d := range ly.groups {
		phis[d] = ly.phi(theta, d)
	}
	// effectGrad is the gradient of phi_m * g_k in theta.
	effectGrad := func(d, m, k int) []float64 {
		g := make([]float64, P)
		g[ly.slope[k]] = phis[d][m]
		if pi := ly.phiIndex[d][m]; pi >= 0 {
			g[pi] = theta[ly.slope[k]]
		}
		return g
	}
	falls := func(x []float64) (bool, bool) {
		a := loglik(x, 0)
		return a.bad, !a.bad && a.ll < ll-tol
	}

	// Ray 1: the exploding pieces scaled.
	free := make([]bool, P)
	eq := make([][]bool, len(ly.groups))
	found, z := false, 0.0
	for i := range ly.params {
		if v := cov[i*P+i]; unit[i] > 0 && v > 0 && math.Sqrt(v)*unit[i] > wide {
			free[i], found = true, true
			z = math.Max(z, math.Abs(theta[i])/math.Sqrt(v))
		}
	}
	for d, ks := range ly.groups {
		eq[d] = make([]bool, q)
		for m := 0; m < q; m++ {
			for _, k := range ks {
				g := effectGrad(d, m, k)
				if v := quad(cov, g, P); v > 0 && math.Sqrt(v)*sd[k] > wide {
					eq[d][m], found = true, true
				}
			}
			for _, k := range ks {
				if eq[d][m] {
					if v := quad(cov, effectGrad(d, m, k), P); v > 0 {
						z = math.Max(z, math.Abs(phis[d][m]*theta[ly.slope[k]])/math.Sqrt(v))
					}
				}
			}
		}
	}
	if found && 0.5*z*z >= tol {
		scaled := func(t float64) []float64 {
			x := slices.Clone(theta)
			for i := range x {
				if free[i] {
					x[i] *= 1 + t
				}
			}
			for d, ks := range ly.groups {
				c := func(m int) float64 {
					if eq[d][m] {
						return 1 + t
					}
					return 1
				}
				for _, k := range ks {
					x[ly.slope[k]] *= c(0)
				}
				for m := 1; m < q; m++ {
					x[ly.phiIndex[d][m]] *= c(m) / c(0)
				}
			}
			return x
		}
		evaluated := 0
		for _, t := range []float64{1, 3, 0.25, 0.05} {
			bad, fell := falls(scaled(t))
			if fell {
				evaluated = -1
				break
			}
			if !bad {
				if evaluated++; evaluated == 2 {
					break
				}
			}
		}
		if evaluated == 2 {
			v := make([]float64, P)
			for i := range v {
				if free[i] {
					v[i] = theta[i]
				}
			}
			for d, ks := range ly.groups {
				on := func(m int) float64 {
					if eq[d][m] {
						return 1
					}
					return 0
				}
				for _, k := range ks {
					v[ly.slope[k]] = on(0) * theta[ly.slope[k]]
				}
				for m := 1; m < q; m++ {
					v[ly.phiIndex[d][m]] = (on(m) - on(0)) * theta[ly.phiIndex[d][m]]
				}
			}
			return scaledDirection(v, info)
		}
	}

	// Ray 2: the ridge of a group's widest effect.
	wd, wm, wk, widest := -1, 0, 0, wide
	for d, ks := range ly.groups {
		for m := 0; m < q; m++ {
			for _, k := range ks {
				if v := quad(cov, effectGrad(d, m, k), P); v > 0 && math.Sqrt(v)*sd[k] > widest {
					wd, wm, wk, widest = d, m, k, math.Sqrt(v)*sd[k]
				}
			}
		}
	}
	if wd < 0 || 0.5*20*20/(widest*widest) < 16*tol {
		return nil
	}
	grad := effectGrad(wd, wm, wk)
	c := make([]float64, P) // the covariance column of the effect, in theta
	for i := range c {
		for j := range grad {
			c[i] += cov[i*P+j] * grad[j]
		}
	}
	// The same in the pieces: dB[d][k*q+m] for the groups, c itself for the rest.
	most := 0.0
	for i := range c {
		most = math.Max(most, math.Abs(c[i])*unit[i])
	}
	dB := make([][]float64, len(ly.groups))
	for d, ks := range ly.groups {
		dB[d] = make([]float64, len(ks)*q)
		for a, k := range ks {
			gi := ly.slope[k]
			for m := 0; m < q; m++ {
				v := phis[d][m] * c[gi]
				if pi := ly.phiIndex[d][m]; pi >= 0 {
					v += theta[gi] * c[pi]
				}
				dB[d][a*q+m] = v
				most = math.Max(most, math.Abs(v)*sd[k])
			}
		}
	}
	if !(most > 0) || math.IsInf(most, 0) {
		return nil
	}
	along := func(s float64) []float64 {
		x := slices.Clone(theta)
		for i := range x {
			if unit[i] > 0 {
				x[i] += s * c[i]
			}
		}
		for d, ks := range ly.groups {
			// g from equation 1, phi_m by least squares on the moved effects.
			gg := 0.0
			for a, k := range ks {
				gi := ly.slope[k]
				x[gi] = theta[gi] + s*dB[d][a*q]
				gg += x[gi] * x[gi]
			}
			if !(gg > 0) {
				return nil
			}
			for m := 1; m < q; m++ {
				num := 0.0
				for a, k := range ks {
					gi := ly.slope[k]
					num += (phis[d][m]*theta[gi] + s*dB[d][a*q+m]) * x[gi]
				}
				x[ly.phiIndex[d][m]] = num / gg
			}
		}
		return x
	}
	for _, sign := range []float64{1, -1} {
		held := 0
		for _, units := range []float64{5, 20} {
			x := along(sign * units / most)
			if x == nil {
				break
			}
			if bad, fell := falls(x); bad || fell {
				break
			}
			held++
		}
		if held == 2 {
			return scaledDirection(c, info)
		}
	}
	return nil
}

// quad returns g' A g for a P x P matrix A.
func quad(A, g []float64, P int) float64 {
	s := 0.0
	for i := range g {
		if g[i] == 0 {
			continue
		}
		for j := range g {
			s += g[i] * A[i*P+j] * g[j]
		}
	}
	return s
}

// scaledCondition returns the condition number of the matrix scaled to unit
// diagonal, the eigenvector of its smallest eigenvalue (in the scaled
// coordinates) and whether it is positive definite.
func scaledCondition(A []float64, P int) (float64, []float64, bool) {
	if P == 0 {
		return 1, nil, true
	}
	s := make([]float64, P)
	for i := 0; i < P; i++ {
		v := A[i*P+i]
		if !(v > 0) {
			s[i] = 1
		} else {
			s[i] = 1 / math.Sqrt(v)
		}
	}
	sym := scaledSym(A, P, s)
	var es mat.EigenSym
	if !es.Factorize(sym, true) {
		return math.Inf(1), nil, false
	}
	vals := es.Values(nil)
	var vecs mat.Dense
	es.VectorsTo(&vecs)
	minI, maxV := 0, 0.0
	for i, v := range vals {
		if v < vals[minI] {
			minI = i
		}
		maxV = math.Max(maxV, math.Abs(v))
	}
	vec := make([]float64, P)
	for i := range vec {
		vec[i] = vecs.At(i, minI)
	}
	if vals[minI] <= 0 {
		return math.Inf(1), vec, false
	}
	return maxV / vals[minI], vec, true
}

// scaledSym is the symmetric matrix D A D, D = diag(s), from the upper
// triangle of A (P x P, row-major).
func scaledSym(A []float64, P int, s []float64) *mat.SymDense {
	sym := mat.NewSymDense(P, nil)
	for i := 0; i < P; i++ {
		for j := i; j < P; j++ {
			sym.SetSym(i, j, A[i*P+j]*s[i]*s[j])
		}
	}
	return sym
}

// invertSym inverts a positive definite matrix on the unit-diagonal scale,
// so that parameters in very different units lose no accuracy.
func invertSym(A []float64, P int) ([]float64, error) {
	s := make([]float64, P)
	for i := 0; i < P; i++ {
		v := A[i*P+i]
		if !(v > 0) || math.IsInf(v, 0) {
			return nil, errSingular
		}
		s[i] = 1 / math.Sqrt(v)
	}
	sym := scaledSym(A, P, s)
	var ch mat.Cholesky
	if !ch.Factorize(sym) {
		return nil, errSingular
	}
	var inv mat.SymDense
	if err := ch.InverseTo(&inv); err != nil {
		return nil, err
	}
	out := make([]float64, P*P)
	for i := 0; i < P; i++ {
		for j := 0; j < P; j++ {
			out[i*P+j] = inv.At(i, j) * s[i] * s[j]
		}
	}
	return out, nil
}

// describeSeparation names the parameters of a fit with no finite maximum
// and, when the rows are at hand, finds categories that occur at one value
// only of a predictor. With the programme's direction of recession rec the
// separation is proved, and the parameters are named by nameRecession:
// those that diverge and those the log-likelihood does not depend on;
// without it, those with weight in the null space of the information info
// at the end of the iterations (nameNullSpace), or, when it has none, those
// along the direction vec (scaled coordinates) in which the signs were
// seen.
func (src *source) describeSeparation(m Model, ly *layout, theta, info, vec []float64, rec *recession) *Separation {
	s := &Separation{Proved: rec != nil}
	switch {
	case rec != nil:
		src.nameRecession(s, m, ly, theta, rec)
	case s.nameNullSpace(ly, info, src.columnReach(), src.predictors, src.categories):
	case vec != nil:
		s.nameDirection(ly, vec, src.predictors, src.categories)
	default:
		return s
	}
	if src.rows != nil {
		s.addEvidence(src.rows)
	}
	return s
}

// nameRecession names the parameters of a proved separation, in
// variables in which the linear predictors are linear: the cutpoints and
// slopes, the effects phi_m g at each boundary of a constrained
// predictor alone in its group (namingVariables; its g and phi are not
// told apart by the data when some boundary's effect diverges, since
// only their products enter), and for a group of several the tangent of
// g and phi at theta. The programme's inequalities M d >= 0 are written
// in those variables (columns scaled to largest absolute value 1, each
// the largest change of a linear predictor per unit of its variable).
//
// The changes with M d = 0 leave the log-likelihood constant: a variable
// carrying a quarter or more of some unit vector of that null space
// (found from the singular values; one below 1e-9 of the largest counts
// as zero) is not determined by the data (NotDetermined). Every other
// variable that some direction of recession moves diverges
// (Parameters): the inequalities some direction raises strictly are
// found by the programme again and again, each time asked to raise one
// not yet raised (positiveRows); the directions of recession then fill
// the subspace where the others hold as equalities, and a variable
// carrying a quarter or more of some unit vector of it moves along
// some. The two lists never share a name. The predictors and category
// boundaries are those of the diverging variables.
func (src *source) nameRecession(s *Separation, m Model, ly *layout, theta []float64, rec *recession) {
	nv := namingVariables(ly, theta, src.predictors)
	vars := make([]lpVariable, len(nv))
	for i, v := range nv {
		vars[i] = v.lpVariable
	}
	M := recessionRows(src.rows, rec.rows, m, ly, vars)
	pos, ok := positiveRows(M)
	if !ok {
		// The programme did not settle: the direction found, as the
		// signs name one.
		T := recessionRows(src.rows, rec.rows, m, ly, tangentVariables(ly, theta))
		u := make([]float64, len(theta))
		for i := range u {
			u[i] = rec.step[i] * T.scale[i]
		}
		s.nameDirection(ly, u, src.predictors, src.categories)
		return
	}
	all := nullShares(M, nil)
	moved := nullShares(M, pos)
	preds := map[int]bool{}
	bounds := map[int]bool{}
	for i, v := range nv {
		switch {
		case all[i] >= 1.0/16:
			s.NotDetermined = append(s.NotDetermined, v.name)
		case moved[i] >= 1.0/16:
			s.Parameters = append(s.Parameters, v.name)
			if v.k >= 0 {
				preds[v.k] = true
			}
			if v.m >= 0 {
				bounds[v.m] = true
			}
		}
	}
	for _, k := range sortedKeys(preds) {
		s.Predictors = append(s.Predictors, src.predictors[k])
	}
	for _, b := range sortedKeys(bounds) {
		s.Boundaries = append(s.Boundaries, BoundaryLabel(src.categories, b))
	}
}

// positiveRows finds the rows of M that some direction d with M d >= 0
// makes positive: the programme is asked for a direction raising some
// row not yet found, until it finds none (each answer adds at least
// one). ok is false when it did not settle.
func positiveRows(M *lpRows) (pos []bool, ok bool) {
	pos = make([]bool, M.R)
	on := make([]bool, M.R)
	for range M.R + 1 {
		for i := range on {
			on[i] = !pos[i]
		}
		d, settled := recessionSolveOn(M, on)
		switch {
		case !settled:
			return nil, false
		case d == nil:
			return pos, true
		}
		grew := false
		for i := 0; i < M.R; i++ {
			v := 0.0
			for j, a := range M.row(i) {
				v += a * d[j] * M.scale[j]
			}
			if v > 1e-7 && !pos[i] {
				pos[i], grew = true, true
			}
		}
		if !grew {
			return nil, false
		}
	}
	return nil, false
}

// nullShares returns, for each column of M, the diagonal of the
// projection on the null space of M's rows i without skip[i] (all rows
// when skip is nil): the square of the largest component of that column
// in a unit vector of it. A singular value below 1e-9 of the largest
// counts as zero; with no rows, every column's share is 1.
func nullShares(M *lpRows, skip []bool) []float64 {
	var a []float64
	R := 0
	for i := 0; i < M.R; i++ {
		if skip == nil || !skip[i] {
			a = append(a, M.row(i)...)
			R++
		}
	}
	share := make([]float64, M.V)
	if R == 0 {
		for i := range share {
			share[i] = 1
		}
		return share
	}
	var svd mat.SVD
	if !svd.Factorize(mat.NewDense(R, M.V, a), mat.SVDFullV) {
		return share
	}
	sv := svd.Values(nil)
	var V mat.Dense
	svd.VTo(&V)
	for j := 0; j < M.V; j++ {
		if j < len(sv) && sv[j] > 1e-9*sv[0] {
			continue
		}
		for i := 0; i < M.V; i++ {
			share[i] += V.At(i, j) * V.At(i, j)
		}
	}
	return share
}

// namedVariable is a variable in which a separation's parameters are
// named: its change of the cutpoints and slopes, its name, and the
// predictor (k) and boundary (m, 0-based) it belongs to (-1: none).
type namedVariable struct {
	lpVariable
	name string
	k, m int
}

// namingVariables are the variables of nameRecession: each parameter as
// tangentVariables has it, except that a constrained predictor alone in
// its group gives its effect at each boundary m, phi_m g (named g's
// name at the first boundary, where phi_1 = 1, and "phi[m]*name" at the
// others), as the programme moves it (lpVariables).
func namingVariables(ly *layout, theta []float64, predictors []string) []namedVariable {
	q, K := ly.J-1, ly.K
	tv := tangentVariables(ly, theta)
	var out []namedVariable
	for i, pa := range ly.params {
		v := namedVariable{lpVariable: tv[i], name: pa.name, k: -1, m: -1}
		alone := (pa.kind == pGamma || pa.kind == pPhi) && len(ly.groups[pa.group]) == 1
		switch {
		case alone && pa.kind == pPhi:
			continue // given with its predictor's g
		case alone:
			for j := 0; j < q; j++ {
				w := make([]float64, q*K)
				w[j*K+pa.k] = 1
				name := predictors[pa.k]
				if j > 0 {
					name = ly.params[ly.phiIndex[pa.group][j]].name + "*" + name
				}
				out = append(out, namedVariable{lpVariable: lpVariable{cut: -1, w: w}, name: name, k: pa.k, m: j})
			}
			continue
		case pa.kind == pCut || pa.kind == pPhi:
			v.m = pa.m
		case pa.kind == pFree:
			v.k, v.m = pa.k, pa.m
		default:
			v.k = pa.k
		}
		out = append(out, v)
	}
	return out
}

// tangentVariables are the parameters as variables of the programme: the
// change of the cutpoints and slopes per unit of each parameter at theta
// (for phi_m g_k, phi_m per unit of g_k and g_k per unit of phi_m).
func tangentVariables(ly *layout, theta []float64) []lpVariable {
	q, K := ly.J-1, ly.K
	vars := make([]lpVariable, len(ly.params))
	for i, pa := range ly.params {
		if pa.kind == pCut {
			vars[i] = lpVariable{cut: pa.m}
			continue
		}
		w := make([]float64, q*K)
		switch pa.kind {
		case pParallel:
			for j := 0; j < q; j++ {
				w[j*K+pa.k] = 1
			}
		case pFree:
			w[pa.m*K+pa.k] = 1
		case pGamma:
			phi := ly.phi(theta, pa.group)
			for j := 0; j < q; j++ {
				w[j*K+pa.k] = phi[j]
			}
		case pPhi:
			for _, k := range ly.groups[pa.group] {
				w[pa.m*K+k] = theta[ly.slope[k]]
			}
		}
		vars[i] = lpVariable{cut: -1, w: w}
	}
	return vars
}

// nameDirection lists the parameters that carry a quarter or more of the
// direction vec, and the predictors and category boundaries they belong to.
func (s *Separation) nameDirection(ly *layout, vec []float64, predictors, categories []string) {
	maxv := 0.0
	for _, v := range vec {
		maxv = math.Max(maxv, math.Abs(v))
	}
	named := make([]bool, len(vec))
	for i, v := range vec {
		named[i] = math.Abs(v) >= 0.25*maxv
	}
	s.nameParameters(ly, named, predictors, categories)
}

// nullCurvature is the curvature, relative to the largest, at or below
// which nameNullSpace counts a direction of the information as having
// none (the floor of newtonStep's eigenvalue repair).
const nullCurvature = 1e-8

// columnReach is, for each predictor, the largest change of a linear
// predictor per unit of its slope: the largest absolute value of the
// predictor over the rows, as the programme scales its columns
// (recessionRows); without the rows at hand (a fit summed over parts),
// its standard deviation. Nil when neither is known; 1 for a predictor
// that is zero throughout.
func (src *source) columnReach() []float64 {
	d := src.rows
	if d == nil {
		return src.sd
	}
	K := len(d.Predictors)
	out := make([]float64, K)
	for i := 0; i < d.N(); i++ {
		for k := range out {
			out[k] = math.Max(out[k], math.Abs(d.at(i, k)))
		}
	}
	for k, v := range out {
		if !(v > 0) {
			out[k] = 1
		}
	}
	return out
}

// nameNullSpace names the parameters of a separation not proved from the
// information info (P x P) where the iterations ended: every parameter
// carrying a quarter or more of some unit vector of its null space, the
// directions whose curvature is at most nullCurvature of the largest (the
// share of the parameter, the diagonal of the projection on that space,
// at least 1/16, as nameRecession counts). The curvature is measured per
// unit change of the linear predictors (a slope times reach, its
// predictor's columnReach; a cutpoint or phi as it is), not on the
// unit-diagonal scale, on which a lone diverging parameter, whose
// curvature vanishes with its score, would look as well informed as any.
// Among many directions of zero curvature (slopes no row reads, the
// diverging ones, combinations of them) the null space as a whole is
// named, whichever weakest direction an eigensolver returns, and a
// direction spread over many parameters (a reference level's, moving
// every other level's slope with the cutpoint) names none of them. A
// parameter whose information is exactly zero, read by no row, is not
// determined (NotDetermined); the others are named as Parameters. It
// returns false, naming nothing, when the information has no such
// direction or none but parameters read by no row.
func (s *Separation) nameNullSpace(ly *layout, info, reach []float64, predictors, categories []string) bool {
	P := len(ly.params)
	if P == 0 || len(info) != P*P {
		return false
	}
	sc := make([]float64, P)
	for i, pa := range ly.params {
		sc[i] = 1
		switch pa.kind {
		case pParallel, pFree, pGamma:
			if pa.k < len(reach) && reach[pa.k] > 0 {
				sc[i] = 1 / reach[pa.k]
			}
		}
	}
	var es mat.EigenSym
	if !es.Factorize(scaledSym(info, P, sc), true) {
		return false
	}
	vals := es.Values(nil)
	maxv := 0.0
	for _, v := range vals {
		maxv = math.Max(maxv, math.Abs(v))
	}
	if !(maxv > 0) {
		return false
	}
	var vecs mat.Dense
	es.VectorsTo(&vecs)
	share := make([]float64, P)
	for j, v := range vals {
		if math.Abs(v) > nullCurvature*maxv {
			continue
		}
		for i := range share {
			share[i] += vecs.At(i, j) * vecs.At(i, j)
		}
	}
	s.byCurvature = true
	named := make([]bool, P)
	found := false
	for i, v := range share {
		switch {
		case v < 1.0/16:
		case info[i*P+i] == 0:
			s.NotDetermined = append(s.NotDetermined, ly.params[i].name)
		default:
			named[i], found = true, true
		}
	}
	if !found {
		s.NotDetermined, s.byCurvature = nil, false
		return false
	}
	s.nameParameters(ly, named, predictors, categories)
	return true
}

// nameParameters lists the parameters named (by index), and the
// predictors and category boundaries they belong to.
func (s *Separation) nameParameters(ly *layout, named []bool, predictors, categories []string) {
	preds := map[int]bool{}
	bounds := map[int]bool{}
	for i, ok := range named {
		if !ok {
			continue
		}
		p := ly.params[i]
		s.Parameters = append(s.Parameters, p.name)
		switch p.kind {
		case pCut, pFree, pPhi:
			bounds[p.m] = true
		}
		if p.kind == pParallel || p.kind == pFree || p.kind == pGamma {
			preds[p.k] = true
		}
	}
	for _, k := range sortedKeys(preds) {
		s.Predictors = append(s.Predictors, predictors[k])
	}
	for _, b := range sortedKeys(bounds) {
		s.Boundaries = append(s.Boundaries, BoundaryLabel(categories, b))
	}
}

// addEvidence adds the data facts behind a separation: a category observed
// at a single value of a predictor that takes several (at most 10) values.
// When the direction names predictors, only theirs: a fact about another
// predictor (one whose effect is parallel, say) is no part of this
// model's separation, and naming it would mislead.
func (s *Separation) addEvidence(d *Data) {
	if d.uncentred != nil {
		d = d.uncentred // the values as in the data, not less a shift
	}
	lv := d.categories()
	K := len(d.Predictors)
	named := map[string]bool{}
	for _, p := range s.Predictors {
		named[p] = true
	}
	for k := 0; k < K; k++ {
		if len(named) > 0 && !named[d.Predictors[k]] {
			continue
		}
		all := map[float64]bool{}
		per := make([]map[float64]bool, d.J)
		for c := range per {
			per[c] = map[float64]bool{}
		}
		for i, y := range d.Y {
			v := d.at(i, k)
			all[v] = true
			if len(per[y]) <= 1 {
				per[y][v] = true
			}
		}
		if len(all) < 2 || len(all) > 10 {
			continue
		}
		// A value at which every row is in one or two categories (a
		// sparse level or cell); when a binary predictor's value holds one
		// category, the facts below only say the same again.
		few, single := fewCategories(d, k, all)
		for _, f := range few {
			s.Evidence = append(s.Evidence, f)
			s.Predictors = appendUnique(s.Predictors, d.Predictors[k])
		}
		if single && len(all) == 2 {
			continue
		}
		for c := 0; c < d.J; c++ {
			if len(per[c]) == 1 {
				for v := range per[c] {
					s.Evidence = append(s.Evidence, fmt.Sprintf("category %q occurs only at %s = %g", lv[c], d.Predictors[k], v))
				}
				s.Predictors = appendUnique(s.Predictors, d.Predictors[k])
			}
		}
	}
}

// fewCategories says, for each value of predictor k (values: the set of
// them) at which the rows of positive weight fall in one or two
// categories while the data have more, which those are; single: some
// value holds one category only.
func fewCategories(d *Data, k int, values map[float64]bool) (out []string, single bool) {
	lv := d.categories()
	seen := map[float64][]bool{}
	inData := make([]bool, d.J)
	for i, y := range d.Y {
		if d.weight(i) <= 0 {
			continue
		}
		v := d.at(i, k)
		if seen[v] == nil {
			seen[v] = make([]bool, d.J)
		}
		seen[v][y], inData[y] = true, true
	}
	total := 0
	for _, b := range inData {
		if b {
			total++
		}
	}
	vs := make([]float64, 0, len(values))
	for v := range values {
		vs = append(vs, v)
	}
	slices.Sort(vs)
	for _, v := range vs {
		var cats []string
		for c, b := range seen[v] {
			if b {
				cats = append(cats, fmt.Sprintf("%q", lv[c]))
			}
		}
		switch {
		case len(cats) == 0 || len(cats) >= total || len(cats) > 2:
		case len(cats) == 1:
			out, single = append(out, fmt.Sprintf("every row with %s = %g is in category %s", d.Predictors[k], v, cats[0])), true
		default:
			out = append(out, fmt.Sprintf("every row with %s = %g is in category %s or %s", d.Predictors[k], v, cats[0], cats[1]))
		}
	}
	return out, single
}

// sortedKeys returns the keys of a set of indices in increasing order.
func sortedKeys(set map[int]bool) []int {
	keys := make([]int, 0, len(set))
	for k := range set {
		keys = append(keys, k)
	}
	sort.Ints(keys)
	return keys
}

func appendUnique(xs []string, x string) []string {
	for _, v := range xs {
		if v == x {
			return xs
		}
	}
	return append(xs, x)
}

func separationMessage(r *Result, st newtonState) string {
	var b strings.Builder
	s := r.Separation
	switch {
	case s != nil && s.Proved:
		b.WriteString("no finite maximum likelihood estimate: the log-likelihood keeps rising as parameters diverge (separation)")
	case !(r.Condition <= conditionLimit):
		b.WriteString("no finite maximum likelihood estimate found: the information is singular where the iterations stopped, as when parameters diverge (separation); whether the log-likelihood keeps rising is not proved for this fit")
	default:
		b.WriteString("no finite maximum likelihood estimate found: the log-likelihood does not fall far along a direction in which parameters grow, as under separation; that it keeps rising is not proved for this fit")
	}
	if s != nil && len(s.Predictors) > 0 {
		fmt.Fprintf(&b, "; predictors involved: %s", cappedList(s.Predictors, ", ", ""))
	}
	if s != nil && len(s.Boundaries) > 0 {
		fmt.Fprintf(&b, "; category boundaries: %s", cappedList(s.Boundaries, ", ", ""))
	}
	if s != nil && len(s.Evidence) > 0 {
		fmt.Fprintf(&b, "; %s", cappedList(s.Evidence, "; ", " such facts"))
	}
	if s != nil && len(s.Parameters) > 0 {
		what := "along that direction"
		switch {
		case s.Proved:
			what = "diverging"
		case s.byCurvature:
			what = "with no curvature where the iterations stopped"
		}
		fmt.Fprintf(&b, " (%s: %s", what, cappedList(s.Parameters, ", ", ""))
		if len(s.NotDetermined) > 0 {
			fmt.Fprintf(&b, "; %s: %s", notDeterminedWords, cappedList(s.NotDetermined, ", ", ""))
		}
		b.WriteString(")")
	}
	reached := "approaches"
	if s == nil || !s.Proved {
		reached = "reached"
	}
	fmt.Fprintf(&b, " [log-likelihood %s %.6f; information condition %.2g]", reached, st.ll, r.Condition)
	return b.String()
}

// messageListMost is how many names of one list a separation's message
// gives; the rest are counted ("and 12 more"). The Separation keeps them
// all.
const messageListMost = 10

// cappedList joins the first messageListMost of xs with sep, and says how
// many more there are (what: the words after the count).
func cappedList(xs []string, sep, what string) string {
	if len(xs) <= messageListMost {
		return strings.Join(xs, sep)
	}
	return strings.Join(xs[:messageListMost], sep) + fmt.Sprintf("%sand %d more%s", sep, len(xs)-messageListMost, what)
}

// notDeterminedWords introduces the parameters of Separation.NotDetermined
// in a message.
const notDeterminedWords = "not determined, the log-likelihood being constant along them"
