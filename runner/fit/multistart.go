package fit

import (
	"fmt"
	"hash/fnv"
	"math"
	"math/rand/v2"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// StatusNotIdentified: the log-likelihood has a finite maximum, but the
// common factor phi of a constraint group is not determined by it (the
// group's slopes vanish, or vanish in equation 1, which phi_1 = 1 divides
// by). LogLik is kept; the phi estimates are NaN.
const StatusNotIdentified Status = "not_identified"

// StartRecord is one start of the search for the maximum of a constrained
// model.
type StartRecord struct {
	Label       string  // "user", "parallel", "rank1", "random1 (drawn with phi[2] = 1)", ...
	LogLik      float64 // log-likelihood at the end (NaN: no valid point)
	MaxAbsScore float64 // largest absolute score there
	ReachedBest bool    // within 1e-6 of the best log-likelihood
	Status      Status  // StatusOK: converged; StatusNotIdentified: stationary but flat; else StatusNotConverged
	Iterations  int     // Newton iterations on the data (0 when the start shared another's fit)
	Reason      string  // why the Newton iterations stopped
	// Screened: the start was first carried to a maximum of the quadratic
	// approximation of the log-likelihood around the unconstrained partial
	// fit, and the data fit (if any) began there.
	Screened bool
	// SharedWith names the start whose data fit this start's approximate
	// maximum coincided with (within 1e-6 in log-likelihood units); that
	// fit's numbers are reported. Empty when the start had its own fit.
	SharedWith string
}

// PhiNormalization is the common factor of one constraint group rescaled so
// that phi_Ref = 1 (and gamma multiplied by the old phi_Ref), with
// delta-method standard errors.
type PhiNormalization struct {
	Group      string
	Ref        int // equation (1-based) whose phi is 1
	Phi, PhiSE []float64
	Predictors []string
	Gamma      []float64
	GammaSE    []float64
}

// defaultRandomStarts is the number of random starts when
// Options.RandomStarts is 0.
const defaultRandomStarts = 5

// screenMinRows: with more rows than this, starts other than the user's
// and the first deterministic one are screened on the quadratic
// approximation around the unconstrained partial fit before any data fit.
var screenMinRows = 5000

// sameLL is the log-likelihood tolerance of "reached the best".
const sameLL = 1e-6

// startPoint is a start before it is run.
type startPoint struct {
	label   string
	kind    string // "user", "rank1", "parallel" or "random"
	theta   []float64
	genuine bool // run on the data from theta itself
}

// runRecord is a start after it is run.
type runRecord struct {
	rec StartRecord
	st  *newtonState // nil when shared
	sur []float64    // its maximum of the approximation (screened mode)
}

// multiStart fits a model with constrained predictors from several starts
// and keeps the best log-likelihood.
func multiStart(d *Data, m Model, ly *layout, pr *problem, opt Options) (*Result, error) {
	aux, err := newAuxiliary(d, m, ly, opt)
	if err != nil {
		return nil, err
	}
	starts := aux.starts(d, m, ly, opt)
	screen := aux.screen
	// Genuine starts: without screening all of them; with screening the
	// user's and the first deterministic one. The first deterministic start
	// runs first, so that later starts (the user's included) can be
	// abandoned when they cannot reach the best.
	firstDet := -1
	for i := range starts {
		s := &starts[i]
		if firstDet < 0 && (s.kind == "rank1" || s.kind == "parallel") {
			firstDet = i
		}
		s.genuine = !screen || s.kind == "user" || i == firstDet
	}
	order := []int{firstDet}
	for i := range starts {
		if i != firstDet {
			order = append(order, i)
		}
	}
	byStart := make([]*runRecord, len(starts))
	var runs []*runRecord // in the order run
	for _, i := range order {
		s := starts[i]
		if !s.genuine {
			continue
		}
		th, anchor := s.theta, aux.base
		if s.kind == "user" {
			anchor = nil
		}
		best := math.Inf(-1)
		if i != firstDet {
			best = bestLL(runs)
		}
		if screen && i == firstDet {
			// Begin at the approximation's maximum nearest to the start.
			th = aux.sur.maximize(th)
		}
		st := pr.runStart(th, anchor, opt, best)
		byStart[i] = &runRecord{rec: recordOf(s.label, &st), st: &st}
		byStart[i].rec.Screened = screen && i == firstDet
		runs = append(runs, byStart[i])
	}
	if screen {
		for _, r := range runs {
			if !math.IsInf(r.st.ll, -1) {
				r.sur = aux.sur.maximize(r.st.theta)
			}
		}
		for _, i := range order {
			s := starts[i]
			if s.genuine {
				continue
			}
			sur := aux.sur.maximize(s.theta)
			if owner := aux.sur.match(sur, runs); owner != nil {
				rec := owner.rec
				rec.Label, rec.Iterations, rec.Screened, rec.SharedWith = s.label, 0, true, owner.rec.Label
				byStart[i] = &runRecord{rec: rec, sur: sur}
				continue
			}
			st := pr.runStart(sur, runs[bestRun(runs)].st.theta, opt, bestLL(runs))
			rec := recordOf(s.label, &st)
			rec.Screened = true
			byStart[i] = &runRecord{rec: rec, st: &st, sur: aux.sur.maximize(st.theta)}
			runs = append(runs, byStart[i])
		}
	}
	best := runs[bestRun(runs)].st
	res := finish(d, m, ly, pr, *best, opt)
	if refs := ridgeRefs(res, ly, best, aux.sd); refs != nil {
		if alt, st := aux.normalizedFit(d, m, ly, pr, res, best, refs, opt); alt != nil {
			res, best = alt, st
		}
	}
	// Agreement with the reported maximum (the best start's value when
	// there is none).
	top := res.LogLik
	if math.IsNaN(top) {
		top = best.ll
	}
	res.Starts = make([]StartRecord, len(byStart))
	for i, r := range byStart {
		res.Starts[i] = r.rec
		if !math.IsNaN(r.rec.LogLik) && math.Abs(r.rec.LogLik-top) <= sameLL {
			res.Starts[i].ReachedBest = true
			res.StartsAgreeing++
		}
	}
	if res.Status != StatusNotIdentified {
		markIdentification(res, d, ly, pr, best, aux.sd, opt)
	}
	return res, nil
}

// ridgeRefs detects groups whose equation-1 slopes vanish at the best point
// found: phi grows without bound along a ridge (gamma -> 0, phi_1 gamma ->
// 0, phi_r gamma finite), which the normalization phi_1 = 1 cannot
// represent. It returns, per group, the equation (0-based) to normalize by
// instead (0 for the other groups), or nil.
func ridgeRefs(res *Result, ly *layout, st *newtonState, sd []float64) []int {
	if math.IsInf(st.ll, -1) {
		return nil
	}
	var refs []int
	found := false
	for g, ks := range ly.groups {
		ph := ly.phi(st.theta, g)
		gs, pm, ref := 0.0, 0.0, 0
		for _, k := range ks {
			gs = math.Max(gs, math.Abs(st.theta[ly.slope[k]])*sd[k])
		}
		for j, v := range ph {
			if math.Abs(v) > pm {
				pm, ref = math.Abs(v), j
			}
		}
		irregular := !st.converged || !res.OK()
		if gs*pm >= phiZeroEffect && (pm > phiHuge || (pm > phiLarge && irregular)) {
			found = true
		} else {
			ref = 0
		}
		refs = append(refs, ref)
	}
	if !found {
		return nil
	}
	return refs
}

// normalizedFit maximizes the log-likelihood in the normalization given by
// refs, starting from the ridge point st. If the maximum has phi_1 clearly
// non-zero after all, it returns the ordinary fit from there; otherwise a
// StatusNotIdentified result whose phi (normalization phi_1 = 1) is NaN,
// gamma holds the equation-1 slopes, and PhiOther the common factor
// normalized by the equation with the largest slopes. It returns nil when
// the maximum is not a regular one in that normalization either. The state
// returned is the one the result describes.
func (a *auxiliary) normalizedFit(d *Data, m Model, ly *layout, pr *problem, res *Result, st *newtonState, refs []int, opt Options) (*Result, *newtonState) {
	rm := newRankMap(ly, a.pLy, m.Effects, refs)
	pp := newProblem(d.design(), a.partM, a.pLy, opt.Workers)
	ast := rm.newton(pp, rm.fromStandard(st.theta), opt.MaxIter)
	if !ast.converged || ast.ll < st.ll-sameLL {
		return nil, nil
	}
	representable := true
	for g, r := range refs {
		if r > 0 && math.Abs(rm.phi(ast.theta, g)[0]) < 1/phiLarge/phiLarge {
			representable = false
		}
	}
	if representable {
		nst := pr.newton(rm.toStandard(ast.theta), opt.MaxIter, opt.Scoring)
		if nst.converged && nst.ll >= ast.ll-sameLL {
			return finish(d, m, ly, pr, nst, opt), &nst
		}
	}
	P := len(ly.params)
	q := d.J - 1
	hth := rm.h(ast.theta)
	H := ast.hess
	if opt.Covariance == CovEIM {
		e := pp.evaluate(hth, 2, true)
		_, H = rm.chain(ast.theta, make([]float64, len(hth)), pp.hessian(hth, e, false))
	}
	info := make([]float64, P*P)
	for i := range info {
		info[i] = -H[i]
	}
	cond, _, pd := scaledCondition(info, P)
	if !pd || cond > conditionLimit {
		return nil, nil
	}
	cov, err := invertSym(info, P)
	if err != nil {
		return nil, nil
	}
	r := *res
	r.Status = StatusNotIdentified
	r.Separation = nil
	r.Converged = true
	r.Iterations = st.iters + ast.iters
	r.Reason = "converged"
	r.LogLik, r.SupLogLik = ast.ll, ast.ll
	r.AIC = -2*r.LogLik + 2*float64(P)
	r.BIC = -2*r.LogLik + math.Log(r.NObs)*float64(P)
	r.MaxAbsScore = 0
	for _, g := range ast.grad {
		r.MaxAbsScore = math.Max(r.MaxAbsScore, math.Abs(g))
	}
	r.Decrement = ast.decrement
	r.Condition = cond
	r.MinFittedProb, r.NegativeRows = pp.fittedCheck(hth)
	r.CovType = CovOIM
	if opt.Covariance == CovEIM {
		r.CovType = CovEIM
	}
	r.Cutpoints = make([]float64, q)
	for j := range r.Cutpoints {
		r.Cutpoints[j] = hth[a.pLy.cut[j]]
	}
	r.Effects = make([][]float64, q)
	for j := range r.Effects {
		r.Effects[j] = make([]float64, ly.K)
		for k, e := range m.Effects {
			ns := a.pLy.slope[k]
			if e == Parallel {
				r.Effects[j][k] = hth[ns]
			} else {
				r.Effects[j][k] = hth[ns+j]
			}
		}
	}
	// Parameters of the unrepresentable groups: phi NaN, gamma = the
	// equation-1 slopes, no standard errors.
	r.Estimates = append([]float64(nil), ast.theta...)
	drop := make([]bool, P)
	r.Phi = nil
	r.PhiOther = nil
	var why []string
	for g, ks := range ly.groups {
		if refs[g] == 0 {
			r.Phi = append(r.Phi, rm.phi(ast.theta, g))
			continue
		}
		ph := make([]float64, q)
		ph[0] = 1
		for j := 1; j < q; j++ {
			i := ly.phiIndex[g][j]
			r.Estimates[i], ph[j], drop[i] = math.NaN(), math.NaN(), true
		}
		r.Phi = append(r.Phi, ph)
		alt := PhiNormalization{Group: ly.gnames[g], Ref: refs[g] + 1, Phi: rm.phi(ast.theta, g), PhiSE: make([]float64, q)}
		for j := 0; j < q; j++ {
			if s := rm.slot(g, j); s >= 0 {
				alt.PhiSE[j] = math.Sqrt(cov[s*P+s])
			}
		}
		for _, k := range ks {
			s := ly.slope[k]
			r.Estimates[s] = hth[a.pLy.slope[k]]
			drop[s] = true
			alt.Predictors = append(alt.Predictors, d.Predictors[k])
			alt.Gamma = append(alt.Gamma, ast.theta[s])
			alt.GammaSE = append(alt.GammaSE, math.Sqrt(cov[s*P+s]))
		}
		r.PhiOther = append(r.PhiOther, alt)
		why = append(why, fmt.Sprintf("phi %s is not identified in the normalization phi_1 = 1: at the maximum its slopes in equation 1 vanish (phi_1 = %.2g when phi_%d = 1), so phi_m = b_m / b_1 is unbounded; PhiOther gives phi normalized by equation %d", groupLabel(ly, g), alt.Phi[0], refs[g]+1, refs[g]+1))
	}
	r.Cov = make([]float64, P*P)
	r.StdErrors = make([]float64, P)
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
	r.Message = strings.Join(why, "; ") + fmt.Sprintf("; the log-likelihood %.6f is the maximum; gamma is reported as the equation-1 slopes (zero) and phi as NaN", r.LogLik)
	if r.NegativeRows > 0 {
		r.Message += fmt.Sprintf("; %d of %d rows have a negative predicted category probability", r.NegativeRows, r.NRows)
	}
	return &r, &ast
}

// newton maximizes the log-likelihood in this map's normalization, with
// derivatives from the partial model's problem pp by the chain rule; the
// steps, repair and stopping rules are those of the data fit (newtonLoop).
func (r rankMap) newton(pp *problem, th0 []float64, maxIter int) newtonState {
	base := pp.evaluator(false)
	return newtonLoop(th0, maxIter, func(th []float64, order int) evalOut {
		out := base(r.h(th), order)
		if !out.bad && order >= 2 {
			out.g, out.H = r.chain(th, out.g, out.H)
		}
		return out
	})
}

// reasonFlat: Newton stopped at a stationary point where the information
// is singular (a flat direction, such as phi when gamma = 0).
const reasonFlat = "the log-likelihood is flat (singular information)"

// chunkIters: a start that has not converged after this many Newton
// iterations continues (in chunks, up to Options.MaxIter) only while the
// quadratic model of its Newton step says it could still reach the best
// log-likelihood found so far.
const chunkIters = 25

// runStart runs Newton-Raphson from theta; best is the best log-likelihood
// found so far (-Inf: run to the iteration limit). A start at which an
// observed category has probability zero is first moved towards anchor
// (when not nil).
func (p *problem) runStart(theta, anchor []float64, opt Options, best float64) newtonState {
	chunk := min(chunkIters, opt.MaxIter)
	st := p.newton(theta, chunk, opt.Scoring)
	if math.IsInf(st.ll, -1) && anchor != nil {
		theta = p.validToward(theta, anchor)
		st = p.newton(theta, chunk, opt.Scoring)
	}
	used := st.iters
	prev := math.NaN()
	// The Newton engine stops short of its iteration budget only when it
	// converged or could not raise the log-likelihood.
	for !st.converged && st.iters >= chunk && used < opt.MaxIter {
		if st.decrement <= 1e-10*math.Max(1, math.Abs(st.ll)) {
			st.reason = reasonFlat
			break
		}
		// Continue while the quadratic model, or the progress of the last
		// chunk, says the best could still be reached.
		if math.IsNaN(prev) {
			prev = p.evaluate(theta, 0, false).ll
		}
		gap := best - sameLL - st.ll
		if 2*st.decrement < gap && st.ll-prev < gap {
			st.reason = fmt.Sprintf("abandoned: it could not reach the best log-likelihood %.6f", best)
			break
		}
		prev = st.ll
		chunk = min(chunkIters, opt.MaxIter-used)
		st = p.newton(st.theta, chunk, opt.Scoring)
		used += st.iters
	}
	st.iters = used
	return st
}

// bestLL is the best log-likelihood of the runs so far.
func bestLL(runs []*runRecord) float64 {
	best := math.Inf(-1)
	for _, r := range runs {
		if r.st != nil && r.st.ll > best {
			best = r.st.ll
		}
	}
	return best
}

func recordOf(label string, st *newtonState) StartRecord {
	rec := StartRecord{Label: label, LogLik: st.ll, Iterations: st.iters, Status: StatusNotConverged, Reason: st.reason}
	if math.IsInf(st.ll, -1) {
		rec.LogLik = math.NaN()
		return rec
	}
	for _, g := range st.grad {
		rec.MaxAbsScore = math.Max(rec.MaxAbsScore, math.Abs(g))
	}
	switch {
	case st.converged:
		rec.Status = StatusOK
	case st.reason == reasonFlat:
		rec.Status = StatusNotIdentified
	}
	return rec
}

// bestRun returns the run with the highest log-likelihood, preferring, among
// runs within sameLL of it, a converged one, then the earliest.
func bestRun(runs []*runRecord) int {
	b := -1
	for i, r := range runs {
		if r.st == nil || math.IsInf(r.st.ll, -1) || math.IsNaN(r.st.ll) {
			continue
		}
		if b < 0 || r.st.ll > runs[b].st.ll {
			b = i
		}
	}
	if b < 0 {
		return 0
	}
	if !runs[b].st.converged {
		for i, r := range runs {
			if r.st != nil && r.st.converged && r.st.ll >= runs[b].st.ll-sameLL {
				return i
			}
		}
	}
	return b
}

// auxiliary holds the fits made once per call to build the starts.
type auxiliary struct {
	par     *Result // constrained predictors parallel (nil when screening)
	partial *Result // constrained predictors nonparallel (nil if no finite maximum)
	pLy     *layout // layout of the partial model (always set)
	sd      []float64
	sur     *surrogate
	base    []float64 // the parallel start: phi = 1, the rest from the parallel fit
	screen  bool      // screen starts on the approximation (large data)
	partM   Model     // the partial model
}

func auxModels(m Model) (par, partial Model) {
	par, partial = m, m
	par.Effects = make([]Effect, len(m.Effects))
	partial.Effects = make([]Effect, len(m.Effects))
	for k, e := range m.Effects {
		par.Effects[k], partial.Effects[k] = e, e
		if e == Constrained {
			par.Effects[k], partial.Effects[k] = Parallel, Nonparallel
		}
	}
	par.Groups, par.GroupNames, partial.Groups, partial.GroupNames = nil, nil, nil, nil
	return par, partial
}

func newAuxiliary(d *Data, m Model, ly *layout, opt Options) (*auxiliary, error) {
	parM, partM := auxModels(m)
	o := Options{MaxIter: opt.MaxIter, Workers: opt.Workers}
	a := &auxiliary{sd: predictorSD(d), partM: partM}
	pLy, err := newLayout(partM, d.J, d.Predictors)
	if err != nil {
		return nil, err
	}
	a.pLy = pLy
	// Without a finite partial maximum there is no rank-1 start and no
	// approximation; that is not an error.
	if partial, err := Fit(d, partM, o); err == nil && partial.OK() {
		a.partial = partial
		if info, err := invertSym(partial.Cov, len(partial.Estimates)); err == nil {
			a.sur = &surrogate{rankMap: newRankMap(ly, pLy, m.Effects, nil), hat: partial.Estimates, info: info}
		}
	}
	a.screen = a.sur != nil && d.N() > screenMinRows
	if a.screen {
		// The parallel fit is replaced by its counterpart on the
		// approximation (phi = 1, the rest by generalized least squares).
		a.base = a.sur.parallelStart()
		return a, nil
	}
	par, err := Fit(d, parM, o)
	if err != nil {
		return nil, err
	}
	a.par = par
	a.base = a.parallelStart(d, m, ly)
	return a, nil
}

// predictorSD returns the (weighted) standard deviation of each predictor.
func predictorSD(d *Data) []float64 {
	K := len(d.Predictors)
	mean, sd := make([]float64, K), make([]float64, K)
	tot := 0.0
	for i := range d.Y {
		w := 1.0
		if d.Weights != nil {
			w = d.Weights[i]
		}
		tot += w
		for k := 0; k < K; k++ {
			mean[k] += w * d.X[i*K+k]
		}
	}
	for k := range mean {
		mean[k] /= tot
	}
	for i := range d.Y {
		w := 1.0
		if d.Weights != nil {
			w = d.Weights[i]
		}
		for k := 0; k < K; k++ {
			v := d.X[i*K+k] - mean[k]
			sd[k] += w * v * v
		}
	}
	for k := range sd {
		sd[k] = math.Sqrt(sd[k] / tot)
		if sd[k] == 0 {
			sd[k] = 1
		}
	}
	return sd
}

// starts lists the starts in order: user, rank1, parallel, random.
func (a *auxiliary) starts(d *Data, m Model, ly *layout, opt Options) []startPoint {
	var out []startPoint
	if opt.Start != nil {
		out = append(out, startPoint{label: "user", kind: "user", theta: append([]float64(nil), opt.Start...)})
	}
	base := a.base
	if a.partial != nil {
		th, note := a.rank1Start(d, m, ly)
		out = append(out, startPoint{label: "rank1" + note, kind: "rank1", theta: th})
	}
	label := "parallel"
	if a.screen {
		label = "parallel (from the approximation)"
	}
	out = append(out, startPoint{label: label, kind: "parallel", theta: base})
	n := opt.RandomStarts
	if n == 0 {
		n = defaultRandomStarts
	}
	rng := rand.New(rand.NewPCG(seedOf(m, d), 0x6f7264706c616e))
	q := d.J - 1
	for i := 0; i < n; i++ {
		r := i % q
		th := a.randomStart(rng, r, base, ly)
		out = append(out, startPoint{label: fmt.Sprintf("random%d (drawn with phi[%d] = 1)", i+1, r+1), kind: "random", theta: th})
	}
	return out
}

// seedOf derives the random-start seed from the model and the predictor
// names, so that a given analysis always draws the same starts.
func seedOf(m Model, d *Data) uint64 {
	h := fnv.New64a()
	h.Write([]byte(m.Name()))
	h.Write([]byte(effectsString(m.Effects, d.Predictors)))
	for k := range m.Effects {
		fmt.Fprintf(h, "|%d", m.group(k))
	}
	return h.Sum64()
}

// parallelStart: phi = 1 and everything else from the parallel fit.
func (a *auxiliary) parallelStart(d *Data, m Model, ly *layout) []float64 {
	th := make([]float64, len(ly.params))
	r := a.par
	for j := 0; j < d.J-1; j++ {
		th[ly.cut[j]] = r.Cutpoints[j]
	}
	for k, e := range m.Effects {
		s := ly.slope[k]
		switch e {
		case Parallel, Constrained:
			th[s] = r.Effects[0][k]
		case Nonparallel:
			for j := 0; j < d.J-1; j++ {
				th[s+j] = r.Effects[j][k]
			}
		}
	}
	for g := range ly.groups {
		for j := 1; j < d.J-1; j++ {
			th[ly.phiIndex[g][j]] = 1
		}
	}
	return th
}

// rank1Start takes, for each group, the leading singular pair of the
// (J-1) x |group| slopes of the partial fit (columns scaled by the
// predictors' standard deviations), normalized so that phi_1 = 1. When the
// first equation's component is near zero it is moved to a small non-zero
// value, and the label says so.
func (a *auxiliary) rank1Start(d *Data, m Model, ly *layout) ([]float64, string) {
	q := d.J - 1
	th := make([]float64, len(ly.params))
	est := a.partial.Estimates
	for j := 0; j < q; j++ {
		th[ly.cut[j]] = est[a.pLy.cut[j]]
	}
	for k, e := range m.Effects {
		s, ps := ly.slope[k], a.pLy.slope[k]
		switch e {
		case Parallel:
			th[s] = est[ps]
		case Nonparallel:
			copy(th[s:s+q], est[ps:ps+q])
		}
	}
	note := ""
	for g, ks := range ly.groups {
		M := mat.NewDense(q, len(ks), nil)
		for t, k := range ks {
			for j := 0; j < q; j++ {
				M.Set(j, t, est[a.pLy.slope[k]+j]*a.sd[k])
			}
		}
		var svd mat.SVD
		u := make([]float64, q)
		v := make([]float64, len(ks))
		sigma := 0.0
		if svd.Factorize(M, mat.SVDThin) {
			var U, V mat.Dense
			svd.UTo(&U)
			svd.VTo(&V)
			sigma = svd.Values(nil)[0]
			for j := range u {
				u[j] = U.At(j, 0)
			}
			for t := range v {
				v[t] = V.At(t, 0)
			}
		} else {
			u[0] = 1
		}
		if math.Abs(u[0]) < 1e-3 {
			s := 1.0
			if u[0] < 0 {
				s = -1
			}
			u[0] = s * 1e-3
			note = " (equation-1 slopes near zero)"
		}
		for j := 1; j < q; j++ {
			th[ly.phiIndex[g][j]] = u[j] / u[0]
		}
		for t, k := range ks {
			th[ly.slope[k]] = sigma * u[0] * v[t] / a.sd[k]
		}
	}
	return th, note
}

// randomStart draws, for each group, phi' with phi'_r = 1 and the other
// components uniform on (-1, 3), and gamma' around the parallel slopes;
// the point phi' gamma' is then written in the phi_1 = 1 normalization.
func (a *auxiliary) randomStart(rng *rand.Rand, r int, base []float64, ly *layout) []float64 {
	q := ly.J - 1
	th := append([]float64(nil), base...)
	for g, ks := range ly.groups {
		ph := make([]float64, q)
		for j := range ph {
			ph[j] = 1
			if j != r {
				ph[j] = -1 + 4*rng.Float64()
			}
		}
		if math.Abs(ph[0]) < 0.1 {
			ph[0] = math.Copysign(0.1, ph[0])
		}
		for j := 1; j < q; j++ {
			th[ly.phiIndex[g][j]] = ph[j] / ph[0]
		}
		for _, k := range ks {
			s := ly.slope[k]
			gk := base[s]*(0.5+rng.Float64()) + 0.25*rng.NormFloat64()/a.sd[k]
			th[s] = ph[0] * gk
		}
	}
	return th
}

// validToward moves theta towards anchor until every observed category has
// a positive probability.
func (p *problem) validToward(theta, anchor []float64) []float64 {
	th := append([]float64(nil), theta...)
	for h := 0; h < 40; h++ {
		a := p.evaluate(th, 0, false)
		if !a.bad && !math.IsNaN(a.ll) && !math.IsInf(a.ll, 0) {
			return th
		}
		for i := range th {
			th[i] = 0.5 * (th[i] + anchor[i])
		}
	}
	return append([]float64(nil), anchor...)
}

// rankMap writes the constrained parameters as the partial model's
// parameters: the slopes of a constrained predictor k in group g become the
// free slopes b_mk = phi_m g_k. Ref gives, per group, the equation (0-based)
// whose phi is fixed at 1; the constrained model's own normalization is
// ref = 0. With ref[g] = r > 0 the vector keeps the constrained layout and
// the slot of phi_r holds phi_1.
type rankMap struct {
	c, np *layout
	eff   []Effect
	ref   []int
}

func newRankMap(c, np *layout, eff []Effect, ref []int) rankMap {
	if ref == nil {
		ref = make([]int, len(c.groups))
	}
	return rankMap{c: c, np: np, eff: eff, ref: ref}
}

// slot is the index of phi_m of group g in the parameter vector (-1 when
// phi_m is the fixed 1).
func (r rankMap) slot(g, m int) int {
	switch {
	case m == r.ref[g]:
		return -1
	case m == 0:
		return r.c.phiIndex[g][r.ref[g]]
	}
	return r.c.phiIndex[g][m]
}

func (r rankMap) phi(th []float64, g int) []float64 {
	out := make([]float64, r.c.J-1)
	for m := range out {
		out[m] = 1
		if s := r.slot(g, m); s >= 0 {
			out[m] = th[s]
		}
	}
	return out
}

// h maps the parameters to the partial model's parameters.
func (r rankMap) h(th []float64) []float64 {
	q := r.c.J - 1
	out := make([]float64, len(r.np.params))
	for j := 0; j < q; j++ {
		out[r.np.cut[j]] = th[r.c.cut[j]]
	}
	phis := make([][]float64, len(r.c.groups))
	for g := range phis {
		phis[g] = r.phi(th, g)
	}
	for k, e := range r.eff {
		cs, ns := r.c.slope[k], r.np.slope[k]
		switch e {
		case Parallel:
			out[ns] = th[cs]
		case Nonparallel:
			copy(out[ns:ns+q], th[cs:cs+q])
		case Constrained:
			ph := phis[r.c.groupOf[k]]
			for j := 0; j < q; j++ {
				out[ns+j] = ph[j] * th[cs]
			}
		}
	}
	return out
}

// jac is dh/dtheta, Pnp x P row-major.
func (r rankMap) jac(th []float64) []float64 {
	q := r.c.J - 1
	P, Pn := len(r.c.params), len(r.np.params)
	J := make([]float64, Pn*P)
	for j := 0; j < q; j++ {
		J[r.np.cut[j]*P+r.c.cut[j]] = 1
	}
	for k, e := range r.eff {
		cs, ns := r.c.slope[k], r.np.slope[k]
		switch e {
		case Parallel:
			J[ns*P+cs] = 1
		case Nonparallel:
			for j := 0; j < q; j++ {
				J[(ns+j)*P+cs+j] = 1
			}
		case Constrained:
			g := r.c.groupOf[k]
			ph := r.phi(th, g)
			for j := 0; j < q; j++ {
				J[(ns+j)*P+cs] = ph[j]
				if s := r.slot(g, j); s >= 0 {
					J[(ns+j)*P+s] = th[cs]
				}
			}
		}
	}
	return J
}

// chain returns J'v and J'MJ + sum_i v_i d2h_i, the gradient and Hessian of
// f(h(theta)) from the gradient v and Hessian M of f in the partial
// parameters (the only second derivatives of h are d2 b_mk / dg_k dphi_m = 1).
func (r rankMap) chain(th, v, M []float64) ([]float64, []float64) {
	P, Pn := len(r.c.params), len(r.np.params)
	J := r.jac(th)
	g := make([]float64, P)
	for a := 0; a < P; a++ {
		for i := 0; i < Pn; i++ {
			g[a] += J[i*P+a] * v[i]
		}
	}
	MJ := make([]float64, Pn*P)
	for i := 0; i < Pn; i++ {
		for l := 0; l < Pn; l++ {
			x := M[i*Pn+l]
			if x == 0 {
				continue
			}
			for a := 0; a < P; a++ {
				MJ[i*P+a] += x * J[l*P+a]
			}
		}
	}
	H := make([]float64, P*P)
	for a := 0; a < P; a++ {
		for b := a; b < P; b++ {
			x := 0.0
			for i := 0; i < Pn; i++ {
				x += J[i*P+a] * MJ[i*P+b]
			}
			H[a*P+b], H[b*P+a] = x, x
		}
	}
	q := r.c.J - 1
	for k, e := range r.eff {
		if e != Constrained {
			continue
		}
		cs, ns, g := r.c.slope[k], r.np.slope[k], r.c.groupOf[k]
		for j := 0; j < q; j++ {
			if s := r.slot(g, j); s >= 0 {
				H[cs*P+s] += v[ns+j]
				H[s*P+cs] += v[ns+j]
			}
		}
	}
	return g, H
}

// fromStandard rewrites a vector of the normalization phi_1 = 1 in this
// map's normalization (phi' = phi / phi_ref, gamma' = phi_ref gamma).
func (r rankMap) fromStandard(th []float64) []float64 {
	out := append([]float64(nil), th...)
	for g, ks := range r.c.groups {
		ph := r.c.phi(th, g)
		pr := ph[r.ref[g]]
		for m := range ph {
			if s := r.slot(g, m); s >= 0 {
				out[s] = ph[m] / pr
			}
		}
		for _, k := range ks {
			out[r.c.slope[k]] = pr * th[r.c.slope[k]]
		}
	}
	return out
}

// toStandard is the inverse of fromStandard (phi_1 must not be 0).
func (r rankMap) toStandard(th []float64) []float64 {
	out := append([]float64(nil), th...)
	for g, ks := range r.c.groups {
		ph := r.phi(th, g)
		p1 := ph[0]
		for m := 1; m < len(ph); m++ {
			out[r.c.phiIndex[g][m]] = ph[m] / p1
		}
		for _, k := range ks {
			out[r.c.slope[k]] = p1 * th[r.c.slope[k]]
		}
	}
	return out
}

// surrogate is the quadratic approximation of the log-likelihood around the
// unconstrained partial fit, as a function of the constrained parameters:
// ll(theta) ~ ll_partial - Q(theta), Q = 1/2 r' I r, r = h(theta) - hat.
// Finding its maxima needs no pass over the data.
type surrogate struct {
	rankMap
	hat  []float64
	info []float64
}

// parallelStart returns the maximum of the approximation with phi = 1: h
// is then linear in the other parameters, so it is a generalized least
// squares fit of the partial estimates.
func (s *surrogate) parallelStart() []float64 {
	P := len(s.c.params)
	th := make([]float64, P)
	for g := range s.c.groups {
		for j := 1; j < s.c.J-1; j++ {
			th[s.c.phiIndex[g][j]] = 1
		}
	}
	var free []int
	for i, p := range s.c.params {
		if p.kind != pPhi {
			free = append(free, i)
		}
	}
	J := s.jac(th)
	Pn, nf := len(s.np.params), len(free)
	IJ := make([]float64, Pn*nf) // I A
	for i := 0; i < Pn; i++ {
		for l := 0; l < Pn; l++ {
			v := s.info[i*Pn+l]
			for a, c := range free {
				IJ[i*nf+a] += v * J[l*P+c]
			}
		}
	}
	M := make([]float64, nf*nf) // A' I A
	rhs := make([]float64, nf)  // A' I hat
	for a, c := range free {
		for i := 0; i < Pn; i++ {
			rhs[a] += J[i*P+c] * dot(s.info[i*Pn:(i+1)*Pn], s.hat)
			for b := range free {
				M[a*nf+b] += J[i*P+c] * IJ[i*nf+b]
			}
		}
	}
	inv, err := invertSym(M, nf)
	if err != nil {
		return th
	}
	beta := symMulVec(inv, rhs)
	for a, c := range free {
		th[c] = beta[a]
	}
	return th
}

// value returns Q and I r.
func (s *surrogate) value(th []float64) (float64, []float64) {
	r := s.h(th)
	for i := range r {
		r[i] -= s.hat[i]
	}
	Ir := symMulVec(s.info, r)
	return 0.5 * dot(r, Ir), Ir
}

func symMulVec(A, x []float64) []float64 {
	n := len(x)
	out := make([]float64, n)
	for i := 0; i < n; i++ {
		s := 0.0
		for j := 0; j < n; j++ {
			s += A[i*n+j] * x[j]
		}
		out[i] = s
	}
	return out
}

// maximize climbs -Q from th by Newton steps (with the same repair of an
// indefinite matrix and step halving as the data fit) to a local maximum.
func (s *surrogate) maximize(th0 []float64) []float64 {
	th := append([]float64(nil), th0...)
	Q, Ir := s.value(th)
	negInfo := make([]float64, len(s.info))
	for i, v := range s.info {
		negInfo[i] = -v
	}
	for it := 0; it < 500; it++ {
		// -Q has gradient -J'Ir and Hessian -(J'IJ + sum (Ir)_i d2h_i).
		for i := range Ir {
			Ir[i] = -Ir[i]
		}
		g, H := s.chain(th, Ir, negInfo)
		d, dec, _ := newtonDirection(H, g)
		if dec <= 1e-13*math.Max(1, Q) || math.IsNaN(dec) {
			return th
		}
		step := 1.0
		moved := false
		for h := 0; h < 50; h++ {
			next := addScaled(th, d, step)
			nQ, nIr := s.value(next)
			if nQ < Q {
				th, Q, Ir, moved = next, nQ, nIr, true
				break
			}
			step /= 2
		}
		if !moved {
			return th
		}
	}
	return th
}

// match returns the run whose approximate maximum is within sameLL of sur
// in the approximation's own metric (1/2 dh' I dh), or nil.
func (s *surrogate) match(sur []float64, runs []*runRecord) *runRecord {
	hs := s.h(sur)
	for _, r := range runs {
		if r.st == nil || r.sur == nil {
			continue
		}
		dh := s.h(r.sur)
		for i := range dh {
			dh[i] -= hs[i]
		}
		if 0.5*dot(dh, symMulVec(s.info, dh)) <= sameLL {
			return r
		}
	}
	return nil
}

// groupLabel names constraint group g in messages.
func groupLabel(ly *layout, g int) string {
	switch {
	case ly.gnames[g] != "":
		return fmt.Sprintf("of group %q", ly.gnames[g])
	case len(ly.groups) == 1:
		return "of the constrained predictors"
	}
	return fmt.Sprintf("of group g%d", g+1)
}

// Thresholds of identification of phi: effects of a group on the linear
// predictor (per standard deviation of each predictor) below phiZeroEffect
// vanish; |phi| above phiHuge means the equation-1 slopes vanish relative
// to the others; a standard error above phiHuge * max(1, |phi|) means the
// data do not determine phi.
const (
	phiZeroEffect = 1e-6
	phiHuge       = 1e6
	phiLarge      = 100
)

// markIdentification checks, at the chosen maximum, whether each group's phi
// is determined. When it is not, the status becomes StatusNotIdentified, the
// log-likelihood is kept, phi is NaN, and the other standard errors come
// from the information without that group's phi and gamma (holding its
// slopes at their estimates). Large but determined phi get a note.
func markIdentification(r *Result, d *Data, ly *layout, pr *problem, st *newtonState, sd []float64, opt Options) {
	if math.IsInf(st.ll, -1) {
		return
	}
	q := d.J - 1
	P := len(ly.params)
	var bad []int
	var why []string
	for g, ks := range ly.groups {
		ph := ly.phi(st.theta, g)
		gs, pm := 0.0, 0.0
		for _, k := range ks {
			gs = math.Max(gs, math.Abs(st.theta[ly.slope[k]])*sd[k])
		}
		maxRef := 0
		for j, v := range ph {
			if math.Abs(v) > pm {
				pm, maxRef = math.Abs(v), j
			}
		}
		seBig := false
		if r.StdErrors != nil {
			for j := 1; j < q; j++ {
				i := ly.phiIndex[g][j]
				if !(r.StdErrors[i] <= phiHuge*math.Max(1, math.Abs(st.theta[i]))) {
					seBig = true
				}
			}
		}
		name := groupLabel(ly, g)
		switch {
		case gs*pm < phiZeroEffect:
			bad = append(bad, g)
			why = append(why, fmt.Sprintf("phi %s is not identified because gamma is near zero (largest |gamma_k| sd(x_k) = %.2g): these predictors have no effect, and every phi fits equally well", name, gs))
		case pm > phiHuge:
			bad = append(bad, g)
			why = append(why, fmt.Sprintf("phi %s is not identified in the normalization phi_1 = 1: the slopes of equation 1 are near zero relative to equation %d (|phi_%d| = %.2g); read the effects matrix", name, maxRef+1, maxRef+1, pm))
		case seBig:
			bad = append(bad, g)
			why = append(why, fmt.Sprintf("phi %s is not identified: its standard errors exceed %.0g times its size (gamma is too small to determine it, largest |gamma_k| sd(x_k) = %.2g)", name, phiHuge, gs))
		case pm > phiLarge:
			r.PhiNotes = append(r.PhiNotes, fmt.Sprintf("phi %s: the slopes of equation 1 are small relative to equation %d (|phi_%d| = %.3g); phi normalized by equation %d (PhiNormalized) is easier to read", name, maxRef+1, maxRef+1, pm, maxRef+1))
		}
	}
	if len(bad) == 0 {
		return
	}
	// Parameters kept: all but phi and gamma of the unidentified groups.
	drop := make([]bool, P)
	for _, g := range bad {
		for j := 1; j < q; j++ {
			drop[ly.phiIndex[g][j]] = true
		}
		for _, k := range ly.groups[g] {
			drop[ly.slope[k]] = true
		}
	}
	var keep []int
	for i := 0; i < P; i++ {
		if !drop[i] {
			keep = append(keep, i)
		}
	}
	H := st.hess
	if opt.Covariance == CovEIM {
		a := pr.evaluate(st.theta, 2, true)
		H = pr.hessian(st.theta, a, false)
	}
	nk := len(keep)
	sub := make([]float64, nk*nk)
	gk := make([]float64, nk)
	for a, i := range keep {
		gk[a] = st.grad[i]
		for b, j := range keep {
			sub[a*nk+b] = -H[i*P+j]
		}
	}
	var cov []float64
	if nk > 0 {
		cond, _, pd := scaledCondition(sub, nk)
		if !pd || cond > conditionLimit {
			// Something else is not determined either (e.g. separation):
			// keep the engine's verdict and add the phi diagnosis.
			r.Message = strings.Join(why, "; ") + ". " + r.Message
			return
		}
		c, err := invertSym(sub, nk)
		if err != nil {
			r.Message = strings.Join(why, "; ") + ". " + r.Message
			return
		}
		// The identified part must be at its maximum.
		if dec := dot(gk, symMulVec(c, gk)); dec > 1e-8*math.Max(1, math.Abs(st.ll)) {
			r.Message = strings.Join(why, "; ") + fmt.Sprintf(" (and the other parameters are not at a maximum: Newton decrement %.2g). ", dec) + r.Message
			return
		}
		cov = c
	}
	r.Status = StatusNotIdentified
	r.Separation = nil
	r.Converged = true // the identified parameters are at their maximum
	r.LogLik = st.ll
	r.AIC = -2*r.LogLik + 2*float64(P)
	r.BIC = -2*r.LogLik + math.Log(r.NObs)*float64(P)
	r.CovType = CovOIM
	if opt.Covariance == CovEIM {
		r.CovType = CovEIM
	}
	r.Cov = make([]float64, P*P)
	r.StdErrors = make([]float64, P)
	for i := range r.Cov {
		r.Cov[i] = math.NaN()
	}
	for i := range r.StdErrors {
		r.StdErrors[i] = math.NaN()
	}
	for a, i := range keep {
		for b, j := range keep {
			r.Cov[i*P+j] = cov[a*nk+b]
		}
		r.StdErrors[i] = math.Sqrt(cov[a*nk+a])
	}
	r.Estimates = append([]float64(nil), r.Estimates...)
	for _, g := range bad {
		for j := 1; j < q; j++ {
			r.Estimates[ly.phiIndex[g][j]] = math.NaN()
			r.Phi[g][j] = math.NaN()
		}
	}
	r.Message = strings.Join(why, "; ") + fmt.Sprintf("; the log-likelihood %.6f is the maximum; phi is reported as NaN and the other standard errors hold these slopes at their estimates", r.LogLik)
	if r.NegativeRows > 0 {
		r.Message += fmt.Sprintf("; %d of %d rows have a negative predicted category probability", r.NegativeRows, r.NRows)
	}
}

// PhiNormalized rescales the common factor of constraint group g (0-based,
// in the order of Result.PhiGroups) so that phi of equation ref (1-based)
// is 1, with gamma multiplied by the old phi_ref; standard errors by the
// delta method from Cov.
func (r *Result) PhiNormalized(g, ref int) (*PhiNormalization, error) {
	if g < 0 || g >= len(r.Phi) {
		return nil, fmt.Errorf("%s has no constraint group %d", r.Name, g+1)
	}
	q := r.J - 1
	if ref < 1 || ref > q {
		return nil, fmt.Errorf("equation %d outside 1..%d", ref, q)
	}
	if r.Cov == nil || !(r.OK() || r.Status == StatusNotIdentified) {
		return nil, fmt.Errorf("%s has no covariance matrix (%s)", r.Name, r.Status)
	}
	ly, err := newLayout(r.Model, r.J, r.Predictors)
	if err != nil {
		return nil, err
	}
	ph := r.Phi[g]
	pr := ph[ref-1]
	if math.IsNaN(pr) || math.Abs(pr) < 1e-12 {
		return nil, fmt.Errorf("phi_%d is %g: it cannot be the normalization", ref, pr)
	}
	P := len(r.Estimates)
	ks := ly.groups[g]
	n := q + len(ks)
	A := make([]float64, n*P) // Jacobian of (phi', gamma') in theta
	est := make([]float64, n)
	refIdx := ly.phiIndex[g][ref-1] // -1 when ref = 1
	for j := 0; j < q; j++ {
		est[j] = ph[j] / pr
		if j > 0 && j != ref-1 {
			A[j*P+ly.phiIndex[g][j]] = 1 / pr
		}
		if refIdx >= 0 && j != ref-1 {
			A[j*P+refIdx] = -ph[j] / (pr * pr)
		}
	}
	out := &PhiNormalization{Group: ly.gnames[g], Ref: ref}
	for t, k := range ks {
		s := ly.slope[k]
		row := q + t
		est[row] = pr * r.Estimates[s]
		A[row*P+s] = pr
		if refIdx >= 0 {
			A[row*P+refIdx] = r.Estimates[s]
		}
		out.Predictors = append(out.Predictors, r.Predictors[k])
	}
	_, cov := linearMap(A, n, r.Estimates, r.Cov)
	se := make([]float64, n)
	for i := range se {
		se[i] = math.Sqrt(math.Max(cov[i*n+i], 0))
	}
	se[ref-1] = 0
	out.Phi, out.PhiSE = est[:q], se[:q]
	out.Gamma, out.GammaSE = est[q:], se[q:]
	return out, nil
}
