package fit

import (
	"math"
)

// surrogate is the quadratic approximation of the log-likelihood around the
// unconstrained partial fit, as a function of the constrained parameters:
// ll(theta) ~ ll_partial - Q(theta), Q = 1/2 r' I r, r = h(theta) - hat.
// Finding its maxima needs no pass over the data.
type surrogate struct {
	rankMap
	hat  []float64
	info []float64
	// peak is the partial fit's log-likelihood (the approximation's value
	// at hat), weight the total weight of the rows.
	peak, weight float64
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

// hessian is the matrix of second derivatives of -Q at th, the
// approximation's stand-in for the log-likelihood's.
func (s *surrogate) hessian(th []float64) []float64 {
	_, Ir := s.value(th)
	for i := range Ir {
		Ir[i] = -Ir[i]
	}
	negInfo := make([]float64, len(s.info))
	for i, v := range s.info {
		negInfo[i] = -v
	}
	_, H := s.chain(th, Ir, negInfo)
	return H
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

// reachAllowance: the approximation's value ll_partial - Q at a point
// where Q is large is trusted only to within reachAllowance Q sqrt(Q / N)
// (N the total weight of the rows; see outOfReach).
const reachAllowance = 4

// outOfReach reports whether a start whose maximum of the approximation is
// sur cannot reach the best log-likelihood best, and by how much the
// approximation puts it below (Q less the allowance, beyond the gap
// between ll_partial and best). The approximation's value there, ll_partial
// - Q, is in error by the cubic and higher terms of the log-likelihood
// around the partial fit, about Q sqrt(Q / N) times a constant of the
// data (Q / N is the squared change of the linear predictors per unit of
// weight): the error at sur, and the climb that the data's own gradient
// there still allows, were 0.1 to 1.1 of Q sqrt(Q / N) on the starts of
// the benchmark's grid at n = 1e6 that the data showed to be near lower
// maxima (the ridge g -> 0, |phi| -> inf, 200 to 5400 below the best). A
// start is out of reach when even reachAllowance times that error leaves
// its value below the best (never once Q exceeds N / reachAllowance^2).
func (s *surrogate) outOfReach(sur []float64, best float64) (float64, bool) {
	if math.IsInf(best, -1) || !(s.weight > 0) {
		return 0, false
	}
	Q, _ := s.value(sur)
	short := Q - reachAllowance*Q*math.Sqrt(Q/s.weight) - (s.peak - best) - sameLL
	return short, short > 0
}
