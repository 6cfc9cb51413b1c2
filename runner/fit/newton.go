package fit

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/lapack64"
	"gonum.org/v1/gonum/mat"
)

// newtonState is the outcome of the Newton engine.
type newtonState struct {
	theta     []float64
	ll        float64
	grad      []float64
	hess      []float64 // observed (or expected when scoring) second derivatives
	iters     int
	converged bool
	reason    string
	decrement float64
	repaired  int // iterations where the information was not positive definite
	// minLogP is the smallest log-probability of an observed category at
	// theta, when the evaluations give it (minKnown).
	minLogP  float64
	minKnown bool
}

// evalOut is one evaluation of a log-likelihood: its value and, when asked
// for, score and second derivatives (order 1 and 2).
type evalOut struct {
	ll    float64
	bad   bool // an observed category has a non-positive probability
	order int
	g, H  []float64
	// minLogP: the smallest log-probability of an observed category, when
	// minKnown.
	minLogP  float64
	minKnown bool
}

// evalFunc evaluates a log-likelihood at theta to the given order.
type evalFunc func(theta []float64, order int) evalOut

// newton maximizes the log-likelihood of the problem from theta0 with
// Newton-Raphson (or Fisher scoring).
func (p *problem) newton(theta0 []float64, maxIter int, scoring bool) newtonState {
	return newtonLoop(theta0, maxIter, p.evaluator(scoring))
}

// evaluator wraps the problem's row sums as an evalFunc.
func (p *problem) evaluator(scoring bool) evalFunc {
	return func(th []float64, order int) evalOut {
		a := p.evaluateKept(th, order, scoring)
		out := evalOut{ll: a.ll, bad: a.bad || math.IsNaN(a.ll) || math.IsInf(a.ll, 0), order: order, minLogP: a.minLP, minKnown: true}
		if out.bad {
			return out
		}
		if order >= 1 {
			out.g = p.gradient(th, a)
		}
		if order >= 2 {
			out.H = p.hessian(th, a, !scoring)
		}
		return out
	}
}

// newtonLoop is the Newton engine: step halving when the log-likelihood
// falls or an observed category's probability becomes non-positive, repair
// of an indefinite information, convergence on a positive definite
// information and a small Newton decrement, then one last full step.
func newtonLoop(theta0 []float64, maxIter int, ev evalFunc) newtonState {
	return newtonLoopStop(theta0, maxIter, ev, nil)
}

// firstEvaluation evaluates the start of a Newton run (a copy of theta0)
// with second derivatives; not ok, with the state to return, when the
// start gives an observed category a zero probability.
func firstEvaluation(theta0 []float64, ev evalFunc) (theta []float64, a evalOut, st newtonState, ok bool) {
	theta = append([]float64(nil), theta0...)
	if a = ev(theta, 2); a.bad {
		st.theta, st.ll, st.reason = theta, math.Inf(-1), "the starting values give a zero probability to an observed category"
		return theta, a, st, false
	}
	return theta, a, st, true
}

// stopFunc may end a Newton run early: called once per iteration that has
// not converged, with the iteration, parameters, log-likelihood, Newton
// decrement and whether the information was positive definite; a non-empty answer stops
// the run with that reason.
type stopFunc func(it int, theta []float64, ll, dec float64, pd bool) string

// newtonLoopStop is newtonLoop with an optional early stop.
//
// After an iteration whose decrement was very small (at most 1e-8 |LL|,
// as at a start projected from a fit that nests the model), the full step
// lands within about the square of that distance of the maximum, and its
// evaluation asks for the score alone: the previous point's information
// stands in for this point's. The rule then ends as usual with the last
// step, evaluated with second derivatives, when the decrement with that
// information is at most 1e-10 |LL| and the error that information leaves
// in the last step is negligible: the decrement expected after it,
// dec^2 / the previous decrement, at most 1e-24 |LL| (estimates within
// 1e-12 sqrt|LL| standard errors of the last step with this point's own
// information); the decrement after the step, with its own information,
// must confirm it. Otherwise this point is evaluated with its own second
// derivatives, and the iterations go on exactly as if it had been so
// from the start.
func newtonLoopStop(theta0 []float64, maxIter int, ev evalFunc, stop stopFunc) newtonState {
	theta, a, st, ok := firstEvaluation(theta0, ev)
	if !ok {
		return st
	}
	ll := a.ll
	prevSmall := false
	var prevH []float64 // the previous point's information
	prevDec := 0.0      // and decrement
	for it := 0; ; it++ {
		scale := math.Max(1, math.Abs(ll))
		if a.order < 2 {
			b, taken, ok := lastStepReused(ev, theta, ll, a.g, prevH, prevDec, scale)
			switch {
			case ok:
				st.theta, st.ll, st.grad, st.hess, st.iters = b.theta, b.ll, b.g, b.H, it
				st.minLogP, st.minKnown = b.minLogP, b.minKnown
				st.decrement = b.dec
				st.converged = true
				st.reason = "converged"
				return st
			case taken:
				// Stepped, but not confirmed: go on from there.
				theta, a, ll = b.theta, b.evalOut, b.ll
				prevSmall = false
				scale = math.Max(1, math.Abs(ll))
			default:
				// Not converged with the reused information: this
				// point's own.
				b := ev(theta, 2)
				if b.bad {
					st.theta, st.ll, st.iters = theta, ll, it
					st.reason = "the log-likelihood could not be evaluated"
					return st
				}
				a = b
			}
		}
		g, H := a.g, a.H
		st.theta, st.ll, st.grad, st.hess, st.iters = theta, ll, g, H, it
		st.minLogP, st.minKnown = a.minLogP, a.minKnown
		d, dec, c := newtonStep(H, g)
		pd := c == definite
		if !pd {
			st.repaired++
		}
		st.decrement = dec
		if pd && (dec <= 1e-16*scale || (prevSmall && dec <= 1e-10*scale)) {
			// Take the last (tiny) step: it squares the remaining error.
			next := addScaled(theta, d, 1)
			if b := ev(next, 2); !b.bad && b.ll >= ll-1e-12*scale {
				st.theta, st.ll, st.grad, st.hess = next, b.ll, b.g, b.H
				st.minLogP, st.minKnown = b.minLogP, b.minKnown
			}
			st.converged = true
			st.reason = "converged"
			return st
		}
		if rangeExhausted(c, dec, scale) {
			st.reason = rangeExhaustedReason
			return st
		}
		prevSmall = pd && dec <= 1e-6*scale
		prevH, prevDec = H, dec
		if stop != nil {
			if why := stop(it, theta, ll, dec, pd); why != "" {
				st.reason = why
				return st
			}
		}
		if it >= maxIter {
			st.reason = "iteration limit reached"
			return st
		}
		// A run whose start is already at a maximum as far as the rule
		// goes (a decrement of at most 1e-10 |LL| there, as at the maximum
		// of a constrained model's approximation from the fit that nests
		// it, or at an earlier fit's estimates) takes its step with second
		// derivatives, and ends at the point reached when that point's own
		// decrement confirms it (at most 1e-16 |LL|, the bound at which the
		// rule ends at once, as lastStepReused ends): one pass fewer than
		// the step for the score alone and the last step after it.
		// Otherwise the iterations go on from there.
		confirm := it == 0 && pd && dec <= 1e-10*scale
		// Step halving: accept the first step that raises the log-likelihood
		// and keeps every observed category's probability positive. The
		// full step is evaluated with derivatives, since it is nearly always
		// accepted and the next iteration needs them at that point (the
		// score alone after a small decrement: see above).
		step := 1.0
		var next *evalOut
		for h := 0; h < 60; h++ {
			cand := addScaled(theta, d, step)
			order := 0
			if h == 0 {
				order = 2
				if pd && dec <= 1e-8*scale && !confirm {
					order = 1
				}
			}
			b := ev(cand, order)
			if !b.bad && (b.ll > ll || (dec < 1e-6*scale && b.ll >= ll-1e-12*scale)) {
				theta = cand
				next = &b
				break
			}
			step /= 2
		}
		if confirm && next != nil && next.order == 2 && !next.bad {
			if _, own, opd := newtonDirection(next.H, next.g); opd && own <= 1e-16*scale {
				st.theta, st.ll, st.grad, st.hess, st.iters = theta, next.ll, next.g, next.H, it+1
				st.minLogP, st.minKnown = next.minLogP, next.minKnown
				st.converged = true
				st.reason = "converged"
				return st
			}
		}
		if next == nil {
			st.reason = "no step raises the log-likelihood"
			// The point may still be an optimum to working precision.
			if pd && dec <= 1e-8*scale {
				st.converged = true
				st.reason = "converged (log-likelihood flat to working precision)"
			}
			return st
		}
		if next.order < 1 {
			b := ev(theta, 2)
			next = &b
		}
		if next.bad {
			st.reason = "the log-likelihood could not be evaluated"
			return st
		}
		a = *next
		ll = a.ll
	}
}

// reusedLast is the last step of lastStepReused: the point reached, its
// evaluation to second order, and the decrement before the step.
type reusedLast struct {
	evalOut
	theta []float64
	dec   float64
}

// lastStepReused is the rule's end at theta, evaluated for the score g
// alone (log-likelihood ll), with the previous point's information H and
// decrement prevDec standing in: ok when the decrement with H is small
// enough to end (see newtonLoopStop) and the last step, evaluated with
// second derivatives, rises and is confirmed by its own decrement (at most
// 1e-16 |LL|, the bound at which the ordinary rule ends at once, so that a
// poor stand-in cannot end the rule farther from the maximum than the
// ordinary last step would). taken: the step rose but was not confirmed
// (a stand-in far from the point's own information, or far from a
// maximum, such as along a direction in which the log-likelihood keeps
// rising); the iterations go on from there with the point's own.
func lastStepReused(ev evalFunc, theta []float64, ll float64, g, H []float64, prevDec, scale float64) (last reusedLast, taken, ok bool) {
	d, dec, pd := newtonDirection(H, g)
	if !pd || dec > 1e-10*scale || dec*dec > 1e-24*scale*prevDec {
		return last, false, false
	}
	next := addScaled(theta, d, 1)
	b := ev(next, 2)
	if b.bad || b.ll < ll-1e-12*scale {
		return last, false, false
	}
	last = reusedLast{evalOut: b, theta: next, dec: dec}
	if _, own, pd := newtonDirection(b.H, b.g); !pd || own > 1e-16*scale {
		return last, true, false
	}
	return last, true, true
}

func addScaled(x, d []float64, s float64) []float64 {
	out := make([]float64, len(x))
	for i := range x {
		out[i] = x[i] + s*d[i]
	}
	return out
}

// curvature is what newtonStep found of the information -H.
type curvature int

const (
	// definite: -H is positive definite; the step is Newton's.
	definite curvature = iota
	// semidefinite: -H is positive semidefinite to rounding and singular,
	// the score in its range (see semidefiniteStep); the step is Newton's
	// on that range.
	semidefinite
	// repaired: -H is indefinite (or the score has a slope along a
	// direction of zero curvature); the step is on the repaired spectrum.
	repaired
)

// rangeExhausted says whether Newton iterations end, unconverged, at a
// point whose information is singular (c semidefinite, the step Newton's on
// its range): when the decrement is at most 1e-16 |LL| (scale), the bound
// at which the rule ends at a positive definite information. The
// log-likelihood can then gain no more than rounding along the range (about
// half the decrement), and along the other directions it has neither slope
// nor curvature: where parameters diverge (separation), the iterations
// would otherwise go on, each step moving them further while the
// log-likelihood stays the same to rounding, until the iteration limit or
// until no step raises it. The fit is not converged: finish reads the
// singular information (no finite maximum, or a maximum not reached).
func rangeExhausted(c curvature, dec, scale float64) bool {
	return c == semidefinite && dec <= 1e-16*scale
}

// rangeExhaustedReason is the reason a Newton run ends by rangeExhausted.
const rangeExhaustedReason = "the information is singular and the log-likelihood rises no further along the directions it informs"

// newtonDirection solves (-H) d = g (see newtonStep). It returns d, the
// decrement g'd and whether -H was positive definite.
func newtonDirection(H, g []float64) ([]float64, float64, bool) {
	d, dec, c := newtonStep(H, g)
	return d, dec, c == definite
}

// newtonStep solves (-H) d = g on the unit-diagonal scale. When -H is
// positive semidefinite and singular, as where parameters diverge (the
// curvature along them vanishing with the score) or where a level's rows
// inform only some of the equations or a combination of them in a
// nonparallel fit (no curvature at all along the others), the step is
// Newton's on the range of -H (semidefiniteStep: a pivoted Cholesky
// factorization, the cost of one Cholesky factorization). When -H is
// indefinite it is repaired by reflecting and flooring the eigenvalues
// (a full eigendecomposition, many times the cost). It returns d, the
// decrement g'd and what it found of -H.
func newtonStep(H, g []float64) ([]float64, float64, curvature) {
	P := len(g)
	if P == 0 {
		return nil, 0, definite
	}
	// Work on the unit-diagonal scale: predictors in any units give the
	// same conditioning.
	s := make([]float64, P)
	for i := 0; i < P; i++ {
		v := math.Abs(H[i*P+i])
		if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
			v = 1
		}
		s[i] = 1 / math.Sqrt(v)
	}
	gs := make([]float64, P)
	for i := range gs {
		gs[i] = g[i] * s[i]
	}
	sc := mat.NewSymDense(P, nil)
	for i := 0; i < P; i++ {
		for j := i; j < P; j++ {
			sc.SetSym(i, j, -H[i*P+j]*s[i]*s[j])
		}
	}
	var ch mat.Cholesky
	if ch.Factorize(sc) {
		x := mat.NewVecDense(P, nil)
		if err := ch.SolveVecTo(x, mat.NewVecDense(P, slices.Clone(gs))); err == nil {
			d := make([]float64, P)
			for i := range d {
				d[i] = x.AtVec(i) * s[i]
			}
			return d, dot(g, d), definite
		}
	}
	if !eigenRepairOnly {
		if ds, ok := semidefiniteStep(sc, gs); ok {
			for i := range ds {
				ds[i] *= s[i]
			}
			return ds, dot(g, ds), semidefinite
		}
	}
	// Indefinite: modify the spectrum of the scaled matrix.
	var es mat.EigenSym
	if !es.Factorize(sc, true) {
		d := make([]float64, P)
		for i := range d {
			d[i] = 1e-3 * g[i] * s[i] * s[i]
		}
		return d, dot(g, d), repaired
	}
	vals := es.Values(nil)
	var vecs mat.Dense
	es.VectorsTo(&vecs)
	maxv := 0.0
	for _, v := range vals {
		maxv = math.Max(maxv, math.Abs(v))
	}
	floor := math.Max(1e-8*maxv, 1e-12)
	ds := make([]float64, P)
	for k, v := range vals {
		v = math.Max(math.Abs(v), floor)
		c := 0.0
		for i := 0; i < P; i++ {
			c += vecs.At(i, k) * gs[i]
		}
		c /= v
		for i := 0; i < P; i++ {
			ds[i] += c * vecs.At(i, k)
		}
	}
	d := make([]float64, P)
	for i := range d {
		d[i] = ds[i] * s[i]
	}
	return d, dot(g, d), repaired
}

// eigenRepairOnly, set by tests alone, makes newtonStep repair every
// information that is not positive definite by its eigenvalues (never
// semidefinite), as it did before semidefiniteStep: the rule then runs as
// it did then.
var eigenRepairOnly = false

// semidefiniteStep is the Newton step (scaled coordinates) on the range of
// the scaled information A (n x n, a unit diagonal except where the
// information is zero) for the scaled score gs, when A is positive
// semidefinite to rounding and gs lies in its range. The Cholesky
// factorization with complete pivoting stops at the numerical rank r, the
// first pivot at most n eps times the largest diagonal; then
//   - the Schur complement of the first r pivots must vanish to rounding
//     (every entry within 16 times that bound): a negative curvature would
//     show there, and the eigenvalue repair takes over;
//   - the score must have no slope along the directions of zero curvature:
//     its part in the other pivots beyond what the factor gives, r2, at
//     most 1e-10 + 1e-8 |gs| in norm; a step against the smallest
//     curvature the eigenvalue repair would allow there (1e-8 of the
//     largest eigenvalue, itself at least the unit diagonal) gains at most
//     |r2|^2 / 1e-8, which is then negligible (1e-12 when gs is small);
//
// and the step is Newton's on the first r pivots with the others held
// (their curvature and slope being zero to rounding).
func semidefiniteStep(A *mat.SymDense, gs []float64) ([]float64, bool) {
	n := len(gs)
	a := make([]float64, n*n)
	maxd := 0.0
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			a[i*n+j] = A.At(i, j)
		}
		maxd = math.Max(maxd, a[i*n+i])
	}
	if !(maxd > 0) || math.IsInf(maxd, 1) {
		return nil, false
	}
	piv := make([]int, n)
	tol := float64(n) * 0x1p-53 * maxd
	t, r, _ := lapack64.Pstrf(blas64.Symmetric{N: n, Stride: n, Data: a, Uplo: blas.Lower}, piv, tol, make([]float64, 2*n))
	if r == 0 {
		return nil, false
	}
	L := t.Data // L[i*n+k]: row i, column k of the factor, k < r
	for i := r; i < n; i++ {
		for j := r; j <= i; j++ {
			v := A.At(piv[i], piv[j])
			for k := 0; k < r; k++ {
				v -= L[i*n+k] * L[j*n+k]
			}
			if !(math.Abs(v) <= 16*tol) {
				return nil, false
			}
		}
	}
	y := make([]float64, r)
	for k := range y {
		y[k] = gs[piv[k]]
	}
	l := blas64.Triangular{N: r, Stride: n, Data: L, Uplo: blas.Lower, Diag: blas.NonUnit}
	blas64.Trsv(blas.NoTrans, l, blas64.Vector{N: r, Inc: 1, Data: y})
	blas64.Trsv(blas.Trans, l, blas64.Vector{N: r, Inc: 1, Data: y})
	rest := 0.0
	for i := r; i < n; i++ {
		v := gs[piv[i]]
		for k := 0; k < r; k++ {
			v -= A.At(piv[i], piv[k]) * y[k]
		}
		rest += v * v
	}
	if !(math.Sqrt(rest) <= 1e-10+1e-8*math.Sqrt(dot(gs, gs))) {
		return nil, false
	}
	d := make([]float64, n)
	for k := 0; k < r; k++ {
		d[piv[k]] = y[k]
	}
	return d, true
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

// maximumDecrement is the Newton decrement at which the iterations of a
// fit asked for its maximized log-likelihood alone (maximumLoop) stop: what
// is left to gain is then about half of it, well below the 1e-6 to which
// log-likelihoods are reported.
const maximumDecrement = 1e-7

// reuseInfoBelow is the Newton decrement, relative to |LL|, below which
// maximumLoop keeps the information it has rather than evaluating it at
// the next point: near the maximum the information changes little, and a
// step with the kept one still shrinks the decrement by about the square
// of that change.
const reuseInfoBelow = 1e-3

// maximumLoop is the Newton engine of a fit whose only product is its
// maximized log-likelihood (Options.maximumOnly): the iterations of
// newtonLoop, except that near the maximum (a decrement below
// reuseInfoBelow |LL|) the next point is evaluated for the score alone and
// the step taken with the information already at hand, as long as each
// such step shrinks the decrement a hundredfold; it converges when the
// decrement is at most maximumDecrement, the log-likelihood at that point
// being the maximum to within about half of it. A step that does not raise
// the log-likelihood hands the iterations to newtonLoop from the point
// reached. The state's second derivatives are those of the information
// used last (evaluated at an earlier point when kept).
func maximumLoop(theta0 []float64, maxIter int, ev evalFunc) newtonState {
	theta, a, st, ok := firstEvaluation(theta0, ev)
	if !ok {
		return st
	}
	ll, g, H := a.ll, a.g, a.H
	fresh := true // H was evaluated at theta
	prevDec := math.Inf(1)
	for it := 0; ; it++ {
		st.theta, st.ll, st.grad, st.hess, st.iters = theta, ll, g, H, it
		st.minLogP, st.minKnown = a.minLogP, a.minKnown
		d, dec, c := newtonStep(H, g)
		pd := c == definite
		st.decrement = dec
		if !pd {
			st.repaired++
		}
		if pd && dec <= maximumDecrement {
			st.converged, st.reason = true, "converged"
			return st
		}
		scale := math.Max(1, math.Abs(ll))
		if fresh && rangeExhausted(c, dec, scale) {
			st.reason = rangeExhaustedReason
			return st
		}
		if it >= maxIter {
			st.reason = "iteration limit reached"
			return st
		}
		if !fresh && (!pd || dec > 1e-2*prevDec) {
			// The kept information no longer gives fast steps: evaluate it here.
			if a = ev(theta, 2); a.bad {
				st.reason = "the log-likelihood could not be evaluated"
				return st
			}
			g, H, fresh = a.g, a.H, true
			continue
		}
		order := 1
		if !pd || dec > reuseInfoBelow*scale {
			order = 2
		}
		b := ev(addScaled(theta, d, 1), order)
		if b.bad || !(b.ll >= ll-1e-12*scale) {
			// Steps shorter than the full one: the ordinary iterations.
			rest := newtonLoop(theta, maxIter-it, ev)
			rest.iters += it
			return rest
		}
		if order == 2 {
			H = b.H
		} else {
			H = secantUpdate(H, d, g, b.g)
		}
		theta, ll, g, a = addScaled(theta, d, 1), b.ll, b.g, b
		fresh, prevDec = order == 2, dec
	}
}

// secantUpdate is the second derivatives H updated (BFGS, on the
// information -H) so that they map the step s to the change of the score
// from g0 to g1; H itself when the change does not keep the information
// positive definite.
func secantUpdate(H, s, g0, g1 []float64) []float64 {
	P := len(s)
	y := make([]float64, P) // the information's change along s: -(g1 - g0)
	for i := range y {
		y[i] = g0[i] - g1[i]
	}
	Bs := make([]float64, P) // -H s
	for i := 0; i < P; i++ {
		for j := 0; j < P; j++ {
			Bs[i] -= H[i*P+j] * s[j]
		}
	}
	ys, sBs := dot(y, s), dot(s, Bs)
	if !(ys > 0) || !(sBs > 0) {
		return H
	}
	out := make([]float64, P*P)
	for i := 0; i < P; i++ {
		for j := 0; j < P; j++ {
			out[i*P+j] = H[i*P+j] - y[i]*y[j]/ys + Bs[i]*Bs[j]/sBs
		}
	}
	return out
}
