package fit

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// conditionLimit: an information matrix whose unit-diagonal condition number
// exceeds this is treated as singular (no finite maximum or not identified).
const conditionLimit = 1e10

func finish(d *Data, m Model, ly *layout, pr *problem, st newtonState, opt Options) *Result {
	P := len(ly.params)
	r := &Result{
		Model: m, Name: m.Name(), Predictors: d.Predictors, Levels: d.levels(), J: d.J,
		Converged: st.converged, Iterations: st.iters, Reason: st.reason,
		NObs: d.nobs(), NRows: d.N(), NParams: P,
		ParamNames: ly.names(), Estimates: st.theta, Decrement: st.decrement,
		LogLik: st.ll, SupLogLik: st.ll,
	}
	ly.fillEstimates(r, m, st)
	r.MinFittedProb, r.NegativeRows = pr.fittedCheck(st.theta)

	if math.IsInf(st.ll, -1) {
		r.Status = StatusNotConverged
		r.Message = "no valid starting point: " + st.reason
		r.LogLik = math.NaN()
		return r
	}
	// Information and its conditioning.
	info := make([]float64, P*P)
	for i := range info {
		info[i] = -st.hess[i]
	}
	cond, minVec, pd := scaledCondition(info, P)
	r.Condition = cond
	singular := !pd || cond > conditionLimit || (cond > 1e5 && pr.rayRises(st.theta, st.ll, minVec, info))
	if !singular && pr.suspectDivergence(st.theta, d) {
		// Large coefficients: look for a direction along which the
		// likelihood keeps rising (separation that leaves the scaled
		// information well conditioned): the weakest direction, each
		// parameter's axis, and the estimates themselves.
		if v := pr.risingDirection(st.theta, st.ll, minVec, info); v != nil {
			singular, minVec = true, v
		}
	}
	switch {
	case singular:
		r.Status = StatusNoFiniteMaximum
		r.Separation = describeSeparation(d, m, ly, minVec, st.theta)
		r.Message = separationMessage(r, st)
		r.LogLik = math.NaN()
		return r
	case !st.converged:
		r.Status = StatusNotConverged
		r.Message = fmt.Sprintf("Newton-Raphson stopped after %d iterations: %s (max |score| %.3g)", st.iters, st.reason, r.MaxAbsScore)
		r.LogLik = math.NaN()
		return r
	}
	r.Status = StatusOK
	if r.NegativeRows > 0 {
		r.Status = StatusNegativeProbs
		r.Message = fmt.Sprintf("%d of %d rows have a negative predicted category probability (crossing cumulative probabilities)", r.NegativeRows, r.NRows)
	}
	r.AIC = -2*r.LogLik + 2*float64(P)
	r.BIC = -2*r.LogLik + math.Log(r.NObs)*float64(P)
	r.CovType = CovOIM
	cinfo := info
	if opt.Covariance == CovEIM {
		r.CovType = CovEIM
		a := pr.evaluate(st.theta, 2, true)
		H := pr.hessian(st.theta, a, false)
		for i := range cinfo {
			cinfo[i] = -H[i]
		}
	}
	cov, err := invertSym(cinfo, P)
	if err != nil {
		r.Status = StatusNoFiniteMaximum
		r.Message = "the information matrix cannot be inverted at the maximum: parameters are not identified"
		r.LogLik = math.NaN()
		return r
	}
	r.Cov = cov
	r.StdErrors = make([]float64, P)
	for i := 0; i < P; i++ {
		r.StdErrors[i] = math.Sqrt(cov[i*P+i])
	}
	return r
}

// fillEstimates sets the score summary, cutpoints, effects matrix and
// common factors of a result from the Newton state.
func (ly *layout) fillEstimates(r *Result, m Model, st newtonState) {
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
func (p *problem) fittedCheck(theta []float64) (float64, int) {
	c := p.coefs(theta)
	d, q := p.d, p.q
	L := make([]float64, q)
	pr := make([]float64, q+1)
	minP := math.Inf(1)
	neg := 0
	for i := 0; i < d.n; i++ {
		if d.weight(i) == 0 {
			continue
		}
		p.linear(c, i, L)
		p.ker.probs(L, pr)
		bad := false
		for _, v := range pr {
			if v < 0 {
				bad = true
			}
		}
		if bad {
			neg += d.rowsBehind(i)
		}
		minP = math.Min(minP, pr[d.y[i]])
	}
	return minP, neg
}

// linear fills L with the J-1 linear predictors of row i.
func (p *problem) linear(c *coefs, i int, L []float64) {
	d := p.d
	off := 0.0
	if d.off != nil {
		off = d.off[i]
	}
	p.linearRow(c, d.x[i*d.K:(i+1)*d.K], off, L)
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
		if col < 0 {
			continue
		}
		for m := 0; m < q; m++ {
			L[m] -= xi[col] * c.bf[a*q+m]
		}
	}
}

// rayRises reports whether the log-likelihood fails to fall when moving far
// (100 units of 1/sqrt(information diagonal)) along the direction of least
// information, either way: the sign of a recession direction (separation)
// rather than a finite but poorly determined maximum.
func (p *problem) rayRises(theta []float64, ll float64, vec, info []float64) bool {
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
		a := p.evaluate(addScaled(theta, step, sign), 0, false)
		if !a.bad && a.ll >= ll-1e-9*math.Max(1, math.Abs(ll)) {
			return true
		}
	}
	return false
}

// suspectDivergence reports whether some coefficient is implausibly large:
// a slope moving the linear predictor by more than 10 per standard
// deviation of its predictor, or a cutpoint beyond 15 in absolute value.
func (p *problem) suspectDivergence(theta []float64, d *Data) bool {
	sd := predictorSD(d)
	for i, pa := range p.ly.params {
		v := math.Abs(theta[i])
		switch pa.kind {
		case pCut:
			if v > 15 {
				return true
			}
		case pParallel, pFree, pGamma:
			if v*sd[pa.k] > 10 {
				return true
			}
		}
	}
	return false
}

// risingDirection tries the weakest direction of the information, each
// parameter's axis and the direction of the estimates; it returns the first
// (in scaled coordinates) along which the log-likelihood does not fall.
func (p *problem) risingDirection(theta []float64, ll float64, minVec, info []float64) []float64 {
	P := len(theta)
	if minVec != nil && p.rayRises(theta, ll, minVec, info) {
		return minVec
	}
	for i := 0; i < P; i++ {
		e := make([]float64, P)
		e[i] = 1
		if p.rayRises(theta, ll, e, info) {
			return e
		}
	}
	// The estimates scaled up: complete separation.
	a := p.evaluate(addScaled(theta, theta, 1), 0, false)
	if !a.bad && a.ll >= ll-1e-9*math.Max(1, math.Abs(ll)) {
		v := make([]float64, P)
		for i := range v {
			v[i] = theta[i] * math.Sqrt(math.Max(info[i*P+i], 0))
		}
		return v
	}
	return nil
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
	sym := mat.NewSymDense(P, nil)
	for i := 0; i < P; i++ {
		for j := i; j < P; j++ {
			sym.SetSym(i, j, A[i*P+j]*s[i]*s[j])
		}
	}
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
	sym := mat.NewSymDense(P, nil)
	for i := 0; i < P; i++ {
		for j := i; j < P; j++ {
			sym.SetSym(i, j, A[i*P+j]*s[i]*s[j])
		}
	}
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

// describeSeparation names the parameters along the direction in which the
// information vanishes, and finds categories that occur at one value only
// of the predictors involved.
func describeSeparation(d *Data, m Model, ly *layout, vec []float64, theta []float64) *Separation {
	s := &Separation{}
	if vec == nil {
		return s
	}
	maxv := 0.0
	for _, v := range vec {
		maxv = math.Max(maxv, math.Abs(v))
	}
	lv := d.levels()
	preds := map[int]bool{}
	bounds := map[int]bool{}
	for i, v := range vec {
		if math.Abs(v) < 0.25*maxv {
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
	var ks []int
	for k := range preds {
		ks = append(ks, k)
	}
	sort.Ints(ks)
	for _, k := range ks {
		s.Predictors = append(s.Predictors, d.Predictors[k])
	}
	var bs []int
	for b := range bounds {
		bs = append(bs, b)
	}
	sort.Ints(bs)
	for _, b := range bs {
		s.Boundaries = append(s.Boundaries, lv[b]+"|"+lv[b+1])
	}
	// Data evidence: a category observed at a single value of a predictor
	// that takes several values.
	K := len(d.Predictors)
	for k := 0; k < K; k++ {
		all := map[float64]bool{}
		per := make([]map[float64]bool, d.J)
		for c := range per {
			per[c] = map[float64]bool{}
		}
		for i, y := range d.Y {
			v := d.X[i*K+k]
			all[v] = true
			if len(per[y]) <= 1 {
				per[y][v] = true
			}
		}
		if len(all) < 2 || len(all) > 10 {
			continue
		}
		for c := 0; c < d.J; c++ {
			if len(per[c]) == 1 {
				for v := range per[c] {
					s.Evidence = append(s.Evidence, fmt.Sprintf("category %q occurs only at %s = %g", lv[c], d.Predictors[k], v))
				}
				if !preds[k] {
					s.Predictors = appendUnique(s.Predictors, d.Predictors[k])
				}
			}
		}
	}
	return s
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
	b.WriteString("no finite maximum likelihood estimate: the log-likelihood keeps rising as parameters diverge (separation)")
	s := r.Separation
	if s != nil && len(s.Predictors) > 0 {
		fmt.Fprintf(&b, "; predictors involved: %s", strings.Join(s.Predictors, ", "))
	}
	if s != nil && len(s.Boundaries) > 0 {
		fmt.Fprintf(&b, "; category boundaries: %s", strings.Join(s.Boundaries, ", "))
	}
	if s != nil && len(s.Evidence) > 0 {
		fmt.Fprintf(&b, "; %s", strings.Join(s.Evidence, "; "))
	}
	if s != nil && len(s.Parameters) > 0 {
		fmt.Fprintf(&b, " (diverging: %s)", strings.Join(s.Parameters, ", "))
	}
	fmt.Fprintf(&b, " [log-likelihood approaches %.6f; information condition %.2g]", st.ll, r.Condition)
	return b.String()
}
