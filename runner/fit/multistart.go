package fit

import (
	"fmt"
	"math"
	"strconv"
	"strings"
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
	LogLik      float64 // log-likelihood at the end (NaN: no valid point, or abandoned on the approximation alone before any pass over the data)
	MaxAbsScore float64 // largest absolute score there
	ReachedBest bool    // within 1e-6 of the best log-likelihood
	// Refitted: the start reached the best through the refit, in another
	// normalization of phi, from where it stopped on the ridge g -> 0
	// (countStart; LogLik is then the best, Reason says where it stopped).
	Refitted   bool
	Status     Status // StatusOK: converged; StatusNotIdentified: stationary but flat; else StatusNotConverged
	Iterations int    // Newton iterations on the data (0 when the start shared another's fit or was abandoned on the approximation alone)
	Reason     string // why the Newton iterations stopped
	// Screened: the start was first carried to a maximum of the quadratic
	// approximation of the log-likelihood around the unconstrained partial
	// fit, and the data fit (if any) began there.
	Screened bool
	// SharedWith names the start whose data fit this start's approximate
	// maximum coincided with (within 1e-6 in log-likelihood units); that
	// fit's numbers are reported. Empty when the start had its own fit.
	SharedWith string
	// outOfReach: the start was abandoned on the approximation alone,
	// which put its maximum at least this far below the best (LogLik is
	// then NaN: no pass over the data was made for it).
	outOfReach float64
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

// defaultScreenAbove is Options.ScreenAbove when it is 0.
const defaultScreenAbove = 5000

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
func multiStart(d *Data, m Model, ly *layout, pr *problem, opt Options, sh *shared) (*Result, error) {
	aux, err := newAuxiliary(d, m, ly, opt, sh)
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
			if short, out := aux.sur.outOfReach(sur, bestLL(runs)); out && !opt.KeepStarts {
				// Abandoned on the approximation alone: no pass over the data.
				byStart[i] = &runRecord{rec: StartRecord{Label: s.label, LogLik: math.NaN(), Status: StatusNotConverged, Screened: true, outOfReach: short,
					Reason: fmt.Sprintf("abandoned: the approximation puts its maximum at least %.6g below the best log-likelihood %.6f", short, bestLL(runs))}, sur: sur}
				continue
			}
			st := pr.runScreened(aux.sur, sur, runs[bestRun(runs)].st.theta, opt, bestLL(runs))
			rec := recordOf(s.label, &st)
			rec.Screened = true
			byStart[i] = &runRecord{rec: rec, st: &st, sur: aux.sur.maximize(st.theta)}
			runs = append(runs, byStart[i])
		}
	}
	best := runs[bestRun(runs)].st
	src := localSource(d, pr, aux.sd, opt.Sampling)
	res, err := finish(src, m, ly, *best, opt)
	if err != nil {
		return nil, err
	}
	// from: the log-likelihood at which the best start stopped, when the
	// reported maximum was reached by refitting from there in another
	// normalization (NaN otherwise); how says which.
	from, how := math.NaN(), ""
	if refs := ridgeRefs(res, ly, best, aux.sd); refs != nil {
		if alt, st := aux.normalizedFit(src, d, m, ly, pr, res, best, refs, opt); alt != nil {
			from, how = best.ll, normalizationText(ly, refs)
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
		res.Starts[i] = countStart(r.rec, top, from, how)
		if res.Starts[i].ReachedBest {
			res.StartsAgreeing++
		}
	}
	if res.Status != StatusNotIdentified {
		markIdentification(res, ly, pr, best, aux.sd, opt)
	}
	res.CheckScale()
	return res, nil
}

// countStart marks a start's record as reaching the reported maximum top:
// when it ended within sameLL of it, or, when top was reached by refitting
// from where the best start stopped (at log-likelihood from; NaN when no
// refit was made) in another normalization (how), when it ended within
// sameLL of that point, from which the same refit reaches top. Such a
// start's log-likelihood becomes top and its reason says where it stopped
// and how the maximum was reached from there.
func countStart(rec StartRecord, top, from float64, how string) StartRecord {
	if math.IsNaN(rec.LogLik) {
		return rec
	}
	if math.Abs(rec.LogLik-top) <= sameLL {
		rec.ReachedBest = true
		return rec
	}
	if !math.IsNaN(from) && math.Abs(rec.LogLik-from) <= sameLL {
		rec.Reason = fmt.Sprintf("%s; stopped at log-likelihood %.6f, and refitted from there with %s it reached the best, %.6f", rec.Reason, rec.LogLik, how, top)
		rec.LogLik, rec.ReachedBest, rec.Refitted = top, true, true
	}
	return rec
}

// normalizationText names the normalization refs of ridgeRefs: "phi_4 = 1",
// "phi_3 = 1 of group g2", one clause per group normalized by an equation
// other than the first.
func normalizationText(ly *layout, refs []int) string {
	var out []string
	for g, r := range refs {
		if r == 0 {
			continue
		}
		s := fmt.Sprintf("phi_%d = 1", r+1)
		if len(refs) > 1 {
			s += " " + groupLabel(ly, g)
		}
		out = append(out, s)
	}
	return "the common factor normalized by " + strings.Join(out, ", ")
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
		// A large phi is refitted with the largest equation as reference:
		// normalizedFit keeps the standard result when that refit shows
		// phi_1 is merely small, and reports non-identification only when
		// the equation-1 slopes vanish.
		irregular := !st.converged || !res.OK()
		if gs*pm >= phiZeroEffect && (pm > phiLarge || (pm > phiRidge && irregular)) {
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
func (a *auxiliary) normalizedFit(src *source, d *Data, m Model, ly *layout, pr *problem, res *Result, st *newtonState, refs []int, opt Options) (*Result, *newtonState) {
	// Phase 1: the maximum in the other normalization.
	rm := newRankMap(ly, a.pLy, m.Effects, refs)
	pp := newProblem(d.design(), a.partM, a.pLy, opt.Workers)
	ast := rm.newton(pp, rm.fromStandard(st.theta), opt.MaxIter)
	if !ast.converged || ast.ll < st.ll-sameLL {
		return nil, nil
	}
	// Phase 2: representable after all: the ordinary fit from there.
	representable := true
	for g, r := range refs {
		if r > 0 && math.Abs(rm.phi(ast.theta, g)[0]) < 1.0/(phiLarge*phiLarge) {
			representable = false
		}
	}
	if representable {
		nst := pr.newton(rm.toStandard(ast.theta), opt.MaxIter, opt.Scoring)
		if nst.converged && nst.ll >= ast.ll-sameLL {
			if r, err := finish(src, m, ly, nst, opt); err == nil {
				return r, &nst
			}
		}
	}
	// Phase 3: the covariance in that normalization.
	hth := rm.h(ast.theta)
	cov, cond, ok := rm.covariance(pp, &ast, hth, opt)
	if !ok {
		return nil, nil
	}
	// Phase 4: the result: the point reached, then the groups that the
	// normalization phi_1 = 1 cannot represent.
	r := *res
	r.Iterations = st.iters + ast.iters
	r.Reason = "converged"
	r.MaxAbsScore, r.score = 0, nil // the rank map's coordinates
	for _, g := range ast.grad {
		r.MaxAbsScore = math.Max(r.MaxAbsScore, math.Abs(g))
	}
	r.Decrement = ast.decrement
	r.Condition = cond
	r.MinFittedProb, r.NegativeRows = pp.fittedCheck(hth)
	r.setSlopes(m, ly.K, a.pLy, hth)
	drop, why := r.setRidgeGroups(d.Predictors, ly, a.pLy, rm, ast.theta, hth, cov, refs)
	r.settleNotIdentified(ast.ll, cov, drop, covarianceType(opt), why, "gamma is reported as the equation-1 slopes (zero) and phi as NaN")
	return &r, &ast
}

// covariance is the inverse information at the maximum ast of this map's
// normalization (hth its slopes in the partial model's parameters), with
// the information's scaled condition; ok is false when the information is
// singular or ill-conditioned there.
func (rm rankMap) covariance(pp *problem, ast *newtonState, hth []float64, opt Options) (cov []float64, cond float64, ok bool) {
	P := len(ast.theta)
	H := ast.hess
	if opt.Covariance == Expected {
		_, H = rm.chain(ast.theta, make([]float64, len(hth)), pp.expectedHessian(hth))
	}
	info := negated(H)
	cond, _, pd := scaledCondition(info, P)
	if !pd || cond > conditionLimit {
		return nil, cond, false
	}
	cov, err := invertSym(info, P)
	if err != nil {
		return nil, cond, false
	}
	return cov, cond, true
}

// setSlopes sets the cutpoints and the effects matrix from hth, the
// parameters of the partial model (layout pLy) of model m with K
// predictors.
func (r *Result) setSlopes(m Model, K int, pLy *layout, hth []float64) {
	q := pLy.J - 1
	r.Cutpoints = make([]float64, q)
	for j := range r.Cutpoints {
		r.Cutpoints[j] = hth[pLy.cut[j]]
	}
	r.Effects = make([][]float64, q)
	for j := range r.Effects {
		r.Effects[j] = make([]float64, K)
		for k, e := range m.Effects {
			ns := pLy.slope[k]
			if e == Parallel {
				r.Effects[j][k] = hth[ns]
			} else {
				r.Effects[j][k] = hth[ns+j]
			}
		}
	}
}

// setRidgeGroups sets the estimates and phi of every constraint group at
// the maximum theta of the normalization refs: groups normalized by
// equation 1 keep theirs; for the others phi is NaN, gamma holds the
// equation-1 slopes (from hth) and PhiOther phi and gamma in their own
// normalization with standard errors from cov. It returns the parameters
// without standard errors and the reason for each such group.
func (r *Result) setRidgeGroups(predictors []string, ly, pLy *layout, rm rankMap, theta, hth, cov []float64, refs []int) (drop []bool, why []string) {
	P, q := len(theta), ly.J-1
	r.Estimates = append([]float64(nil), theta...)
	drop = make([]bool, P)
	r.Phi = nil
	r.PhiOther = nil
	for g, ks := range ly.groups {
		if refs[g] == 0 {
			r.Phi = append(r.Phi, rm.phi(theta, g))
			continue
		}
		ph := make([]float64, q)
		ph[0] = 1
		for j := 1; j < q; j++ {
			i := ly.phiIndex[g][j]
			r.Estimates[i], ph[j], drop[i] = math.NaN(), math.NaN(), true
		}
		r.Phi = append(r.Phi, ph)
		alt := PhiNormalization{Group: ly.gnames[g], Ref: refs[g] + 1, Phi: rm.phi(theta, g), PhiSE: make([]float64, q)}
		for j := 0; j < q; j++ {
			if s := rm.slot(g, j); s >= 0 {
				alt.PhiSE[j] = math.Sqrt(cov[s*P+s])
			}
		}
		for _, k := range ks {
			s := ly.slope[k]
			r.Estimates[s] = hth[pLy.slope[k]]
			drop[s] = true
			alt.Predictors = append(alt.Predictors, predictors[k])
			alt.Gamma = append(alt.Gamma, theta[s])
			alt.GammaSE = append(alt.GammaSE, math.Sqrt(cov[s*P+s]))
		}
		r.PhiOther = append(r.PhiOther, alt)
		phis := make([]string, len(alt.Phi))
		for j, v := range alt.Phi {
			phis[j] = strconv.FormatFloat(v, 'g', 4, 64)
		}
		why = append(why, fmt.Sprintf("phi %s is not identified in the normalization phi_1 = 1: at the maximum its slopes in equation 1 vanish (phi_1 = %.2g when phi_%d = 1), so phi_m = b_m / b_1 is unbounded; normalized by equation %d instead (phi_%d = 1), phi is (%s)", groupLabel(ly, g), alt.Phi[0], refs[g]+1, refs[g]+1, refs[g]+1, strings.Join(phis, ", ")))
	}
	return drop, why
}

// newton maximizes the log-likelihood in this map's normalization, with
// derivatives from the partial model's problem pp by the chain rule; the
// steps, repair and stopping rules are those of the data fit (newtonLoop).
func (r rankMap) newton(pp *problem, th0 []float64, maxIter int) newtonState {
	base := pp.evaluator(false)
	return newtonLoop(th0, maxIter, func(th []float64, order int) evalOut {
		if order == 1 {
			order = 2 // the score is chained with the second derivatives
		}
		out := base(r.h(th), order)
		if !out.bad && order >= 2 {
			out.g, out.H = r.chain(th, out.g, out.H)
		}
		return out
	})
}

// phiRidge: a best start that did not converge with |phi| above this is
// refitted with the largest equation as reference too: it may be climbing
// the ridge g -> 0, |phi| -> inf towards a maximum that lies on the other
// side of b_1 = 0, which the normalization phi_1 = 1 cannot cross.
const phiRidge = 10

// reasonRidge: a start stopped while phi grew along the ridge g -> 0.
const reasonRidge = "climbing the ridge where g tends to 0 and |phi| grows"

// maxPhi is the largest |phi| of any group at theta.
func (p *problem) maxPhi(theta []float64) float64 {
	mx := 0.0
	for _, g := range p.ly.phiIndex {
		for _, i := range g {
			if i >= 0 {
				mx = math.Max(mx, math.Abs(theta[i]))
			}
		}
	}
	return mx
}

// startGap: a start is abandoned at its first evaluation when its Newton
// decrement times startGap falls short of the gap to the best
// log-likelihood (runStart).
const startGap = 20

// reasonFlat: Newton stopped at a stationary point where the information
// is singular (a flat direction, such as phi when gamma = 0).
const reasonFlat = "the log-likelihood is flat (singular information)"

// runStart runs Newton-Raphson from theta; best is the best log-likelihood
// found so far (-Inf, or opt.KeepStarts: run to the iteration limit, never
// abandoned). A start at which an
// observed category has probability zero is first moved towards anchor
// (when not nil).
func (p *problem) runStart(theta, anchor []float64, opt Options, best float64) newtonState {
	prev := math.NaN()
	stop := func(it int, th []float64, ll, dec float64, pd bool) string {
		defer func() { prev = ll }()
		// Climbing the ridge g -> 0, |phi| -> inf: the normalization phi_1
		// = 1 cannot reach what lies beyond; ridgeRefs refits in another.
		if it >= 10 && !math.IsNaN(prev) && ll-prev < 1e-4 && p.maxPhi(th) > phiRidge {
			return reasonRidge
		}
		if it >= 3 && !pd && dec <= 1e-10*math.Max(1, math.Abs(ll)) {
			return reasonFlat
		}
		if math.IsInf(best, -1) || opt.KeepStarts {
			return ""
		}
		gap := best - sameLL - ll
		if it == 0 {
			// At the start itself there is no progress to judge by: a
			// concave point whose quadratic model gains less than a
			// fortieth of what separates it from the best (dec/2 against
			// the gap) lies near another, lower maximum.
			if pd && startGap*dec < gap {
				return fmt.Sprintf("abandoned: it could not reach the best log-likelihood %.6f", best)
			}
			return ""
		}
		if math.IsNaN(prev) {
			return ""
		}
		// Stop when neither the quadratic model of the next step nor the
		// recent progress could bring this start to the best so far.
		if 2*dec < gap && 5*(ll-prev) < gap {
			return fmt.Sprintf("abandoned: it could not reach the best log-likelihood %.6f", best)
		}
		return ""
	}
	st := newtonLoopStop(theta, opt.MaxIter, p.evaluator(opt.Scoring), stop)
	if math.IsInf(st.ll, -1) && anchor != nil {
		prev = math.NaN()
		st = newtonLoopStop(p.validToward(theta, anchor), opt.MaxIter, p.evaluator(opt.Scoring), stop)
	}
	return st
}

// runScreened is runStart for a screened start theta (a maximum of the
// approximation sur) when a best log-likelihood is known: its first
// evaluation asks for the score alone, with the approximation's second
// derivatives standing in (when they are concave there; not with
// Options.KeepStarts), and a start that this shows, with twice runStart's
// margin, cannot reach the best is abandoned there (one pass for the score
// instead of one with second derivatives; such starts lie near a lower
// maximum, hundreds of log-likelihood units below the best on large data).
// Any other start runs as runStart runs it.
func (p *problem) runScreened(sur *surrogate, theta, anchor []float64, opt Options, best float64) newtonState {
	if H := sur.hessian(theta); !math.IsInf(best, -1) && !opt.KeepStarts && concave(H, len(theta)) {
		a := p.evaluator(opt.Scoring)(theta, 1)
		if !a.bad {
			_, dec, pd := newtonDirection(H, a.g)
			if pd && 2*startGap*dec < best-sameLL-a.ll {
				return newtonState{theta: theta, ll: a.ll, grad: a.g, decrement: dec, minLogP: a.minLogP, minKnown: a.minKnown,
					reason: fmt.Sprintf("abandoned: it could not reach the best log-likelihood %.6f", best)}
			}
		}
	}
	return p.runStart(theta, anchor, opt, best)
}

// concave reports whether the second derivatives H (P x P, row-major) are
// negative definite.
func concave(H []float64, P int) bool {
	_, _, pd := newtonDirection(H, make([]float64, P))
	return pd
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

// bestRun returns the run that reached the highest log-likelihood: among
// the converged runs within tieLL of the highest, the earliest; else the
// highest, preferring, among runs within sameLL of it, a converged one,
// then the earliest. Starts that reach one maximum end at points that
// differ in the last digits the convergence rule leaves (about 1e-8 of an
// estimate), and their log-likelihoods by rounding: the earliest such run
// is reported, so that which later starts ran to their end (abandoned or
// not, Options.KeepStarts) does not change the result.
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
	tie := tieLL * math.Max(1, math.Abs(runs[b].st.ll))
	for i, r := range runs {
		if r.st != nil && r.st.converged && r.st.ll >= runs[b].st.ll-tie {
			return i
		}
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

// tieLL: converged runs whose log-likelihoods differ by less than this
// share of it reached one maximum as far as the convergence rule can tell
// (it stops at a Newton decrement of 1e-10 of the log-likelihood, then
// takes one more step).
const tieLL = 1e-10
