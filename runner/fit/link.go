package fit

import (
	"math"
	"math/big"

	"ordplan/internal/words"
)

// Link is an inverse link function F applied to a linear predictor.
type Link int

// The supported links.
const (
	Logit Link = iota
	Probit
	Cloglog
	Loglog
	Cauchy
)

// LinkWords is the vocabulary of links, in the order of the constants:
// adding a link is adding a constant, its word here and its functions below.
var LinkWords = words.New[Link]("link", "logit", "probit", "cloglog", "loglog", "cauchy")

func (l Link) String() string { return LinkWords.Name(l) }

// MarshalText writes the link's word.
func (l Link) MarshalText() ([]byte, error) { return LinkWords.Text(l) }

// UnmarshalText reads a link's word.
func (l *Link) UnmarshalText(b []byte) (err error) {
	*l, err = LinkWords.Parse(string(b))
	return err
}

// ParseLink turns a link's word into a Link.
func ParseLink(s string) (Link, error) { return LinkWords.Parse(s) }

// tail holds log F(z) or log(1-F(z)) with its first two derivatives in z.
type tail struct{ v, d1, d2 float64 }

// lower returns log F(z) and its derivatives.
func (l Link) lower(z float64) tail {
	switch l {
	case Logit:
		// log F = -log(1+e^-z); d = 1-F; d2 = -F(1-F)
		p := newLogitPoint(z)
		return tail{p.logF(), p.Fc, -p.F * p.Fc}
	case Probit:
		// log Phi and phi/Phi from one erfc (logPhi and millsInv, shared).
		v, lam := logPhiMills(z)
		return tail{v, lam, -lam * (z + lam)}
	case Cloglog:
		// F = 1-exp(-e^z), u = e^z: F and e^-u (cloglogLower, one
		// exponential more and, below u = 1, one expm1) shared by the
		// value and the derivatives.
		u, e, F, v := cloglogLower(z)
		if u == 0 {
			// F ~ u: log F ~ z, derivatives 1 and 0
			return tail{v, 1, 0}
		}
		// d log F / dz = u e^-u / F = u / (e^u - 1): 0 once e^-u
		// underflows (u may then be infinite).
		a := 0.0
		if e > 0 {
			a = u * e / F
		}
		// d a/dz = a - u*a*e^u/(e^u-1) = a*(1 - u/F) = -a*bend(u)*(u/F),
		// F - u = -(e^-u - 1 + u): written so, the bracket does not cancel
		// while u is small (1 - u/F is about -u/2 there).
		d2 := -a * bendOf(u, F) * (u / F)
		if a == 0 {
			d2 = 0
		}
		return tail{v, a, d2}
	case Loglog:
		t := Cloglog.upper(-z)
		return tail{t.v, -t.d1, t.d2}
	case Cauchy:
		if math.Abs(z) <= cauchyFast {
			v, lam, dlam := cauchyNear(z, 2)
			return tail{v, lam, dlam}
		}
		v, F := cauchyLogCDF(z)
		f := 1 / (math.Pi * (1 + z*z))
		r := f / F
		fp := -2 * z / (1 + z*z) * f
		return tail{v, r, fp/F - r*r}
	}
	panic("fit: unknown link")
}

// upper returns log(1-F(z)) and its derivatives.
func (l Link) upper(z float64) tail {
	switch l {
	case Logit:
		p := newLogitPoint(z)
		return tail{p.logFc(), -p.F, -p.F * p.Fc}
	case Probit, Cauchy:
		t := l.lower(-z)
		return tail{t.v, -t.d1, t.d2}
	case Cloglog:
		u := fastExp(z)
		return tail{-u, -u, -u}
	case Loglog:
		t := Cloglog.lower(-z)
		return tail{t.v, -t.d1, t.d2}
	}
	panic("fit: unknown link")
}

// logTail is lower(z).v (log F(z)) or, when up is set, upper(z).v
// (log(1 - F(z))), the same formulas without the derivatives: what the
// log-space difference of two tails (logDiffCDF) takes.
func (l Link) logTail(z float64, up bool) float64 {
	switch l {
	case Logit:
		p := newLogitPoint(z)
		if up {
			return p.logFc()
		}
		return p.logF()
	case Probit:
		if up {
			z = -z
		}
		return logPhi(z)
	case Cloglog:
		if up {
			return -fastExp(z)
		}
		_, _, _, v := cloglogLower(z)
		return v
	case Loglog:
		return Cloglog.logTail(-z, !up)
	case Cauchy:
		if up {
			z = -z
		}
		if math.Abs(z) <= cauchyFast {
			v, _, _ := cauchyNear(z, 0)
			return v
		}
		v, _ := cauchyLogCDF(z)
		return v
	}
	panic("fit: unknown link")
}

// median is the z of F(z) = 1/2: log log 2 for the cloglog link, its
// negative for the loglog, 0 for the symmetric links.
func (l Link) median() float64 {
	switch l {
	case Cloglog:
		return logLog2
	case Loglog:
		return -logLog2
	}
	return 0
}

// logLog2 is log(log 2), the cloglog link's median.
var logLog2 = math.Log(math.Ln2)

// cloglogLower returns u = e^z, e = e^-u, F = 1 - e^-u and log F under
// the cloglog link: e and F from one expm1Exp (F keeps its digits where u
// is small), log F = log(1 - e^-u) as log1mexpOf forms it (log1p of -e
// from u = log 2 on, so that log F keeps its digits where F nears 1); u =
// 0 (F then u to the last digit) gives log F = z, e and F unset.
func cloglogLower(z float64) (u, e, F, v float64) {
	return cloglogLowerAt(z, fastExp(z))
}

// cloglogLowerAt is cloglogLower with u = fastExp(z) at hand.
func cloglogLowerAt(z, u float64) (_, e, F, v float64) {
	if u == 0 {
		return 0, 0, 0, z
	}
	m, e := expm1Exp(-u)
	return u, e, -m, log1mexpOf(-u, m, e)
}

// psiSmallTerms holds, for n = 1..13, c_n = 2^2n B_2n / (2n (2n)!) and
// c_n times 2n and (2n)^2 (B_2n the Bernoulli numbers): log(sinh x / x)
// = sum c_n x^2n, and its x d/dx and (x d/dx)^2. At x = 1/2 the terms
// fall by (x/pi)^2 = 1/39 each; the thirteenth of (x d/dx)^2 L is below
// 1e-19.
var psiSmallTerms = func() (c [13][3]float64) {
	b := []string{"1/6", "-1/30", "1/42", "-1/30", "5/66", "-691/2730", "7/6",
		"-3617/510", "43867/798", "-174611/330", "854513/138", "-236364091/2730",
		"8553103/6"}
	fact := big.NewInt(1)
	for i := range c {
		n := int64(i + 1)
		fact.Mul(fact, big.NewInt((2*n-1)*(2*n)))
		r, _ := new(big.Rat).SetString(b[i])
		r.Mul(r, new(big.Rat).SetInt(new(big.Int).Lsh(big.NewInt(1), uint(2*n))))
		r.Quo(r, new(big.Rat).SetInt(new(big.Int).Mul(fact, big.NewInt(2*n))))
		for k := range c[i] {
			c[i][k], _ = r.Float64()
			r.Mul(r, new(big.Rat).SetInt64(2*n))
		}
	}
	return c
}()

// cloglogRatioSmall is Link.ratio's cloglog psi = log(e^u - 1) and its
// two derivatives in z for u = e^z below 1, by series in x = u/2
// without an exponential of u or a logarithm: e^u - 1 = u e^x sinh(x)/x,
// so psi = z + x + L(x) with L = log(sinh x / x), psi' = 1 + x + x L'(x)
// and psi” = x + x (x L')'(x) (d/dz = u d/du = x d/dx).
//
// Each sum over its thirteen terms by Estrin's scheme (pairs, then pairs
// of pairs by w^2, w^4 and w^8): a chain of five multiplications and
// additions instead of Horner's twelve, the three sums' latency what a
// row waited on.
func cloglogRatioSmall(z, u float64) (v, d1, d2 float64) {
	x := u / 2
	w := x * x
	w2 := w * w
	w4 := w2 * w2
	w8 := w4 * w4
	c := &psiSmallTerms
	sum := func(k int) float64 {
		b0 := (c[0][k] + c[1][k]*w) + w2*(c[2][k]+c[3][k]*w)
		b1 := (c[4][k] + c[5][k]*w) + w2*(c[6][k]+c[7][k]*w)
		b2 := (c[8][k] + c[9][k]*w) + w2*(c[10][k]+c[11][k]*w)
		return (b0 + w4*b1) + w8*(b2+w4*c[12][k])
	}
	s0, s1, s2 := sum(0), sum(1), sum(2)
	return z + (x + w*s0), 1 + (x + w*s1), x + w*s2
}

// cloglogBetween is kernel.between for the cloglog and loglog links
// (with the ratios and second derivatives when derivs is set) from the
// two boundaries' e^z alone, done false far in the tails (P below e^-700,
// e^a below 2^-1000 or e^b overflowing: kernel.between's log-space path
// then). Cloglog: F = 1 - e^-u, u = e^z,
// so P = e^-ua - e^-ub = e^-ua D with D = 1 - e^-du and du = ub - ua =
// -ub expm1(a - b) (no cancellation however close a and b); log P = -ua
// + log(1 - e^-du) (log1mexpOf: two terms of one sign), f = u e^-u, so
// f(a)/P = ua / D and f(b)/P = ub E / D with E = e^-du, and f'/f = 1 - u.
// Three exponentials and one logarithm, where the tails' log F (an
// exponential each, and a logarithm for the lower ones), log1mexp and
// the ratios from the log-densities took eight and three. Loglog: F(z) =
// 1 - F_cloglog(-z), so P(a, b) is the cloglog's P(-b, -a), its ratios
// and second derivatives swapped.
func cloglogBetween(l Link, a, b float64, derivs bool) (m middle, done bool) {
	if l == Loglog {
		a, b = -b, -a
	}
	ua, ub := fastExp(a), fastExp(b)
	mx, _ := expm1Exp(a - b)
	du := -ub * mx
	mu, E := expm1Exp(-du)
	D := -mu
	m.lp = log1mexpOf(-du, mu, E) - ua
	if !(m.lp > -700 && ua >= 0x1p-1000 && ub <= math.MaxFloat64) {
		return m, false
	}
	if !derivs {
		return m, true
	}
	inv := 1 / D
	m.ra, m.rb = ua*inv, ub*E*inv
	m.setSecond(1-ua, 1-ub)
	if l == Loglog {
		m.ra, m.rb = m.rb, m.ra
		m.haa, m.hbb = m.hbb, m.haa
	}
	return m, true
}

// ratio returns psi = log F(z) - log(1-F(z)), the log-odds of the
// adjacent comparison's pair of categories, and its first two derivatives
// in z: lower(z) less upper(z), formed for the probit and cloglog links
// from what the two tails share, with the kernels' exponential and
// logarithm (fastExp, fastLog), and for the loglog link as the cloglog's
// mirror image, and for the cauchy link from a table of psi's own
// (cauchyPsi). ok is false for the logit and far in the
// tails (|z| > 30 for the probit; e^z below 1e-300 or above 700 for the
// cloglog, e^-z for the loglog; |z| > cauchyFast for the cauchy), where
// the caller takes lower and upper.
//
// Probit: P = Phi(z), Q = Phi(-z) = 1 - P from one erfc of the smaller
// tail (the larger, at least 1/2, as 1 minus it, without cancellation),
// the density phi once; psi = log(P/Q), its first derivative phi/P +
// phi/Q and its second phi/Q (phi/Q - z) - phi/P (z + phi/P), lower's and
// upper's terms.
//
// Cloglog: u = e^z, F = 1 - e^-u (cloglogLower), psi = log F + u; its first derivative
// u/F (lower's a = u e^-u / F plus upper's u), its second u - a bend(u)
// u/F (lower's second derivative, see lower, plus upper's u). Below u = 1
// all three from series in u instead (cloglogRatioSmall).
func (l Link) ratio(z float64) (v, d1, d2 float64, ok bool) {
	switch l {
	case Probit:
		a := math.Abs(z)
		if !(a <= 30) {
			return 0, 0, 0, false
		}
		if a <= probitFast {
			// the two tails from the tables (probitNear): no erfc
			lv, ll := probitNear(z, false)
			uv, ul := probitNear(-z, false)
			return lv - uv, ll + ul, ul*(ul-z) - ll*(z+ll), true
		}
		small := 0.5 * math.Erfc(a/math.Sqrt2)
		large := 1 - small
		neg := z < 0
		P, Q := pick(neg, small, large), pick(neg, large, small)
		phi := fastExp(-0.5*z*z - logHalfTwoPi)
		lp, lq := phi/P, phi/Q
		return fastLog(P / Q), lp + lq, lq*(lq-z) - lp*(z+lp), true
	case Cloglog:
		u := fastExp(z)
		if !(u >= 1e-300 && u <= 700) {
			return 0, 0, 0, false
		}
		if u < 1 {
			v, d1, d2 := cloglogRatioSmall(z, u)
			return v, d1, d2, true
		}
		_, e, F, lf := cloglogLowerAt(z, u)
		a := u * e / F
		r := u / F
		return lf + u, r, u - a*bendOf(u, F)*r, true
	case Loglog:
		// F(z) = 1 - F_cloglog(-z): psi(z) = -psi_cloglog(-z).
		v, d1, d2, ok := Cloglog.ratio(-z)
		return -v, d1, -d2, ok
	case Cauchy:
		if !(math.Abs(z) <= cauchyFast) {
			return 0, 0, 0, false
		}
		v, d1, d2 := cauchyPsi(z)
		return v, d1, d2, true
	}
	return 0, 0, 0, false
}

// cdf returns F(z).
func (l Link) cdf(z float64) float64 {
	switch l {
	case Logit:
		return newLogitPoint(z).F
	case Probit:
		return 0.5 * math.Erfc(-z/math.Sqrt2)
	case Cloglog:
		return -math.Expm1(-math.Exp(z))
	case Loglog:
		return math.Exp(-math.Exp(-z))
	case Cauchy:
		return cauchyCDF(z)
	}
	panic("fit: unknown link")
}

// CDF is the inverse link F(z).
func (l Link) CDF(z float64) float64 { return l.cdf(z) }

// Quantile is the link function F^-1(p).
func (l Link) Quantile(p float64) float64 {
	switch l {
	case Logit:
		return math.Log(p) - math.Log1p(-p)
	case Probit:
		return -math.Sqrt2 * math.Erfcinv(2*p)
	case Cloglog:
		return math.Log(-math.Log1p(-p))
	case Loglog:
		return -math.Log(-math.Log(p))
	case Cauchy:
		return math.Tan(math.Pi * (p - 0.5))
	}
	panic("fit: unknown link")
}

// logDensity returns log f(z) and f'(z)/f(z), where f = F'.
func (l Link) logDensity(z float64) (float64, float64) {
	switch l {
	case Logit:
		return newLogitPoint(z).logDensity()
	case Probit:
		return -0.5*z*z - logHalfTwoPi, -z
	case Cloglog:
		u := fastExp(z)
		return z - u, 1 - u
	case Loglog:
		u := fastExp(-z)
		return -z - u, u - 1
	case Cauchy:
		return -logPi - fastLog1p(z*z), -2 * z / (1 + z*z)
	}
	panic("fit: unknown link")
}

// logitPoint holds the logistic quantities of one z from one exponential,
// e = exp(-|z|), and one division: F(z) and 1 - F(z), each without
// cancellation. Every logit quantity of the link (Link's lower, upper, cdf
// and logDensity) and of the row kernels is formed from it; the logarithms
// log F = -log1p(e^-z) and log(1 - F) = -log1p(e^z) take one log1p more
// (logitTails shares one among several points).
type logitPoint struct{ z, e, F, Fc float64 }

func newLogitPoint(z float64) logitPoint { return logitPointOf(z, fastExp(-math.Abs(z))) }

// logitPointOf is newLogitPoint with e = exp(-|z|) at hand: 1/(1 + e)
// and e/(1 + e), swapped below 0 without a branch (the signs of the rows'
// z follow no pattern a branch predictor could learn).
func logitPointOf(z, e float64) logitPoint {
	a := 1 / (1 + e)
	b := e * a
	neg := z < 0
	return logitPoint{z: z, e: e, F: pick(neg, b, a), Fc: pick(neg, a, b)}
}

// pick is x when c holds, else y, without a branch (a conditional move of
// the bits).
func pick(c bool, x, y float64) float64 {
	var m uint64
	if c {
		m = ^uint64(0)
	}
	bx, by := math.Float64bits(x), math.Float64bits(y)
	return math.Float64frombits(by ^ (bx^by)&m)
}

// logF is log F(z) = -log(1 + e^-z) = -max(-z, 0) - log1p(e^-|z|).
func (p logitPoint) logF() float64 { return -fastLog1p(p.e) - max(-p.z, 0) }

// logFc is log(1 - F(z)) = -log(1 + e^z) = -max(z, 0) - log1p(e^-|z|).
func (p logitPoint) logFc() float64 { return -fastLog1p(p.e) - max(p.z, 0) }

// logDensity returns log f(z) = log F(z) + log(1 - F(z)) = -|z| -
// 2 log(1 + e^-|z|) and f'(z)/f(z) = 1 - 2 F(z).
func (p logitPoint) logDensity() (float64, float64) {
	return -math.Abs(p.z) - 2*fastLog1p(p.e), p.Fc - p.F
}

// logitTails sums the log-tails of several logit points, log F(z) for
// some and log(1 - F(z)) for others, with one log1p for all: each is
// -max(-z, 0) or -max(z, 0), minus log1p(e^-|z|), and the sum of the
// log1p terms is log1p(t) with 1 + t the product of the (1 + e^-|z|),
// t formed from positive terms only (t + e + t e), so without
// cancellation.
type logitTails struct{ shift, t float64 }

// add adds log(1 - F(z)) (upper) or log F(z) of point p.
func (s *logitTails) add(p logitPoint, upper bool) {
	if upper {
		s.shift += max(p.z, 0)
	} else {
		s.shift += max(-p.z, 0)
	}
	s.t += p.e + s.t*p.e
}

// sum is the sum of the log-tails added.
func (s *logitTails) sum() float64 { return -s.shift - fastLog1p(s.t) }

// logitMiddle returns, for a < b under the logit link, the middle
// category P = F(b) - F(a) of a cumulative model from the two points'
// exponentials (one each) and one logarithm, and what its derivatives take,
// with no further exponential but for b - a below 1/2. P = F(b) (1 - F(a))
// D with D = 1 - E, E = e^(a-b) (D from expm1 when b - a < 1/2, E then
// 1 - D; else E from the points' exponentials), each factor without
// cancellation. With t = (1 + e^-|a|)(1 + e^-|b|) - 1 formed from positive
// terms, F(b) (1 - F(a)) = e^-s / (1 + t), s = max(-b, 0) + max(a, 0), so
// log P = -s + log(D / (1 + t)) = -s + log1p(-u), u = (t + E) / (1 + t):
// log1p of -u while u <= 1/2 (P near 1 keeps the digits of its log),
// the logarithm of D / (1 + t) above. The derivatives: f(a)/P = F(a) /
// (F(b) D), f(b)/P = (1 - F(b)) / ((1 - F(a)) D) and the second ones
// d2 log P/db2 = -rb (F(b) + rb (F(a) + (1 - F(a)) E)) and d2 log P/da2 =
// -ra (1 - F(a) + ra (1 - F(b) + F(b) E)), sums of terms of one sign (the
// forms f'/f rb - rb^2 lose digits when F(b) is small). When P is near the
// smallest normal number (one point far in a tail), the log-space path
// takes over (logitFarMiddle).
func logitMiddle(pa, pb logitPoint) (m middle, ok bool) {
	var D, E float64
	if d := pb.z - pa.z; d < 0.5 {
		D = -math.Expm1(-d)
		E = 1 - D
	} else {
		// a >= 0: e = e^-a, e^-b; b < 0: e^a, e^b; else e^a, e^-b.
		// E = na mb / (ma nb) with n = e below 0 (else 1), m = e from 0
		// on (else 1): one division and no branch whatever the signs.
		an, bn := pa.z < 0, pb.z < 0
		E = pick(an, pa.e, 1) * pick(bn, 1, pb.e) / (pick(an, 1, pa.e) * pick(bn, pb.e, 1))
		D = 1 - E
	}
	if !(pb.F*pa.Fc*D >= 0x1p-1000) {
		return logitFarMiddle(pa, pb)
	}
	t := pa.e + pb.e + pa.e*pb.e
	s := max(-pb.z, 0) + max(pa.z, 0)
	if u := (t + E) / (1 + t); u <= 0.5 {
		m.lp = fastLog1p(-u) - s
	} else {
		m.lp = fastLog(D/(1+t)) - s
	}
	m.ra = pa.F / (pb.F * D)
	m.rb = pb.Fc / (pa.Fc * D)
	m.hbb = -m.rb * (pb.F + m.rb*(pa.F+pa.Fc*E))
	m.haa = -m.ra * (pa.Fc + m.ra*(pb.Fc+pb.F*E))
	return m, true
}

// logitFarMiddle is logitMiddle far in the tails: log P in log space
// (logitDiff), f/P from the log-densities, the second derivatives from
// f'/f = 1 - 2F. ok is false when log P is not finite.
func logitFarMiddle(pa, pb logitPoint) (m middle, ok bool) {
	m.lp = logitDiff(pa, pb)
	if math.IsInf(m.lp, -1) || math.IsNaN(m.lp) {
		return m, false
	}
	lfa, qa := pa.logDensity()
	lfb, qb := pb.logDensity()
	m.rb, m.ra = math.Exp(lfb-m.lp), math.Exp(lfa-m.lp)
	m.setSecond(qa, qb)
	return m, true
}

// logitDiff is log(F(b) - F(a)) for b > a under the logit link, from
// whichever tail keeps the digits, in log space: logDiffCDF from the two
// points (the path of logitMiddle's far tails).
func logitDiff(pa, pb logitPoint) float64 {
	mid := 0.5 * (pa.z + pb.z)
	// log(1 - e^x) from package math's expm1, as this path has always
	// taken it (the logit kernels' values unchanged; the other links' take
	// expm1Exp, log1mexp)
	l1me := func(x float64) float64 { return log1mexpOf(x, math.Expm1(x), fastExp(x)) }
	if mid <= 0 || (mid < 1e-15 && Logit.cdf(mid) <= 0.5) { // F(mid) <= 1/2
		la, lb := pa.logF(), pb.logF()
		return lb + l1me(la-lb)
	}
	ua, ub := pa.logFc(), pb.logFc()
	return ua + l1me(ub-ua)
}

// logistic returns F(z) and 1-F(z) without cancellation.
func logistic(z float64) (float64, float64) {
	p := newLogitPoint(z)
	return p.F, p.Fc
}

func cauchyCDF(z float64) float64 {
	if z < 0 {
		return math.Atan(-1/z) / math.Pi
	}
	return 0.5 + math.Atan(z)/math.Pi
}

// cauchyLogCDF returns log F(z) and F(z) under the cauchy link, log F
// as log1p of -(1 - F) from z > 0 on, so that it keeps its digits where
// F nears 1.
func cauchyLogCDF(z float64) (float64, float64) {
	if z > 0 {
		Fc := math.Atan(1/z) / math.Pi
		return fastLog1p(-Fc), 1 - Fc
	}
	F := cauchyCDF(z)
	return fastLog(F), F
}

// logPhi is log Phi(z), accurate far into the lower tail.
func logPhi(z float64) float64 {
	if math.Abs(z) <= probitFast {
		v, _ := probitNear(z, true)
		return v
	}
	if z > 0 {
		// log1p(-Q), Q = 1 - Phi(z): log Phi keeps its digits where Phi
		// rounds to 1.
		return fastLog1p(-0.5 * math.Erfc(z/math.Sqrt2))
	}
	if z > -30 {
		return fastLog(0.5 * math.Erfc(-z/math.Sqrt2))
	}
	// Phi(z) = phi(z) * R(-z), R the Mills ratio.
	return -0.5*z*z - logHalfTwoPi + fastLog(millsRatio(-z))
}

// logHalfTwoPi is log(2 pi)/2, the normal density's constant; logPi is
// log pi, the Cauchy density's.
var (
	logHalfTwoPi = 0.5 * math.Log(2*math.Pi)
	logPi        = math.Log(math.Pi)
)

// logPhiMills is logPhi(z) and millsInv(z), the same values: from the
// table of probitNear, beyond it from one erfc (or one continued fraction
// far in the lower tail).
func logPhiMills(z float64) (float64, float64) {
	if math.Abs(z) <= probitFast {
		return probitNear(z, false)
	}
	if z > 0 {
		Q := 0.5 * math.Erfc(z/math.Sqrt2)
		return fastLog1p(-Q), fastExp(-0.5*z*z-logHalfTwoPi) / (1 - Q)
	}
	if z > -30 {
		P := 0.5 * math.Erfc(-z/math.Sqrt2)
		return fastLog(P), fastExp(-0.5*z*z-logHalfTwoPi) / P
	}
	r := millsRatio(-z)
	return -0.5*z*z - logHalfTwoPi + fastLog(r), 1 / r
}

// millsInv is phi(z)/Phi(z).
func millsInv(z float64) float64 {
	if math.Abs(z) <= probitFast {
		_, lam := probitNear(z, false)
		return lam
	}
	if z > 0 {
		return fastExp(-0.5*z*z-logHalfTwoPi) / (1 - 0.5*math.Erfc(z/math.Sqrt2))
	}
	if z > -30 {
		return fastExp(-0.5*z*z-logHalfTwoPi) / (0.5 * math.Erfc(-z/math.Sqrt2))
	}
	return 1 / millsRatio(-z)
}

// millsRatio is (1-Phi(t))/phi(t) for large t, by its continued fraction.
func millsRatio(t float64) float64 {
	// R(t) = 1/(t+1/(t+2/(t+3/(t+...)))), evaluated bottom-up.
	r := 0.0
	for k := 60; k >= 1; k-- {
		r = float64(k) / (t + r)
	}
	return 1 / (t + r)
}

// bendTerms: 2 (-1)^m / (m+2)!, the series of bend divided by u / 2, for
// u below 1/2 (16 terms leave a relative error below 1e-18).
var bendTerms = func() (c [16]float64) {
	f := 2.0 // (m+2)! for m = 0
	for m := range c {
		c[m] = 2 / f
		if m%2 == 1 {
			c[m] = -c[m]
		}
		f *= float64(m + 3)
	}
	return c
}()

// bend returns (e^-u - 1 + u) / u for u > 0 without the cancellation of
// computing it so: by its series u/2 (1 - u/3 + u^2/12 - ...) for u below
// 1/2, where e^-u - 1 and u nearly cancel; from expm1 beyond, where
// e^-u - 1 + u is at least a fifth of u (a few ulp).
func bend(u float64) float64 {
	if u < 0.5 {
		return bendOf(u, 0)
	}
	return (math.Expm1(-u) + u) / u
}

// bendOf is bend(u) with F = 1 - e^-u at hand (as cloglogLower forms it,
// from expm1Exp: within an ulp of package math's expm1), which it takes
// from 1/2 on instead of a second expm1.
func bendOf(u, F float64) float64 {
	if u < 0.5 {
		c := &bendTerms
		s := c[len(c)-1]
		for m := len(c) - 2; m >= 0; m-- {
			s = c[m] + u*s
		}
		return u / 2 * s
	}
	return (u - F) / u
}
