package fit

import (
	"math"

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
}

// newton maximizes the log-likelihood from theta0 with Newton-Raphson (or
// Fisher scoring), step halving and repair of an indefinite information.
func (p *problem) newton(theta0 []float64, maxIter int, scoring bool) newtonState {
	theta := append([]float64(nil), theta0...)
	st := newtonState{}
	a := p.evaluate(theta, 2, scoring)
	if a.bad || math.IsNaN(a.ll) || math.IsInf(a.ll, 0) {
		st.theta, st.ll, st.reason = theta, math.Inf(-1), "the starting values give a zero probability to an observed category"
		return st
	}
	ll := a.ll
	prevSmall := false
	for it := 0; ; it++ {
		g := p.gradient(theta, a)
		H := p.hessian(theta, a, !scoring)
		st.theta, st.ll, st.grad, st.hess, st.iters = theta, ll, g, H, it
		d, dec, pd := newtonDirection(H, g)
		if !pd {
			st.repaired++
		}
		st.decrement = dec
		tol := 1e-16 * math.Max(1, math.Abs(ll))
		if pd && (dec <= tol || (prevSmall && dec <= 1e-10*math.Max(1, math.Abs(ll)))) {
			// Take the last (tiny) step: it squares the remaining error.
			next := addScaled(theta, d, 1)
			b := p.evaluate(next, 2, scoring)
			if !b.bad && b.ll >= ll-1e-12*math.Max(1, math.Abs(ll)) {
				theta, a, ll = next, b, b.ll
				st.theta, st.ll = theta, ll
				st.grad = p.gradient(theta, a)
				st.hess = p.hessian(theta, a, !scoring)
			}
			st.converged = true
			st.reason = "converged"
			return st
		}
		prevSmall = pd && dec <= 1e-6*math.Max(1, math.Abs(ll))
		if it >= maxIter {
			st.reason = "iteration limit reached"
			return st
		}
		// Step halving: accept the first step that raises the log-likelihood
		// and keeps every observed category's probability positive. The
		// full step is evaluated with derivatives, since it is nearly always
		// accepted and the next iteration needs them at that point.
		step := 1.0
		var next *acc
		for h := 0; h < 60; h++ {
			cand := addScaled(theta, d, step)
			order := 0
			if h == 0 {
				order = 2
			}
			b := p.evaluate(cand, order, scoring)
			if !b.bad && !math.IsNaN(b.ll) && (b.ll > ll || (dec < 1e-6*math.Max(1, math.Abs(ll)) && b.ll >= ll-1e-12*math.Max(1, math.Abs(ll)))) {
				theta = cand
				next = b
				break
			}
			step /= 2
		}
		if next == nil {
			st.reason = "no step raises the log-likelihood"
			// The point may still be an optimum to working precision.
			if pd && dec <= 1e-8*math.Max(1, math.Abs(ll)) {
				st.converged = true
				st.reason = "converged (log-likelihood flat to working precision)"
			}
			return st
		}
		if next.order < 2 {
			next = p.evaluate(theta, 2, scoring)
		}
		a = next
		ll = a.ll
	}
}

func addScaled(x, d []float64, s float64) []float64 {
	out := make([]float64, len(x))
	for i := range x {
		out[i] = x[i] + s*d[i]
	}
	return out
}

// newtonDirection solves (-H) d = g. When -H is not positive definite it is
// repaired on the unit-diagonal scale by reflecting and flooring the
// eigenvalues. It returns d, the decrement g'd and whether -H was positive
// definite.
func newtonDirection(H, g []float64) ([]float64, float64, bool) {
	P := len(g)
	if P == 0 {
		return nil, 0, true
	}
	neg := mat.NewSymDense(P, nil)
	for i := 0; i < P; i++ {
		for j := i; j < P; j++ {
			neg.SetSym(i, j, -H[i*P+j])
		}
	}
	var ch mat.Cholesky
	if ch.Factorize(neg) {
		x := mat.NewVecDense(P, nil)
		if err := ch.SolveVecTo(x, mat.NewVecDense(P, append([]float64(nil), g...))); err == nil {
			d := x.RawVector().Data
			return d, dot(g, d), true
		}
	}
	// Scale to unit diagonal, then modify the spectrum.
	s := make([]float64, P)
	for i := 0; i < P; i++ {
		v := math.Abs(neg.At(i, i))
		if v == 0 || math.IsNaN(v) {
			v = 1
		}
		s[i] = 1 / math.Sqrt(v)
	}
	sc := mat.NewSymDense(P, nil)
	for i := 0; i < P; i++ {
		for j := i; j < P; j++ {
			sc.SetSym(i, j, neg.At(i, j)*s[i]*s[j])
		}
	}
	var es mat.EigenSym
	if !es.Factorize(sc, true) {
		d := make([]float64, P)
		for i := range d {
			d[i] = 1e-3 * g[i] * s[i] * s[i]
		}
		return d, dot(g, d), false
	}
	vals := es.Values(nil)
	var vecs mat.Dense
	es.VectorsTo(&vecs)
	maxv := 0.0
	for _, v := range vals {
		maxv = math.Max(maxv, math.Abs(v))
	}
	floor := math.Max(1e-8*maxv, 1e-12)
	gs := make([]float64, P)
	for i := range gs {
		gs[i] = g[i] * s[i]
	}
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
	return d, dot(g, d), false
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}
