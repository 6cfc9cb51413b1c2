package fit

import (
	"fmt"
	"math"
	"math/big"
	"testing"
)

// The tails, densities and middle categories of the links other than the
// logit as they were formed with package math's exp, log, expm1 and log1p
// (each tail's value from the tail with its derivatives, the side of a
// middle category chosen by F at the midpoint), kept here as the
// reference of TestLinkFastAgreesWithMath.

func mathLower(l Link, z float64) tail {
	switch l {
	case Probit:
		if z > -30 {
			P := 0.5 * math.Erfc(-z/math.Sqrt2)
			lam := math.Exp(-0.5*z*z-0.5*math.Log(2*math.Pi)) / P
			v := math.Log(P)
			if z > 0 {
				// log1p of -(1 - P) = -erfc(z/sqrt2)/2: log P keeps
				// its digits where P rounds to 1 (the fast tail
				// forms it so).
				v = math.Log1p(-0.5 * math.Erfc(z/math.Sqrt2))
			}
			return tail{v, lam, -lam * (z + lam)}
		}
		r := millsRatio(-z)
		lam := 1 / r
		return tail{-0.5*z*z - 0.5*math.Log(2*math.Pi) + math.Log(r), lam, -lam * (z + lam)}
	case Cloglog:
		u := math.Exp(z)
		if u == 0 {
			return tail{z, 1, 0}
		}
		F, eu := -math.Expm1(-u), math.Expm1(u)
		a := u / eu
		if math.IsInf(eu, 1) {
			a = 0
		}
		d2 := -a * bend(u) * (u / F)
		if a == 0 {
			d2 = 0
		}
		// log F = log(1 - e^-u): log1p of -e^-u from u = log 2 on, so
		// that it keeps its digits where F nears 1 (the fast tail forms
		// it so)
		return tail{mathLog1mexp(-u), a, d2}
	case Loglog:
		t := mathUpper(Cloglog, -z)
		return tail{t.v, -t.d1, t.d2}
	case Cauchy:
		F := cauchyCDF(z)
		f := 1 / (math.Pi * (1 + z*z))
		r := f / F
		fp := -2 * z / (1 + z*z) * f
		v := math.Log(F)
		if z > 0 {
			// log1p of -(1 - F) = -atan(1/z)/pi: log F keeps its
			// digits where F nears 1 (the fast tail forms it so).
			v = math.Log1p(-math.Atan(1/z) / math.Pi)
		}
		return tail{v, r, fp/F - r*r}
	}
	panic("unknown link")
}

func mathUpper(l Link, z float64) tail {
	switch l {
	case Probit, Cauchy:
		t := mathLower(l, -z)
		return tail{t.v, -t.d1, t.d2}
	case Cloglog:
		u := math.Exp(z)
		return tail{-u, -u, -u}
	case Loglog:
		t := mathLower(Cloglog, -z)
		return tail{t.v, -t.d1, t.d2}
	}
	panic("unknown link")
}

func mathLogDensity(l Link, z float64) (float64, float64) {
	switch l {
	case Probit:
		return -0.5*z*z - 0.5*math.Log(2*math.Pi), -z
	case Cloglog:
		u := math.Exp(z)
		return z - u, 1 - u
	case Loglog:
		u := math.Exp(-z)
		return -z - u, u - 1
	case Cauchy:
		return -math.Log(math.Pi) - math.Log1p(z*z), -2 * z / (1 + z*z)
	}
	panic("unknown link")
}

func mathLog1mexp(x float64) float64 {
	if x > -math.Ln2 {
		return math.Log(-math.Expm1(x))
	}
	return math.Log1p(-math.Exp(x))
}

func mathBetween(l Link, a, b float64) (m middle, ok bool) {
	if l.cdf(0.5*(a+b)) <= 0.5 {
		la, lb := mathLower(l, a).v, mathLower(l, b).v
		m.lp = lb + mathLog1mexp(la-lb)
	} else {
		ua, ub := mathUpper(l, a).v, mathUpper(l, b).v
		m.lp = ua + mathLog1mexp(ub-ua)
	}
	if math.IsInf(m.lp, -1) || math.IsNaN(m.lp) {
		return m, false
	}
	lfb, qb := mathLogDensity(l, b)
	lfa, qa := mathLogDensity(l, a)
	m.rb, m.ra = math.Exp(lfb-m.lp), math.Exp(lfa-m.lp)
	m.setSecond(qa, qb)
	return m, true
}

// TestLinkFastAgreesWithMath checks the probit, cloglog, loglog and
// cauchy tails (lower, upper, and logTail, their values alone), log
// densities and middle categories of a cumulative model (kernel.between:
// logDiffCDF and the ratios f/P), formed with the kernels' fastExp,
// fastLog and fastLog1p (fastmath_test.go: within 0.51, 0.71 and 0.85 ulp
// of math/big), against the same formulas with package math (above) over
// the grid of logitGrid, far tails included (the probit's continued
// fraction below -30, the cloglog's e^z underflowing or overflowing, both
// branches of log1mexp), and pairs of boundaries 0.05 to 20 apart. The
// two differ by an ulp or so in each exponential and logarithm, which
// the formulas' own conditioning scales in both alike; so each value is
// within 1e-14 of the reference times its size and its condition number:
// kappa = 1 + z^2 (probit, cauchy: the second derivative -lam (z + lam)
// cancels) or 1 + e^z (cloglog; e^-z loglog: e^-u carries u's rounding)
// for the tails; for log P = t_b + log(1 - e^(t_a - t_b)) (or with the
// upper tails) the absolute error scale E = |log P| + (|t_a| +
// |t_b|)/|t_a - t_b| of a difference of nearly equal logarithms; the
// ratios f/P, exponentials of log f - log P, within 1e-14 (1 + |log f| +
// E) relative, and the second derivatives qr - r^2 within 2e-14 (1 +
// |log f| + E + kappa) (|q r| + r^2), a difference of two terms.
// Subnormal references are compared to 1e-300 absolute; infinite and NaN
// ones, and the refused categories, exactly.
func TestLinkFastAgreesWithMath(t *testing.T) {
	worst, worstAt := 0.0, ""
	// near: |got - want| <= tol * scale.
	near := func(what string, l Link, z, got, want, tol, scale float64) {
		t.Helper()
		if math.IsInf(want, 0) || math.IsNaN(want) {
			if got != want && !(math.IsNaN(got) && math.IsNaN(want)) {
				t.Errorf("%s %s(%g): %v, with package math %v", l, what, z, got, want)
			}
			return
		}
		e := math.Abs(got - want)
		if e > 1e-300 && e/(tol*scale) > worst {
			worst, worstAt = e/(tol*scale), fmt.Sprintf("%s %s(%g)", l, what, z)
		}
		if !(e <= tol*scale || e <= 1e-300) {
			t.Errorf("%s %s(%g): %.17g, with package math %.17g (%.2g of the tolerance)", l, what, z, got, want, e/(tol*scale))
		}
	}
	kappa := func(l Link, z float64) float64 {
		switch l {
		case Cloglog:
			return 1 + math.Exp(min(z, 700))
		case Loglog:
			return 1 + math.Exp(min(-z, 700))
		}
		return 1 + z*z
	}
	zs := logitGrid()
	for _, l := range []Link{Probit, Cloglog, Loglog, Cauchy} {
		for _, z := range zs {
			kz := kappa(l, z)
			for _, up := range []bool{false, true} {
				got, want := l.lower(z), mathLower(l, z)
				if up {
					got, want = l.upper(z), mathUpper(l, z)
				}
				// A probit tail's value near 0 is -Q, Q = 1 - F the other
				// tail, whose relative error from z's rounding is z^2
				// times z's (z phi/Q ~ z^2): its scale takes kappa. So does
				// a cloglog tail's log F = log1p(-e^-u) near 0, about
				// -e^-u, which carries u's rounding times u (and the
				// loglog's mirror image).
				kv := 1.0
				if l != Cauchy {
					kv = kz
				}
				near("tail value", l, z, got.v, want.v, 1e-14, kv*math.Abs(want.v))
				near("tail value alone", l, z, l.logTail(z, up), want.v, 1e-14, kv*math.Abs(want.v))
				near("tail first derivative", l, z, got.d1, want.d1, 1e-14, kz*math.Abs(want.d1))
				near("tail second derivative", l, z, got.d2, want.d2, 2e-14, kz*math.Abs(want.d2))
			}
			lf, q := l.logDensity(z)
			wlf, wq := mathLogDensity(l, z)
			near("log density", l, z, lf, wlf, 1e-14, math.Abs(wlf))
			near("f'/f", l, z, q, wq, 1e-14, math.Abs(wq))
		}
		k := &kernel{cmp: Cumulative, link: l, nEq: 2}
		for _, a := range zs {
			for _, d := range []float64{0.05, 0.3, 1, 4, 20} {
				b := a + d
				got, ok := k.between(a, b, true)
				want, wok := mathBetween(l, a, b)
				if ok != wok {
					t.Errorf("%s between(%g, %g): ok %v, with package math %v", l, a, b, ok, wok)
					continue
				}
				if !ok {
					continue
				}
				ta, tb := mathLower(l, a).v, mathLower(l, b).v
				if l.cdf(0.5*(a+b)) > 0.5 {
					ta, tb = mathUpper(l, a).v, mathUpper(l, b).v
				}
				E := math.Abs(want.lp) + (math.Abs(ta)+math.Abs(tb))/math.Abs(ta-tb)
				near("log P", l, a, got.lp, want.lp, 1e-14, E)
				lfa, qa := mathLogDensity(l, a)
				lfb, qb := mathLogDensity(l, b)
				ea, eb := 1+math.Abs(lfa)+E, 1+math.Abs(lfb)+E
				near("f(a)/P", l, a, got.ra, want.ra, 1e-14, ea*want.ra)
				near("f(b)/P", l, a, got.rb, want.rb, 1e-14, eb*want.rb)
				near("d2 log P/da2", l, a, got.haa, want.haa, 2e-14, (ea+kappa(l, a))*(math.Abs(qa*want.ra)+want.ra*want.ra))
				near("d2 log P/db2", l, a, got.hbb, want.hbb, 2e-14, (eb+kappa(l, b))*(math.Abs(qb*want.rb)+want.rb*want.rb))
			}
		}
	}
	t.Logf("largest difference: %.2g of its tolerance, at %s", worst, worstAt)
}

// TestTailTablesDense checks the probit's and cauchy's tables
// (probitNear, cauchyNear: log F and f/F by Taylor polynomials about the
// centres k/32; cauchy also the derivative of f/F) against package math's
// erfc and atan (mathLower) densely: 40001 points over the table's range
// (8.5 probit, 8 cauchy), the ends of every interval between centres (c
// +- 1/64), both sides of the probit's switch to longer polynomials at
// 2, and beyond the tables where package math takes over. Tolerances as
// in TestLinkFastAgreesWithMath: 1e-14 times the value's size and its
// condition number 1 + z^2 (z f/(1 - F) is about z^2 for the probit
// where log F is about -(1 - F), and the reference's erfc(z/sqrt2)
// carries z's rounding times z^2), 2e-14 for the second derivative q r -
// r^2 (q = f'/f, r = f/F) times the size of its terms, |q r| + r^2 (the
// probit's -lam (z + lam) cancels in the lower tail, the cauchy's where
// it changes sign). The largest relative differences are logged in units
// of 1e-16 (1 + z^2) times those scales.
func TestTailTablesDense(t *testing.T) {
	for _, tc := range []struct {
		l    Link
		zmax float64
	}{{Probit, probitFast}, {Cauchy, cauchyFast}} {
		var zs []float64
		for i := -20000; i <= 20000; i++ {
			zs = append(zs, float64(i)*tc.zmax/20000)
		}
		for k := -int(tc.zmax * probitPerUnit); k <= int(tc.zmax*probitPerUnit); k++ {
			c := float64(k) / probitPerUnit
			zs = append(zs, c-1.0/64, math.Nextafter(c-1.0/64, 0), c+1.0/64, math.Nextafter(c+1.0/64, 0))
		}
		zs = append(zs, 2, math.Nextafter(2, 3), 2+1.0/64, math.Nextafter(2+1.0/64, 3), 9, 20, 29.9, 1e3, -9, -29.9, -30.1, -1e3)
		for _, z := range []float64{tc.zmax, math.Nextafter(tc.zmax, 100)} {
			zs = append(zs, z, -z)
		}
		worst := [3]float64{}
		for _, z := range zs {
			got, want := tc.l.lower(z), mathLower(tc.l, z)
			kz := 1 + z*z
			_, q := mathLogDensity(tc.l, z)
			for i, c := range []struct {
				what                  string
				got, want, tol, scale float64
			}{
				{"log F", got.v, want.v, 1e-14, math.Abs(want.v)},
				{"f/F", got.d1, want.d1, 1e-14, math.Abs(want.d1)},
				// q r - r^2 (q = f'/f, r = f/F): the size of its terms
				{"second derivative", got.d2, want.d2, 2e-14, math.Abs(q*want.d1) + want.d1*want.d1},
			} {
				e := math.Abs(c.got - c.want)
				if !(e <= c.tol*kz*c.scale || e <= 1e-300) {
					t.Errorf("%s %s(%.17g): %.17g, with package math %.17g", tc.l, c.what, z, c.got, c.want)
				}
				if c.scale != 0 {
					worst[i] = max(worst[i], e/(1e-16*kz*c.scale))
				}
			}
			if v := tc.l.logTail(z, false); v != got.v {
				t.Errorf("%s logTail(%g) = %v, lower's value %v", tc.l, z, v, got.v)
			}
		}
		t.Logf("%s: largest differences in 1e-16 (1 + z^2) relative: log F %.3g, f/F %.3g, second derivative %.3g", tc.l, worst[0], worst[1], worst[2])
	}
}

// TestCloglogBetweenBig checks the middle categories of cumulative
// cloglog models (cloglogBetween: log P and the ratios f/P) against
// math/big (normtail_test.go's bigExpNeg and bigLog at 400 bits: P =
// e^-ua - e^-ub, u = e^z, f = u e^-u), and the loglog's as the cloglog's
// mirror image bit for bit, over boundaries a in [-30, 4] (every 1/8 and
// the next double above) and b - a from 2^-40 to 30, b up to 4.1 (e^b
// below 64, bigExpNeg's range): close boundaries (du = ub - ua about ub
// (b - a)) and both sides of log1mexpOf's switch at du = log 2. (The
// switch to kernel.between's log-space path far in the tails, P below
// e^-700 or e^a below 2^-1000, lies beyond these; TestLinkFastAgreesWithMath
// reaches it, against package math.) The inputs are doubles taken as exact, so the errors are the formula's own
// roundings: e^a and e^b each carry an ulp, which moves log P by ra ua
// and rb ub times it; the tolerance is 4e-16 (|log P| + ra ua + rb ub)
// absolute for log P, and 4e-16 (2 + ra ua + rb ub) (1 + du) relative
// for the ratios (E = e^-du carries du's rounding). The largest errors
// are logged in units of those tolerances.
func TestCloglogBetweenBig(t *testing.T) {
	k := &kernel{cmp: Cumulative, link: Cloglog, nEq: 2}
	kl := &kernel{cmp: Cumulative, link: Loglog, nEq: 2}
	bigExp := func(z float64) *big.Float { // e^z, |z| < 64
		if z <= 0 {
			return bigExpNeg(bigN(-z))
		}
		e := bigExpNeg(bigN(z))
		return e.Quo(bigN(1), e)
	}
	relErr := func(got float64, want *big.Float) float64 {
		w, _ := want.Float64()
		if w == 0 {
			return math.Abs(got)
		}
		return math.Abs(got-w) / math.Abs(w)
	}
	var worst [3]float64
	var worstAt [3]string
	n := 0
	for i := -30 * 8; i <= 4*8; i++ {
		a := float64(i) / 8
		for _, a := range []float64{a, math.Nextafter(a, 5)} {
			for _, d := range []float64{0x1p-40, 1e-9, 1e-5, 0.001, 0.05, 0.3, 0.69, 0.7, 1, 2.5, 4, 20, 30} {
				b := a + d
				m, ok := k.between(a, b, true)
				ml, okl := kl.between(-b, -a, true)
				if ok != okl || math.Float64bits(m.lp) != math.Float64bits(ml.lp) || m.ra != ml.rb || m.rb != ml.ra || m.haa != ml.hbb || m.hbb != ml.haa {
					t.Errorf("loglog between(%g, %g) is not the cloglog's between(%g, %g) mirrored: %+v, %+v", -b, -a, a, b, ml, m)
				}
				if _, done := cloglogBetween(Cloglog, a, b, true); !done || !ok || b > 4.1 {
					// refused, or e^b beyond bigExpNeg's range (64)
					continue
				}
				n++
				ua, ub := bigExp(a), bigExp(b)
				ea, eb := bigExpNeg(ua), bigExpNeg(ub)
				P := new(big.Float).SetPrec(normPrec).Sub(ea, eb)
				lp := bigLog(P, normPrec)
				ra := new(big.Float).SetPrec(normPrec).Mul(ua, ea)
				ra.Quo(ra, P)
				rb := new(big.Float).SetPrec(normPrec).Mul(ub, eb)
				rb.Quo(rb, P)
				fua, _ := ua.Float64()
				fub, _ := ub.Float64()
				fra, _ := ra.Float64()
				frb, _ := rb.Float64()
				cond := fra*fua + frb*fub
				du := fub - fua
				for j, c := range []struct {
					what  string
					got   float64
					want  *big.Float
					scale float64
				}{
					{"log P", m.lp, lp, 4e-16 * (math.Abs(m.lp) + cond) / math.Abs(m.lp)},
					{"f(a)/P", m.ra, ra, 4e-16 * (2 + cond) * (1 + du)},
					{"f(b)/P", m.rb, rb, 4e-16 * (2 + cond) * (1 + du)},
				} {
					e := relErr(c.got, c.want)
					if e/c.scale > worst[j] {
						worst[j], worstAt[j] = e/c.scale, fmt.Sprintf("(%g, %g)", a, b)
					}
					if !(e <= c.scale) {
						w, _ := c.want.Float64()
						t.Errorf("cloglog %s between(%.17g, %.17g): %.17g, math/big %.17g (%.3g of the tolerance)", c.what, a, b, c.got, w, e/c.scale)
					}
				}
			}
		}
	}
	t.Logf("cloglog middles against math/big (%d pairs): largest errors, in units of their tolerances: log P %.3g at %s, f(a)/P %.3g at %s, f(b)/P %.3g at %s", n, worst[0], worstAt[0], worst[1], worstAt[1], worst[2], worstAt[2])
}
