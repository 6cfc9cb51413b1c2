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
	case Stage, stackedBinary:
		lo, hi := k.tailRange(c)
		return k.tails(L, c, lo, hi, g, h)
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
	m, ok := k.between(L[c-1], L[c], g != nil || h != nil)
	if !ok || (g == nil && h == nil) {
		return m.lp, ok
	}
	if g != nil {
		g[c] = m.rb
		g[c-1] = -m.ra
	}
	if h != nil {
		h[c*q+c] = m.hbb
		h[(c-1)*q+c-1] = m.haa
		h[c*q+c-1] = m.ra * m.rb
		h[(c-1)*q+c] = m.ra * m.rb
	}
	return m.lp, true
}

// middle is log P of a middle category of a cumulative model, P =
// F(b) - F(a) with b > a the category's upper and lower boundaries, and
// what its derivatives take: ra = f(a)/P, rb = f(b)/P (d log P/db = rb,
// d log P/da = -ra, d2 log P/da db = ra rb), hbb = d2 log P/db2 and
// haa = d2 log P/da2.
type middle struct{ lp, ra, rb, haa, hbb float64 }

// setSecond sets the second derivatives from qa, qb = f'/f at a and b:
// hbb = qb rb - rb^2, haa = -qa ra - ra^2. f'/f is infinite only where f
// itself is 0 in floating point (cloglog beyond z = 709.78, loglog below
// its negative; ra or rb 0), and there f' = f q vanishes too: the term is
// 0, where the product would be NaN.
func (m *middle) setSecond(qa, qb float64) {
	if math.IsInf(qa, 0) && m.ra == 0 {
		qa = 0
	}
	if math.IsInf(qb, 0) && m.rb == 0 {
		qb = 0
	}
	m.hbb = qb*m.rb - m.rb*m.rb
	m.haa = -qa*m.ra - m.ra*m.ra
}

// between evaluates the middle category between boundaries a < b (with
// what the derivatives take when derivs is set); ok is false when b <= a
// or P is not positive.
func (k *kernel) between(a, b float64, derivs bool) (m middle, ok bool) {
	if !(b > a) {
		return middle{lp: math.Inf(-1)}, false
	}
	if k.link == Logit {
		// Two exponentials and one logarithm serve the probability and its
		// derivatives (logitMiddle), the log-space path only far in the
		// tails.
		return logitMiddle(newLogitPoint(a), newLogitPoint(b))
	}
	if derivs && (k.link == Probit || k.link == Cauchy) {
		if m, ok, done := tableBetween(k.link, a, b); done {
			return m, ok
		}
	}
	if k.link == Cloglog || k.link == Loglog {
		if m, done := cloglogBetween(k.link, a, b, derivs); done {
			return m, true
		}
	}
	m.lp = logDiffCDF(k.link, a, b)
	if math.IsInf(m.lp, -1) || math.IsNaN(m.lp) {
		return m, false
	}
	if !derivs {
		return m, true
	}
	lfb, qb := k.link.logDensity(b)
	lfa, qa := k.link.logDensity(a)
	m.rb, m.ra = fastExp(lfb-m.lp), fastExp(lfa-m.lp)
	m.setSecond(qa, qb)
	return m, true
}

// logDiffCDF is log(F(b) - F(a)) for b > a, from whichever tail keeps the
// digits: the lower tails while the midpoint is at most the link's median
// (F there at most 1/2), else the upper ones; the tails' values alone
// (logTail).
func logDiffCDF(l Link, a, b float64) float64 {
	up := 0.5*(a+b) > l.median()
	ta, tb := l.logTail(a, up), l.logTail(b, up)
	if up {
		return ta + log1mexp(tb-ta)
	}
	return tb + log1mexp(ta-tb)
}

// log1mexp is log(1 - e^x) for x <= 0, e^x - 1 and e^x from one
// expm1Exp (log1mexpOf).
func log1mexp(x float64) float64 {
	m, e := expm1Exp(x)
	return log1mexpOf(x, m, e)
}

// log1mexpOf is log(1 - e^x) for x <= 0 from m = e^x - 1 and e = e^x:
// the logarithm of -m above -log 2, where 1 - e^x is small; beyond, log1p
// of -e, at least -1/2 (fastLog1p's range).
func log1mexpOf(x, m, e float64) float64 {
	if x > -math.Ln2 {
		return fastLog(-m)
	}
	return fastLog1p(-e)
}

// tailRange is the equations lo..hi-1 whose log-tails make log P(y = c)
// of a stage or stacked kernel: stage forward the equations up to c,
// backward from c - 1, stacked all.
func (k *kernel) tailRange(c int) (lo, hi int) {
	switch {
	case k.cmp == stackedBinary:
		return 0, k.nEq
	case k.backward:
		return max(c-1, 0), k.nEq
	}
	return 0, min(c+1, k.nEq)
}

// tails is a kernel whose log-probability is a sum of log-tails of the
// equations lo..hi-1: log(1 - F(L_m)) for m < c, log F(L_m) for m >= c
// (stage forward: the equations up to c; backward: from c - 1; stacked:
// all). Under the logit link the logarithms are shared: one exponential
// per equation and one log1p per row (logitTails).
func (k *kernel) tails(L []float64, c, lo, hi int, g, h []float64) (float64, bool) {
	lp := 0.0
	if k.link == Logit {
		var s logitTails
		for m := lo; m < hi; m++ {
			p := newLogitPoint(L[m])
			s.add(p, m < c)
			if m < c {
				k.put(g, h, m, tail{0, -p.F, -p.F * p.Fc})
			} else {
				k.put(g, h, m, tail{0, p.Fc, -p.F * p.Fc})
			}
		}
		lp = s.sum()
	} else {
		for m := lo; m < hi; m++ {
			var t tail
			if m < c {
				t = k.link.upper(L[m])
			} else {
				t = k.link.lower(L[m])
			}
			lp += t.v
			k.put(g, h, m, t)
		}
	}
	return lp, !math.IsInf(lp, -1) && !math.IsNaN(lp)
}

// adjacent: psi_m = log F(L_m) - log(1-F(L_m)) = log P(m)/P(m+1);
// log P(c) = s_c - logsumexp(s), s_j = sum_{m>=j} psi_m.
func (k *kernel) adjacent(L []float64, c int, g, h []float64) (float64, bool) {
	q := k.nEq
	if k.link == Logit && q < 16 {
		return adjacentLogit(L, c, g, h)
	}
	// psi, its two derivatives, s and P (q+1 each): one buffer.
	var buf [5*16 + 2]float64
	var b []float64
	if q <= 16 {
		b = buf[:5*q+2]
	} else {
		b = make([]float64, 5*q+2)
	}
	ps, dps, d2ps := b[:q], b[q:2*q], b[2*q:3*q]
	s, P := b[3*q:4*q+1], b[4*q+1:5*q+2]
	for m := 0; m < q; m++ {
		if k.link == Logit {
			ps[m], dps[m], d2ps[m] = L[m], 1, 0
			continue
		}
		ps[m], dps[m], d2ps[m] = k.link.psi(L[m])
	}
	lp, ok, C, U := adjacentProbs(ps, c, s, P, g != nil || h != nil)
	if !ok || (g == nil && h == nil) {
		return lp, ok
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

// psi is an adjacent comparison's psi = log F(z) - log(1 - F(z)) and its
// first and second derivatives under a link other than the logit
// (Link.ratio, else the two tails).
func (l Link) psi(z float64) (v, d1, d2 float64) {
	if v, d1, d2, ok := l.ratio(z); ok {
		return v, d1, d2
	}
	lo, up := l.lower(z), l.upper(z)
	// Far in a tail one of the logs overflows: keep psi finite (the
	// probabilities are then exactly 0 on one side) so that sums of psi
	// never meet Inf - Inf.
	return clampHuge(lo.v - up.v), clampHuge(lo.d1 - up.d1), clampHuge(lo.d2 - up.d2)
}

// adjacentProbs returns log P(y = c) of the adjacent comparison from psi
// (q), using s and P (q+1 each) as buffers; with derivs, also
// C_m = P(y <= m) and U_m = P(y > m) (q each, held in s and P). The
// category scores s_j = sum_{m>=j} psi_m are summed again from the largest
// so that huge psi values do not cost digits (t_j = s_j - s_top from the
// psi between them); then one exponential per category (e^(t_j) at most
// 1, their sum at least 1) and one logarithm. ok is false when log P is
// not finite.
func adjacentProbs(ps []float64, c int, s, P []float64, derivs bool) (lp float64, ok bool, C, U []float64) {
	q := len(ps)
	s[q] = 0
	top := q
	for j := q - 1; j >= 0; j-- {
		s[j] = s[j+1] + ps[j]
		if s[j] > s[top] {
			top = j
		}
	}
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
	for j := range P[:q+1] {
		P[j] = fastExp(s[j])
		sum += P[j]
	}
	lp = s[c] - fastLog(sum)
	if math.IsNaN(lp) || math.IsInf(lp, 0) {
		return math.Inf(-1), false, nil, nil
	}
	if !derivs {
		return lp, true, nil, nil
	}
	// P_j = e^(t_j) / sum_k e^(t_k); C_m (in s) and U_m (in P, at m + 1)
	// summed from the side of each.
	for j := range P[:q+1] {
		P[j] /= sum
	}
	C = s[:q]
	acc := 0.0
	for m := 0; m < q; m++ {
		acc += P[m]
		C[m] = acc
	}
	acc = 0
	for m := q - 1; m >= 0; m-- {
		acc += P[m+1]
		P[m+1] = acc
	}
	return lp, true, C, P[1 : q+1]
}

// adjacentLogit is adjacent under the logit link, psi_m = L_m (first
// derivative 1, second 0), for fewer than 16 equations: the same sums in
// the same order (adjacentProbs), with two small buffers on the stack (Go
// clears them on every call).
func adjacentLogit(L []float64, c int, g, h []float64) (float64, bool) {
	q := len(L)
	var sbuf, pbuf [16]float64
	s, P := sbuf[:q+1], pbuf[:q+1]
	lp, ok, C, U := adjacentProbs(L, c, s, P, g != nil || h != nil)
	if !ok || (g == nil && h == nil) {
		return lp, ok
	}
	for m := 0; m < q; m++ {
		if g != nil {
			if m >= c {
				g[m] = U[m] // 1 - C_m
			} else {
				g[m] = -C[m]
			}
		}
		if h != nil {
			for l := m; l < q; l++ {
				v := -(C[m] * U[l])
				h[m*q+l] = v
				h[l*q+m] = v
			}
		}
	}
	return lp, true
}

// clampHuge keeps x within +-1e300 (NaN and signed zeros as they are,
// as math.Max(-1e300, math.Min(1e300, x)) would give them, without
// that pair's special cases: the adjacent kernels clamp three values a
// row and equation).
func clampHuge(x float64) float64 {
	if x > 1e300 {
		return 1e300
	}
	if x < -1e300 {
		return -1e300
	}
	return x
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

// DrawCategory is the category a uniform draw u (0 <= u < 1) falls in
// under the category probabilities p: the first whose cumulative
// probability passes u, the last taking whatever the others leave. Every
// outcome the program simulates is drawn this way.
func DrawCategory(p []float64, u float64) int {
	acc := 0.0
	for j := 0; j < len(p)-1; j++ {
		acc += p[j]
		if u < acc {
			return j
		}
	}
	return len(p) - 1
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
	if k.cmp == Cumulative && k.link == Logit && q > 0 {
		logitCumulativeProbs(L, p)
		return
	}
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
			p[c] = fastExp(lp)
		} else {
			p[c] = 0
		}
	}
}

// logitCumulativeProbs is probs of a cumulative logit model: from each
// boundary's logitPoint, F and 1 - F without cancellation, a category's
// probability F(L_m) - F(L_m-1) or, where F(L_m) is above 1/2, (1 -
// F(L_m-1)) - (1 - F(L_m)), so that probabilities near 1 keep their digits
// too, and the top category's 1 - F(L_q-1) itself.
func logitCumulativeProbs(L []float64, p []float64) {
	q := len(L)
	var prev logitPoint // F = 0, Fc = 0 below the first boundary: p[0] = F(L_0)
	for m := 0; m < q; m++ {
		pt := newLogitPoint(L[m])
		if m == 0 || pt.F <= 0.5 {
			p[m] = pt.F - prev.F
		} else {
			p[m] = prev.Fc - pt.Fc
		}
		prev = pt
	}
	p[q] = prev.Fc
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
