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
	// at hat).
	peak float64
	// ratio is R, the bound of the rows' third derivatives by their second
	// that outOfReach's allowance rests on (thirdOverSecond); 0 when the
	// model has none, and then no start is abandoned on the approximation.
	ratio float64
	// shape is the largest standardized third absolute moment of the
	// predictors, at least the normal's (largestShape).
	shape float64
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

// reachAllowance is the constant C of the allowance for the
// approximation's error, C shape Q sqrt(Q / W) (outOfReach), over R:
// C = sqrt(2) R / 3.
var reachAllowance = math.Sqrt2 / 3

// thirdOverSecond is R, a bound |l_i^(3)| <= R v_i of a row's third
// derivative along any change of its linear predictors by its second
// (v_i, minus the second derivative), for model m with J categories; 0
// when there is none.
//   - Logit, stage comparison (and a binary outcome under any comparison):
//     a row is a sum of binary logit terms, each with its own linear
//     predictor, and |p(1-p)(1-2p)| <= p(1-p): R = 1.
//   - Logit, adjacent comparison: a row's log-likelihood is a
//     multinomial logit in the category scores (0 to q = J - 1 times the
//     change), whose third derivative is the scores' third cumulant, at
//     most q times their variance (a variable within a range of q):
//     R = q. The ratio reaches about q when the fitted probability sits
//     at the two end categories.
//   - Logit, cumulative comparison with three or more categories: a
//     middle category's log(F(a) - F(b)) behaves as log(a - b) when its
//     two boundaries nearly meet, and the ratio grows as 4 / (a - b)
//     without bound: none.
//   - Other links: the probit's ratio grows like |eta|, the cloglog's and
//     loglog's exponentially; the Cauchy's log-likelihood is not concave:
//     none.
func thirdOverSecond(m Model, J int) float64 {
	switch {
	case m.Link != Logit:
		return 0
	case J == 2 || m.Comparison == Stage:
		return 1
	case m.Comparison == Adjacent:
		return float64(J - 1)
	}
	return 0
}

// normalShape is E|z|^3 of a standard normal z, 2 sqrt(2 / pi).
var normalShape = 2 * math.Sqrt(2/math.Pi)

// largestShape is the largest standardized third absolute moment
// m3 / sd^3 of the predictors (m3 from spreadOf), at least normalShape.
func largestShape(m3, sd []float64) float64 {
	s := normalShape
	for k, v := range m3 {
		if sd[k] > 0 {
			s = math.Max(s, v/(sd[k]*sd[k]*sd[k]))
		}
	}
	return s
}

// curvature is W, the smallest information of a cutpoint of the partial
// model: the total weight of the rows times their mean curvature
// (-d2 l_i / d eta_j^2) in the equation that has the least.
func (s *surrogate) curvature() float64 {
	Pn := len(s.np.params)
	w := math.Inf(1)
	for _, c := range s.np.cut {
		w = math.Min(w, s.info[c*Pn+c])
	}
	return w
}

// outOfReach reports whether a start whose maximum of the approximation is
// sur cannot reach the best log-likelihood best, and by how much the
// approximation puts it below (Q less the allowance, beyond the gap
// between ll_partial and best).
//
// Why the allowance: the constrained model's log-likelihood is the
// partial model's at beta = h(theta), l(beta) = sum_i w_i l_i(eta_i) with
// eta_i = x_i' beta, and the approximation is its expansion to second
// order at the partial maximum, ll_partial - Q, Q = 1/2 sum_i w_i v_i d_i^2
// (v_i = -l_i^(2), minus the second derivative; d_i the change of row i's
// linear predictor). The error is led by the cubic term
// E = 1/6 sum_i w_i l_i^(3) d_i^3. The logit's derivatives obey
// |l_i^(3)| <= R v_i with R = 1 for stage models and binary outcomes and
// R = q for adjacent ones; cumulative models with three or more
// categories have no such bound (thirdOverSecond), and abandon no start
// on the approximation alone. So |E| <= R/6 sum_i w_i v_i |d_i|^3. The
// change is carried by the predictors, d_i ~ a z_i with z a standardized
// predictor; with the curvature v_i taken as unrelated to z (rows with
// extreme z have extreme fitted probabilities and less curvature, so this
// overstates E), sum_i w_i v_i |d_i|^3 = W |a|^3 shape and 2Q = W a^2, with
// W = sum_i w_i v_i and shape = E|z|^3. Hence
//
//	|E| <= C shape Q sqrt(Q / W), C = sqrt(2) R / 3.
//
// W / shape^2 is the effective size of the data for the approximation: W
// is the smallest cutpoint information (the total weight times the mean
// curvature in the weakest equation: a stage reached by few rows, an
// extreme category), and a 0/1 predictor with a share p of ones has shape
// (1 - 2p + 2p^2) / sqrt(p(1-p)), about 1/sqrt(p), so that W / shape^2 is
// about p W, the information of the rows that carry it. Heavy tails raise
// shape the same way. shape is the largest over the predictors, at least
// the normal's (a change along several predictors is closer to normal
// than the most even of them).
//
// The start, run on the data, climbs from its maximum of the approximation
// to a maximum of the log-likelihood; while it stays where the
// approximation rises towards sur (Q >= Q(sur)), its value is at most
// ll_partial - Q + C shape Q sqrt(Q / W), which falls as Q grows while the
// allowance is below 2Q/3. A start is out of reach when ll_partial - Q(sur)
// plus the allowance is below the best, and only while the allowance is at
// most Q/2 (beyond, the cubic term no longer leads). Models without a
// bound R abandon no start on the approximation alone
// (TestOutOfReachOnlyLogit: probit starts that an allowance read off logit
// fits put far below the best reach it). TestOutOfReachStartsEndBelow
// (references, ridge data) and TestOutOfReachAdversarial (rare 0/1 and
// heavy-tailed constrained predictors, several maxima, weights, data just
// above the screening threshold) run every such start to its end.
func (s *surrogate) outOfReach(sur []float64, best float64) (float64, bool) {
	W := s.curvature()
	if math.IsInf(best, -1) || !(s.ratio > 0) || !(W > 0) || math.IsInf(W, 1) {
		return 0, false
	}
	Q, _ := s.value(sur)
	allow := reachAllowance * s.ratio * s.shape * Q * math.Sqrt(Q/W)
	if !(allow <= Q/2) {
		return 0, false
	}
	short := Q - allow - (s.peak - best) - sameLL
	return short, short > 0
}
