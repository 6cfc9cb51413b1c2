package fit

import (
	"math"
	"math/big"
	"testing"
)

// logitGrid is a grid of z reaching far into both tails, with the values
// next to 0.
func logitGrid() []float64 {
	var zs []float64
	for _, z := range []float64{0, math.Copysign(0, -1), 1e-300, 1e-17, 1e-16, 5e-16, 1e-15, 2e-15, 1e-8, 0.3, 1, 2.5, 17, 36, 37, 40, 300, 690, 700, 709, 745, 800} {
		zs = append(zs, z, -z)
	}
	for i := -200; i <= 200; i++ {
		zs = append(zs, float64(i)*0.173)
	}
	return zs
}

// logitNear reports whether got is within tol of want relative to |want|, or
// absolutely when |want| < 1 (values are logarithms or probabilities).
func logitNear(got, want, tol float64) bool {
	if math.IsInf(want, 0) || math.IsNaN(want) {
		return got == want || (math.IsNaN(got) && math.IsNaN(want))
	}
	return math.Abs(got-want) <= tol*math.Max(1, math.Abs(want))
}

// TestLogitPointAccuracy checks the logit quantities formed from one
// exponential per point (newLogitPoint) against the textbook
// formulas through the standard library's log1p, which keep every digit
// (log F = -log1p(e^-z) for z >= 0, z - log1p(e^z) below; the density
// f = F (1 - F)), to a few units in the last place.
func TestLogitPointAccuracy(t *testing.T) {
	const tol = 8 * 0x1p-52
	softplus := func(x float64) float64 { // log(1 + e^x)
		if x > 0 {
			return x + math.Log1p(math.Exp(-x))
		}
		return math.Log1p(math.Exp(x))
	}
	for _, z := range logitGrid() {
		p := newLogitPoint(z)
		F, Fc := 1/(1+math.Exp(-z)), math.Exp(-z)/(1+math.Exp(-z))
		if z < 0 {
			F, Fc = math.Exp(z)/(1+math.Exp(z)), 1/(1+math.Exp(z))
		}
		checks := []struct {
			what      string
			got, want float64
		}{
			{"log F", p.logF(), -softplus(-z)},
			{"log(1-F)", p.logFc(), -softplus(z)},
			{"F", p.F, F},
			{"1-F", p.Fc, Fc},
		}
		lf, r := p.logDensity()
		checks = append(checks,
			struct {
				what      string
				got, want float64
			}{"log f", lf, -softplus(-z) - softplus(z)},
			struct {
				what      string
				got, want float64
			}{"f'/f", r, Fc - F})
		for _, c := range checks {
			if c.what == "F" || c.what == "1-F" {
				if math.Abs(c.got-c.want) > tol*c.want {
					t.Fatalf("%s(%g) = %v, want %v", c.what, z, c.got, c.want)
				}
				continue
			}
			if !logitNear(c.got, c.want, tol) {
				t.Fatalf("%s(%g) = %v, want %v", c.what, z, c.got, c.want)
			}
		}
	}
}

// bigLogit returns F(z), 1 - F(z), f(z) = F (1 - F) and f'(z) = f (1 - 2F)
// of the logit link at ulpPrec bits (refExp: math/big).
func bigLogit(z float64) (F, Fc, f, fp *big.Float) {
	one := new(big.Float).SetPrec(ulpPrec).SetInt64(1)
	e := refExp(-z)
	den := new(big.Float).SetPrec(ulpPrec).Add(one, e)
	F = new(big.Float).SetPrec(ulpPrec).Quo(one, den)
	Fc = new(big.Float).SetPrec(ulpPrec).Quo(e, den)
	f = new(big.Float).SetPrec(ulpPrec).Mul(F, Fc)
	fp = new(big.Float).SetPrec(ulpPrec).Sub(Fc, F)
	fp.Mul(fp, f)
	return F, Fc, f, fp
}

// TestLogitMiddle checks the middle category of a cumulative logit model
// from the two points' exponentials (logitMiddle) over pairs a < b of the
// grid against math/big: log P with P = F(b) - F(a), f(a)/P, f(b)/P and
// the second derivatives -f'(a)/P - (f(a)/P)^2 and f'(b)/P - (f(b)/P)^2,
// each in ulps of itself (log P near 0, P near 1, and second derivatives
// of small probabilities keep their digits; subnormal values in ulps of
// the smallest normal number), and that the far tails are
// left to the log-space path with a finite log P.
func TestLogitMiddle(t *testing.T) {
	var zs []float64 // the grid's special values and every third of its steps
	for i, z := range logitGrid() {
		if i < 44 || i%3 == 0 {
			zs = append(zs, z)
		}
	}
	worst := map[string]float64{}
	fast := 0
	for _, a := range zs {
		for _, b := range zs {
			if !(b > a) || b-a < 1e-3 {
				// closer boundaries: log P is as exact as b - a rounded
				// (checked below against f((a+b)/2) (b - a))
				continue
			}
			pa, pb := newLogitPoint(a), newLogitPoint(b)
			m, ok := logitMiddle(pa, pb)
			Fa, Fca, fa, fpa := bigLogit(a)
			Fb, Fcb, fb, fpb := bigLogit(b)
			P := new(big.Float).SetPrec(ulpPrec).Sub(Fb, Fa)
			if a+b > 0 { // from the upper tails, which keep the digits there
				P.Sub(Fca, Fcb)
			}
			logP := refLog(P)
			if Q := new(big.Float).SetPrec(ulpPrec).Add(Fa, Fcb); Q.MantExp(nil) < -60 {
				// P = 1 - Q near 1: log P = -Q - Q^2/2 to 2^-120 relative
				logP.Mul(Q, Q)
				logP.Quo(logP, big.NewFloat(-2)).Sub(logP, Q)
			}
			if !ok {
				t.Fatalf("logitMiddle(%g, %g) failed, P = %v", a, b, P)
			}
			if pb.F*pa.Fc < 0x1p-900 {
				// the log-space path: log P to 1e-13
				lp, _ := refLog(P).Float64()
				if !logitNear(m.lp, lp, 1e-13) {
					t.Fatalf("log P(%g, %g) = %v, math/big %v", a, b, m.lp, lp)
				}
				continue
			}
			fast++
			ra := new(big.Float).SetPrec(ulpPrec).Quo(fa, P)
			rb := new(big.Float).SetPrec(ulpPrec).Quo(fb, P)
			haa := new(big.Float).SetPrec(ulpPrec).Quo(fpa, P)
			haa.Neg(haa).Sub(haa, new(big.Float).SetPrec(ulpPrec).Mul(ra, ra))
			hbb := new(big.Float).SetPrec(ulpPrec).Quo(fpb, P)
			hbb.Sub(hbb, new(big.Float).SetPrec(ulpPrec).Mul(rb, rb))
			for _, c := range []struct {
				what string
				got  float64
				want *big.Float
			}{{"log P", m.lp, logP}, {"f(a)/P", m.ra, ra}, {"f(b)/P", m.rb, rb}, {"d2/da2", m.haa, haa}, {"d2/db2", m.hbb, hbb}} {
				if c.what != "log P" && min(pa.e, pb.e) < 0x1p-1022 {
					// a subnormal exponential has lost its digits, and so
					// have the derivatives formed from it (below 1e-300)
					continue
				}
				e := ulpErr(c.got, c.want)
				if e > worst[c.what] {
					worst[c.what] = e
				}
				// 6 ulps, the second derivatives (which square f/P) 12;
				// b - a below 1/2 is rounded before its expm1
				lim := 6.0
				if c.what[0] == 'd' {
					lim = 12
				}
				if b-a < 0.5 {
					lim += 2 / (b - a) * math.Max(math.Abs(a), math.Abs(b))
				}
				if e > lim {
					t.Errorf("%s at (%g, %g) = %v, math/big %v: %.1f ulp", c.what, a, b, c.got, c.want, e)
				}
			}
		}
	}
	t.Logf("largest relative errors (ulp) over %d pairs: %v", fast, worst)
	if fast == 0 {
		t.Fatal("logitMiddle took no pair")
	}
	// Boundaries closer than 1e-3: P is f((a+b)/2) (b - a) (1 + O((b-a)^2)).
	for _, a := range zs {
		for _, h := range []float64{1e-4, 1e-8, 1e-12} {
			b := a + h
			if !(b > a) || math.Abs(a) > 30 {
				continue
			}
			m, ok := logitMiddle(newLogitPoint(a), newLogitPoint(b))
			lf, _ := newLogitPoint(0.5 * (a + b)).logDensity()
			if want := lf + math.Log(b-a); !ok || !logitNear(m.lp, want, 1e-7) {
				t.Fatalf("log P(%g, %g) = %v, f(mid)(b-a) gives %v", a, b, m.lp, want)
			}
		}
	}
}

// TestLogitTails checks sums of log-tails with one shared log1p
// (logitTails) against the sum of each point's own log F or log(1 - F),
// over runs of up to six points of the grid, each side.
func TestLogitTails(t *testing.T) {
	zs := logitGrid()
	for i := range zs {
		for n := 1; n <= 6 && i+n <= len(zs); n++ {
			for side := 0; side < 1<<n; side++ {
				var s logitTails
				want := 0.0
				for j, z := range zs[i : i+n] {
					p := newLogitPoint(z)
					upper := side>>j&1 == 1
					s.add(p, upper)
					if upper {
						want += p.logFc()
					} else {
						want += p.logF()
					}
				}
				if got := s.sum(); !logitNear(got, want, 1e-14) {
					t.Fatalf("tails of %v (sides %b) = %v, one by one %v", zs[i:i+n], side, got, want)
				}
			}
		}
	}
}

// TestLogitCumulativeProbs checks the category probabilities of a
// cumulative logit model (logitCumulativeProbs, through
// CategoryProbabilities) against the textbook logistic F(z) = 1/(1 + e^-z)
// and 1 - F(z) = 1/(1 + e^z), each formed directly: differences of F for
// boundaries at or below 0, of 1 - F above it (where each is exact to
// rounding and their difference loses no digits), the top category 1 -
// F; within 4e-16 of the sum of the terms (of the probability itself
// when it is one term), also where every probability but one is far in a
// tail.
func TestLogitCumulativeProbs(t *testing.T) {
	F := func(z float64) float64 { return 1 / (1 + math.Exp(-z)) }
	Fc := func(z float64) float64 { return 1 / (1 + math.Exp(z)) }
	for _, L := range [][]float64{
		{0.3}, {-2, -1, 0.5, 3}, {30, 31}, {-40, 40}, {-31, -30}, {36, 37, 40}, {-800, 0, 800}, {1e-17, 2e-17}, {-3, -2.9, -2.8},
	} {
		q := len(L)
		p := make([]float64, q+1)
		CategoryProbabilities(Cumulative, false, Logit, L, p)
		for m := 0; m <= q; m++ {
			var want, scale float64 // scale: the sum of the terms
			switch {
			case m == 0:
				want, scale = F(L[0]), F(L[0])
			case m == q:
				want, scale = Fc(L[q-1]), Fc(L[q-1])
			case L[m] <= 0:
				want, scale = F(L[m])-F(L[m-1]), F(L[m])+F(L[m-1])
			default:
				want, scale = Fc(L[m-1])-Fc(L[m]), Fc(L[m-1])+Fc(L[m])
			}
			if d := math.Abs(p[m] - want); d > 4e-16*scale {
				t.Errorf("L %v: P(y=%d) = %v, textbook %v", L, m, p[m], want)
			}
		}
	}
}

// TestLinkTailsShared checks the probit and cloglog tails that share
// their erfc and expm1 between the value and the derivatives
// (logPhiMills, Link.lower) against logPhi and millsInv and the cloglog
// value alone (logTail), bit for bit, over the grid, and the cloglog's
// first derivative u e^-u / F against u / expm1(u) with the same u
// (within 2 ulp; 1e-300 where e^u overflows).
func TestLinkTailsShared(t *testing.T) {
	for _, z := range logitGrid() {
		v, lam := logPhiMills(z)
		if wv, wl := logPhi(z), millsInv(z); math.Float64bits(v) != math.Float64bits(wv) || math.Float64bits(lam) != math.Float64bits(wl) {
			t.Fatalf("logPhiMills(%g) = %v, %v; logPhi, millsInv %v, %v", z, v, lam, wv, wl)
		}
		u := fastExp(z)
		if u == 0 {
			continue
		}
		a := u / math.Expm1(u)
		if math.IsInf(math.Expm1(u), 1) {
			a = 0
		}
		want := tail{Cloglog.logTail(z, false), a, 0}
		if got := Cloglog.lower(z); got.v != want.v || !(math.Abs(got.d1-want.d1) <= 4.5e-16*want.d1+1e-300) {
			t.Fatalf("cloglog lower(%g) = %v, one call each %v", z, got, want)
		}
	}
}

// TestLinkRatio checks the adjacent comparison's log-odds of a pair of
// categories as Link.ratio forms it for the probit, cloglog and loglog
// links (one erfc or expm1 shared by both tails, the kernels' exp and log)
// against the two tails formed apart with package math, lower(z) -
// upper(z), over the grid: the value and first derivative within 2e-15 of max(1, |x|),
// the second within 2e-15 (1 + z^2) of it (far in the probit's tails the
// second derivative is a difference of terms about z^2 apart in size, in
// either form; the cauchy's from a table of its own, TestCauchyPsiTableULP);
// and ok exactly where the fast ranges hold. (The finite
// differences of TestScoreAndInformationFiniteDifferences and the R
// cross-check's binary glm, which the adjacent model with two categories
// equals, check the derivatives and the values against outside sources.)
func TestLinkRatio(t *testing.T) {
	for _, l := range []Link{Probit, Cloglog, Loglog, Cauchy} {
		for _, z := range logitGrid() {
			v, d1, d2, ok := l.ratio(z)
			want := math.Abs(z) <= 30
			switch l {
			case Cauchy:
				want = math.Abs(z) <= cauchyFast
			case Cloglog:
				u := fastExp(z)
				want = u >= 1e-300 && u <= 700
			case Loglog:
				u := fastExp(-z)
				want = u >= 1e-300 && u <= 700
			}
			if ok != want {
				t.Fatalf("%s ratio(%g): ok %v, want %v", l, z, ok, want)
			}
			if !ok {
				continue
			}
			lo, up := l.lower(z), l.upper(z)
			for i, c := range []struct{ got, want, tol float64 }{
				{v, lo.v - up.v, 2e-15},
				{d1, lo.d1 - up.d1, 2e-15},
				{d2, lo.d2 - up.d2, 2e-15 * (1 + z*z)},
			} {
				if e := math.Abs(c.got - c.want); !(e <= c.tol*math.Max(1, math.Abs(c.want))) {
					t.Errorf("%s ratio(%g): derivative %d %.17g, from the two tails %.17g", l, z, i, c.got, c.want)
				}
			}
		}
	}
	for _, l := range []Link{Logit} {
		if _, _, _, ok := l.ratio(0.5); ok {
			t.Errorf("%s: ratio is formed for the probit, cloglog, loglog and cauchy links only", l)
		}
	}
}

// TestCloglogLowerCurvature: the cloglog lower tail's second derivative,
// d2 = a (1 - u/F) with u = e^z, a = u/(e^u - 1), F = 1 - e^-u, formed as
// -a bend(u) (u/F) so that the bracket does not cancel while u is small,
// against the same expression at 256 bits (math/big: power series where u
// is below 1, refExp beyond), for the u the code forms from z. The bracket
// written as it reads loses digits there: at z = -20 most of them, which
// this test would see (checked at the end, so that it can fail).
func TestCloglogLowerCurvature(t *testing.T) {
	const prec = 256
	// series is the sum over k >= from of u^k/k!, every term added
	// (alternate: the terms of k with the parity of from added, the
	// others subtracted), until the terms fall below the sum's last bit.
	series := func(u float64, from int, alternate bool) *big.Float {
		bu := new(big.Float).SetPrec(prec).SetFloat64(u)
		sum := new(big.Float).SetPrec(prec)
		term := new(big.Float).SetPrec(prec).SetInt64(1)
		for k := 1; k < 400; k++ {
			term.Mul(term, bu)
			term.Quo(term, new(big.Float).SetPrec(prec).SetInt64(int64(k)))
			if k < from {
				continue
			}
			if alternate && (k-from)%2 == 1 {
				sum.Sub(sum, term)
			} else {
				sum.Add(sum, term)
			}
			if sum.Sign() != 0 && term.MantExp(nil) < sum.MantExp(nil)-prec-8 {
				break
			}
		}
		return sum
	}
	ref := func(u float64) *big.Float {
		var g, F, E *big.Float // e^-u - 1 + u, 1 - e^-u, e^u - 1
		if u < 1 {
			g, F, E = series(u, 2, true), series(u, 1, true), series(u, 1, false)
		} else {
			one := new(big.Float).SetPrec(prec).SetInt64(1)
			bu := new(big.Float).SetPrec(prec).SetFloat64(u)
			em := refExp(-u)
			g = new(big.Float).SetPrec(prec).Sub(em, one)
			g.Add(g, bu)
			F = new(big.Float).SetPrec(prec).Sub(one, em)
			E = new(big.Float).SetPrec(prec).Sub(refExp(u), one)
		}
		d := new(big.Float).SetPrec(prec).Quo(new(big.Float).SetPrec(prec).SetFloat64(u), E)
		d.Mul(d, g)
		d.Quo(d, F)
		return d.Neg(d)
	}
	worst, worstZ := 0.0, 0.0
	var zs []float64
	for i := -2800; i <= 26; i++ {
		zs = append(zs, float64(i)*0.25)
	}
	zs = append(zs, -1e-8, -36.7, -745)
	for _, z := range zs {
		u := fastExp(z) // the tail's own u: the error of the formula in u
		if u == 0 || math.IsInf(math.Expm1(u), 1) {
			continue
		}
		got := Cloglog.lower(z).d2
		if e := ulpErr(got, ref(u)); e > worst {
			worst, worstZ = e, z
		}
	}
	t.Logf("cloglog lower d2: largest error %.2f ulp (z = %g)", worst, worstZ)
	if worst > 8 {
		t.Errorf("cloglog lower d2: %.2f ulp at z = %g, want at most 8", worst, worstZ)
	}
	// The bracket as it reads, at z = -20: far from the reference.
	u := math.Exp(-20.0)
	naive := u / math.Expm1(u) * (1 - u/(-math.Expm1(-u)))
	if e := ulpErr(naive, ref(u)); e < 1e3 {
		t.Errorf("a (1 - u/F) at z = -20 is within %.2g ulp: the check above would not see the cancellation", e)
	}
}
