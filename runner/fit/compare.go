package fit

import (
	"math"

	"ordplan/internal/words"
)

// Comparison says how categories are compared: it turns the J-1 link
// probabilities F(L_m) into J category probabilities.
type Comparison int

// The three comparisons of the typology.
const (
	Cumulative Comparison = iota // F(L_m) = P(y <= m)
	Stage                        // forward: F(L_m) = P(y = m | y >= m)
	Adjacent                     // F(L_m) = P(y = m | y in {m, m+1})

	// stackedBinary is not a model of y: it is the sum over m of the binary
	// log-likelihoods of 1[y <= m], used by the Wolfe-Gould test (parallel
	// slopes: one stacked binary fit; free slopes: J-1 separate fits).
	stackedBinary
)

// ComparisonWords is the vocabulary of comparisons (a plan's
// "approaches"), in the order of the constants; stackedBinary has no word.
var ComparisonWords = words.New[Comparison]("approach", "cumulative", "stage", "adjacent")

func (c Comparison) String() string { return ComparisonWords.Name(c) }

// MarshalText writes the comparison's word.
func (c Comparison) MarshalText() ([]byte, error) { return ComparisonWords.Text(c) }

// UnmarshalText reads a comparison's word.
func (c *Comparison) UnmarshalText(b []byte) (err error) {
	*c, err = ComparisonWords.Parse(string(b))
	return err
}

// ParseComparison turns a word into a Comparison.
func ParseComparison(s string) (Comparison, error) { return ComparisonWords.Parse(s) }

// kernel evaluates one row: log P(y=c | L) and its derivatives in L.
// Equations and categories are 0-based here: equation m (0..J-2) is the
// boundary between categories m and m+1.
type kernel struct {
	cmp      Comparison
	backward bool // stage only: F(L_m) = P(y <= m | y <= m+1)
	link     Link
	nEq      int // J-1
}

// positive reports whether no category probability can be negative
// whatever L: the stage and adjacent probabilities are exponentials, and
// a binary cumulative model has F(L) and 1 - F(L). (Cumulative models of
// more categories have negative ones when L is not increasing.)
func (k *kernel) positive() bool {
	return k.cmp != Cumulative || k.nEq == 1
}

// pairNeeded reports whether d2 log P / dL_m dL_l can be non-zero (m <= l).
func (k *kernel) pairNeeded(m, l int) bool {
	switch k.cmp {
	case Cumulative:
		return l-m <= 1
	case Stage, stackedBinary:
		return m == l
	}
	return true
}

// eval returns log P(y=c|L); when g != nil it fills the gradient in L, and
// when h != nil the dense (J-1)x(J-1) Hessian in L (both must be zeroed by
// the kernel). ok is false when the probability is not positive.
func (k *kernel) eval(L []float64, c int, g, h []float64) (float64, bool) {
	q := k.nEq
	if g != nil {
		for i := range g[:q] {
			g[i] = 0
		}
	}
	if h != nil {
		for i := range h[:q*q] {
			h[i] = 0
		}
	}
	switch k.cmp {
	case Cumulative:
		return k.cumulative(L, c, g, h)
	case Stage:
		if k.backward {
			return k.stageBackward(L, c, g, h)
		}
		return k.stageForward(L, c, g, h)
	case stackedBinary:
		return k.stacked(L, c, g, h)
	default:
		return k.adjacent(L, c, g, h)
	}
}

func (k *kernel) put(g, h []float64, m int, t tail) {
	if g != nil {
		g[m] += t.d1
	}
	if h != nil {
		h[m*k.nEq+m] += t.d2
	}
}

func (k *kernel) cumulative(L []float64, c int, g, h []float64) (float64, bool) {
	q := k.nEq
	switch {
	case c == 0:
		t := k.link.lower(L[0])
		k.put(g, h, 0, t)
		return t.v, !math.IsInf(t.v, -1) && !math.IsNaN(t.v)
	case c == q:
		t := k.link.upper(L[q-1])
		k.put(g, h, q-1, t)
		return t.v, !math.IsInf(t.v, -1) && !math.IsNaN(t.v)
	}
	b, a := L[c], L[c-1]
	if !(b > a) {
		return math.Inf(-1), false
	}
	var lp, lfa, qa, lfb, qb float64
	if k.link == Logit {
		// Two exponentials and two logarithms serve the probability and
		// both densities (the same values as the general path below).
		pa, pb := newLogitPoint(a), newLogitPoint(b)
		lp = logitDiff(pa, pb)
		lfa, qa = pa.logDensity()
		lfb, qb = pb.logDensity()
	} else {
		lp = logDiffCDF(k.link, a, b)
		if !math.IsInf(lp, -1) && !math.IsNaN(lp) && (g != nil || h != nil) {
			lfb, qb = k.link.logDensity(b)
			lfa, qa = k.link.logDensity(a)
		}
	}
	if math.IsInf(lp, -1) || math.IsNaN(lp) {
		return lp, false
	}
	if g == nil && h == nil {
		return lp, true
	}
	rb := math.Exp(lfb - lp)
	ra := math.Exp(lfa - lp)
	if g != nil {
		g[c] = rb
		g[c-1] = -ra
	}
	if h != nil {
		h[c*q+c] = qb*rb - rb*rb
		h[(c-1)*q+c-1] = -qa*ra - ra*ra
		h[c*q+c-1] = ra * rb
		h[(c-1)*q+c] = ra * rb
	}
	return lp, true
}

// logDiffCDF is log(F(b) - F(a)) for b > a, from whichever tail keeps the
// digits.
func logDiffCDF(l Link, a, b float64) float64 {
	if l.cdf(0.5*(a+b)) <= 0.5 {
		la, lb := l.lower(a).v, l.lower(b).v
		return lb + log1mexp(la-lb)
	}
	ua, ub := l.upper(a).v, l.upper(b).v
	return ua + log1mexp(ub-ua)
}

// log1mexp is log(1 - e^x) for x <= 0.
func log1mexp(x float64) float64 {
	if x > -math.Ln2 {
		return math.Log(-math.Expm1(x))
	}
	return math.Log1p(-math.Exp(x))
}

func (k *kernel) stageForward(L []float64, c int, g, h []float64) (float64, bool) {
	lp := 0.0
	for m := 0; m < c; m++ {
		t := k.link.upper(L[m])
		lp += t.v
		k.put(g, h, m, t)
	}
	if c < k.nEq {
		t := k.link.lower(L[c])
		lp += t.v
		k.put(g, h, c, t)
	}
	return lp, !math.IsInf(lp, -1) && !math.IsNaN(lp)
}

func (k *kernel) stacked(L []float64, c int, g, h []float64) (float64, bool) {
	lp := 0.0
	for m := 0; m < k.nEq; m++ {
		var t tail
		if c <= m {
			t = k.link.lower(L[m])
		} else {
			t = k.link.upper(L[m])
		}
		lp += t.v
		k.put(g, h, m, t)
	}
	return lp, !math.IsInf(lp, -1) && !math.IsNaN(lp)
}

func (k *kernel) stageBackward(L []float64, c int, g, h []float64) (float64, bool) {
	lp := 0.0
	if c > 0 {
		t := k.link.upper(L[c-1])
		lp += t.v
		k.put(g, h, c-1, t)
	}
	for m := c; m < k.nEq; m++ {
		t := k.link.lower(L[m])
		lp += t.v
		k.put(g, h, m, t)
	}
	return lp, !math.IsInf(lp, -1) && !math.IsNaN(lp)
}

// adjacent: psi_m = log F(L_m) - log(1-F(L_m)) = log P(m)/P(m+1);
// log P(c) = s_c - logsumexp(s), s_j = sum_{m>=j} psi_m.
func (k *kernel) adjacent(L []float64, c int, g, h []float64) (float64, bool) {
	q := k.nEq
	var psi, d1, d2 [64]float64
	var ps, dps, d2ps []float64
	if q <= len(psi) {
		ps, dps, d2ps = psi[:q], d1[:q], d2[:q]
	} else {
		ps, dps, d2ps = make([]float64, q), make([]float64, q), make([]float64, q)
	}
	for m := 0; m < q; m++ {
		if k.link == Logit {
			ps[m], dps[m], d2ps[m] = L[m], 1, 0
			continue
		}
		lo, up := k.link.lower(L[m]), k.link.upper(L[m])
		// Far in a tail one of the logs overflows: keep psi finite (the
		// probabilities are then exactly 0 on one side) so that sums of psi
		// never meet Inf - Inf.
		ps[m], dps[m], d2ps[m] = clampHuge(lo.v-up.v), clampHuge(lo.d1-up.d1), clampHuge(lo.d2-up.d2)
	}
	var sbuf [65]float64
	var s []float64
	if q+1 <= len(sbuf) {
		s = sbuf[:q+1]
	} else {
		s = make([]float64, q+1)
	}
	s[q] = 0
	top := q
	for j := q - 1; j >= 0; j-- {
		s[j] = s[j+1] + ps[j]
		if s[j] > s[top] {
			top = j
		}
	}
	// Re-sum relative to the largest term so that huge psi values do not
	// cost digits: t_j = s_j - s_top from the psi between them.
	s[top] = 0
	for j := top - 1; j >= 0; j-- {
		s[j] = s[j+1] + ps[j]
	}
	acc0 := 0.0
	for j := top + 1; j <= q; j++ {
		acc0 -= ps[j-1]
		s[j] = acc0
	}
	sum := 0.0
	for j := 0; j <= q; j++ {
		sum += math.Exp(s[j])
	}
	lse := math.Log(sum)
	lp := s[c] - lse
	if math.IsNaN(lp) || math.IsInf(lp, 0) {
		return math.Inf(-1), false
	}
	if g == nil && h == nil {
		return lp, true
	}
	// C_m = P(y <= m), U_m = P(y > m).
	var cbuf, ubuf [64]float64
	var C, U []float64
	if q <= len(cbuf) {
		C, U = cbuf[:q], ubuf[:q]
	} else {
		C, U = make([]float64, q), make([]float64, q)
	}
	// P_j = exp(s_j - lse), one exponential per category.
	var pbuf [65]float64
	var P []float64
	if q+1 <= len(pbuf) {
		P = pbuf[:q+1]
	} else {
		P = make([]float64, q+1)
	}
	for j := range P {
		P[j] = math.Exp(s[j] - lse)
	}
	acc := 0.0
	for m := 0; m < q; m++ {
		acc += P[m]
		C[m] = acc
	}
	acc = 0
	for m := q - 1; m >= 0; m-- {
		acc += P[m+1]
		U[m] = acc
	}
	for m := 0; m < q; m++ {
		var dpsi float64
		if m >= c {
			dpsi = U[m] // 1 - C_m
		} else {
			dpsi = -C[m]
		}
		if g != nil {
			g[m] = mulZero(dps[m], dpsi)
		}
		if h != nil {
			h[m*q+m] += mulZero(d2ps[m], dpsi)
			for l := m; l < q; l++ {
				v := -mulZero(mulZero(C[m]*U[l], dps[m]), dps[l]) // -(C_min - C_m C_l) = -C_m (1 - C_l) for m <= l
				h[m*q+l] += v
				if l != m {
					h[l*q+m] += v
				}
			}
		}
	}
	return lp, true
}

// clampHuge keeps x within +-1e300.
func clampHuge(x float64) float64 {
	return math.Max(-1e300, math.Min(1e300, x))
}

// mulZero is a*b with 0 times anything (even a huge value) equal to 0: a
// derivative weighted by a probability that is exactly 0 contributes
// nothing.
func mulZero(a, b float64) float64 {
	if a == 0 || b == 0 {
		return 0
	}
	return a * b
}

// CategoryProbabilities fills p (length J) with the category probabilities
// of comparison c (backward: the stage comparison from the top category)
// and link l at the J-1 linear predictors L, as a fit computes them.
func CategoryProbabilities(c Comparison, backward bool, l Link, L, p []float64) {
	k := kernel{cmp: c, backward: backward && c == Stage, link: l, nEq: len(L)}
	k.probs(L, p)
}

// probs fills p (length J) with the category probabilities at L. For
// cumulative models they can be negative when the L_m are not increasing.
func (k *kernel) probs(L []float64, p []float64) {
	q := k.nEq
	if k.cmp == Cumulative {
		prev := 0.0
		for m := 0; m < q; m++ {
			F := k.link.cdf(L[m])
			p[m] = F - prev
			prev = F
		}
		p[q] = 1 - prev
		if q > 0 {
			p[q] = math.Exp(k.link.upper(L[q-1]).v)
		}
		return
	}
	for c := 0; c <= q; c++ {
		lp, ok := k.eval(L, c, nil, nil)
		if ok {
			p[c] = math.Exp(lp)
		} else {
			p[c] = 0
		}
	}
}

// fisher fills info (dense (J-1)^2) with the expected information of one
// observation in L: sum_c P_c g_c g_c'. g is scratch of length J-1.
func (k *kernel) fisher(L []float64, info, g, p []float64) {
	q := k.nEq
	for i := range info[:q*q] {
		info[i] = 0
	}
	k.probs(L, p)
	for c := 0; c <= q; c++ {
		if !(p[c] > 0) {
			continue
		}
		if _, ok := k.eval(L, c, g, nil); !ok {
			continue
		}
		for m := 0; m < q; m++ {
			if g[m] == 0 {
				continue
			}
			for l := 0; l < q; l++ {
				info[m*q+l] += p[c] * g[m] * g[l]
			}
		}
	}
}
