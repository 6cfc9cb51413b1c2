package fit

import (
	"math"
	"math/big"
	"testing"
)

// The probit table's values against math/big: log Phi(z) and phi(z)/Phi(z)
// at 400 bits, from erf's power series (its cancellation, about z^2/2 /
// log 2 bits, well within the precision for |z| <= 8.5) and exp by its
// series, pi by Machin's formula.

const normPrec = 400

func bigN(x float64) *big.Float { return new(big.Float).SetPrec(normPrec).SetFloat64(x) }

// bigAtanInv is atan(1/n) by its series.
func bigAtanInv(n int64) *big.Float {
	x := new(big.Float).SetPrec(normPrec).Quo(bigN(1), bigN(float64(n)))
	x2 := new(big.Float).SetPrec(normPrec).Mul(x, x)
	sum := new(big.Float).SetPrec(normPrec).Set(x)
	pw := new(big.Float).SetPrec(normPrec).Set(x)
	for k := int64(3); k < 2000; k += 2 {
		pw.Mul(pw, x2)
		t := new(big.Float).SetPrec(normPrec).Quo(pw, bigN(float64(k)))
		if (k/2)%2 == 1 {
			sum.Sub(sum, t)
		} else {
			sum.Add(sum, t)
		}
		if t.MantExp(nil) < -normPrec-10 {
			break
		}
	}
	return sum
}

// bigPi is pi = 16 atan(1/5) - 4 atan(1/239).
func bigPi() *big.Float {
	a := bigAtanInv(5)
	a.Mul(a, bigN(16))
	b := bigAtanInv(239)
	b.Mul(b, bigN(4))
	return a.Sub(a, b)
}

// bigExpNeg is e^-x for 0 <= x < 64 by its series at x/2^8, squared 8
// times.
func bigExpNeg(x *big.Float) *big.Float {
	r := new(big.Float).SetPrec(normPrec + 64).Neg(x)
	r.SetMantExp(r, -8)
	sum := new(big.Float).SetPrec(normPrec + 64).SetInt64(1)
	term := new(big.Float).SetPrec(normPrec + 64).SetInt64(1)
	for k := int64(1); k < 200; k++ {
		term.Mul(term, r)
		term.Quo(term, new(big.Float).SetInt64(k))
		sum.Add(sum, term)
		if term.Sign() == 0 || term.MantExp(nil) < -normPrec-70 {
			break
		}
	}
	for i := 0; i < 8; i++ {
		sum.Mul(sum, sum)
	}
	return sum
}

// bigNormTail returns log Phi(z) and phi(z)/Phi(z) at normPrec bits.
func bigNormTail(z float64, pi *big.Float) (logP, lam *big.Float) {
	// erf(t), t = |z|/sqrt2: (2/sqrt(pi)) sum (-1)^n t^(2n+1) / (n! (2n+1))
	t := new(big.Float).SetPrec(normPrec).Sqrt(bigN(2))
	t.Quo(bigN(math.Abs(z)), t)
	t2 := new(big.Float).SetPrec(normPrec).Mul(t, t)
	sum := new(big.Float).SetPrec(normPrec).Set(t)
	pw := new(big.Float).SetPrec(normPrec).Set(t) // t^(2n+1)/n!
	tt, _ := t2.Float64()
	for n := int64(1); n < 5000; n++ {
		pw.Mul(pw, t2)
		pw.Quo(pw, bigN(float64(n)))
		term := new(big.Float).SetPrec(normPrec).Quo(pw, bigN(float64(2*n+1)))
		if n%2 == 1 {
			sum.Sub(sum, term)
		} else {
			sum.Add(sum, term)
		}
		// past the largest term (n > t^2), and below the precision
		if float64(n) > tt && term.MantExp(nil) < -normPrec-10 {
			break
		}
	}
	sqrtPi := new(big.Float).SetPrec(normPrec).Sqrt(pi)
	erf := sum.Mul(sum, bigN(2))
	erf.Quo(erf, sqrtPi)
	P := new(big.Float).SetPrec(normPrec)
	if z <= 0 {
		P.Sub(bigN(1), erf)
	} else {
		P.Add(bigN(1), erf)
	}
	P.Quo(P, bigN(2))
	half := new(big.Float).SetPrec(normPrec).Mul(bigN(z), bigN(z))
	half.Quo(half, bigN(2))
	phi := bigExpNeg(half)
	s2pi := new(big.Float).SetPrec(normPrec).Mul(pi, bigN(2))
	s2pi.Sqrt(s2pi)
	phi.Quo(phi, s2pi)
	lam = new(big.Float).SetPrec(normPrec).Quo(phi, P)
	return bigLog(P, normPrec), lam
}

// TestProbitTableULP measures probitNear's log Phi and phi/Phi against
// math/big (bigNormTail) over [-8.5, 8.5]: 2001 points and the ends of
// the intervals between centres near 0, 2 and +-8. The largest errors, in
// ulps of the exact values (log Phi near 0, about -(1 - Phi), in ulps of
// itself too), are logged (3.2 and 4.0 ulp when written); the test fails
// above 5 ulp.
func TestProbitTableULP(t *testing.T) {
	pi := bigPi()
	if f, _ := pi.Float64(); f != math.Pi {
		t.Fatalf("pi = %v", f)
	}
	var zs []float64
	for i := -1000; i <= 1000; i++ {
		zs = append(zs, float64(i)*probitFast/1000)
	}
	for _, c := range []float64{0, 2, 8, -8} {
		for _, d := range []float64{-1.0 / 64, 1.0 / 64} {
			zs = append(zs, c+d, math.Nextafter(c+d, c))
		}
	}
	var worstV, worstL float64
	var atV, atL float64
	for _, z := range zs {
		v, lam := probitNear(z, false)
		rv, rl := bigNormTail(z, pi)
		if e := ulpErr(v, rv); e > worstV {
			worstV, atV = e, z
		}
		if e := ulpErr(lam, rl); e > worstL {
			worstL, atL = e, z
		}
	}
	t.Logf("probit table against math/big: log Phi within %.2f ulp (at %g), phi/Phi within %.2f ulp (at %g)", worstV, atV, worstL, atL)
	if worstV > 5 || worstL > 5 {
		t.Errorf("probit table: log Phi %.2f ulp at %g, phi/Phi %.2f ulp at %g (limit 5)", worstV, atV, worstL, atL)
	}
}

// The cauchy table's values against math/big: F(z) = 1/2 + atan(z)/pi
// at 400 bits, atan by its series after halving the argument
// (atan x = 2 atan(x / (1 + sqrt(1 + x^2))), four times, and atan x =
// pi/2 - atan(1/x) beyond 1), pi by Machin's formula (bigPi), log F by
// bigLog.

// bigAtan is atan(x) at normPrec bits.
func bigAtan(x float64, pi *big.Float) *big.Float {
	if x < 0 {
		return new(big.Float).Neg(bigAtan(-x, pi))
	}
	if x > 1 {
		// atan x = pi/2 - atan(1/x), 1/x at normPrec bits
		inv := new(big.Float).SetPrec(normPrec).Quo(bigN(1), bigN(x))
		r := new(big.Float).SetPrec(normPrec).Quo(pi, bigN(2))
		return r.Sub(r, bigAtanBig(inv))
	}
	return bigAtanBig(bigN(x))
}

// bigAtanBig is atan(x) for 0 <= x <= 1: x halved four times (then at
// most tan(pi/64), 0.05), the series x - x^3/3 + x^5/5 - ..., doubled
// back.
func bigAtanBig(x *big.Float) *big.Float {
	y := new(big.Float).SetPrec(normPrec).Set(x)
	for i := 0; i < 4; i++ {
		s := new(big.Float).SetPrec(normPrec).Mul(y, y)
		s.Add(s, bigN(1))
		s.Sqrt(s)
		s.Add(s, bigN(1))
		y.Quo(y, s)
	}
	y2 := new(big.Float).SetPrec(normPrec).Mul(y, y)
	sum := new(big.Float).SetPrec(normPrec).Set(y)
	pw := new(big.Float).SetPrec(normPrec).Set(y)
	for k := int64(3); y.Sign() != 0; k += 2 {
		pw.Mul(pw, y2)
		t := new(big.Float).SetPrec(normPrec).Quo(pw, bigN(float64(k)))
		if (k/2)%2 == 1 {
			sum.Sub(sum, t)
		} else {
			sum.Add(sum, t)
		}
		if t.MantExp(nil) < sum.MantExp(nil)-normPrec-10 {
			break
		}
	}
	return sum.SetMantExp(sum, 4) // times 2^4
}

// bigCauchyTail returns log F(z), lam = f(z)/F(z) and lam' = f'/F - lam^2
// at normPrec bits under the cauchy link.
func bigCauchyTail(z float64, pi *big.Float) (logF, lam, dlam *big.Float) {
	F := new(big.Float).SetPrec(normPrec).Quo(bigAtan(z, pi), pi)
	F.Add(F, new(big.Float).SetPrec(normPrec).Quo(bigN(1), bigN(2)))
	q := new(big.Float).SetPrec(normPrec).Mul(bigN(z), bigN(z))
	q.Add(q, bigN(1)) // 1 + z^2
	f := new(big.Float).SetPrec(normPrec).Mul(pi, q)
	f.Quo(bigN(1), f)
	lam = new(big.Float).SetPrec(normPrec).Quo(f, F)
	// f' = -2 z f / (1 + z^2)
	fp := new(big.Float).SetPrec(normPrec).Mul(f, bigN(-2*z))
	fp.Quo(fp, q)
	dlam = new(big.Float).SetPrec(normPrec).Quo(fp, F)
	dlam.Sub(dlam, new(big.Float).SetPrec(normPrec).Mul(lam, lam))
	return bigLog(F, normPrec), lam, dlam
}

// TestCauchyPsiTableULP measures Link.ratio's cauchy psi = log F(z) -
// log F(-z) and its two derivatives (cauchyPsi, a table of its own)
// against math/big (bigCauchyTail at z and -z) at the points of
// TestCauchyTableULP, and the two tails' difference (cauchyNear at z and
// -z, as Link.psi formed it before) beside it. Errors in ulps of the
// larger of the two terms (psi and psi” change sign; psi' is a sum of
// two positive terms; for psi” the terms are lam' at z and -z, each
// scaled as TestCauchyTableULP scales it). Fails above 8 ulp.
func TestCauchyPsiTableULP(t *testing.T) {
	pi := bigPi()
	var zs []float64
	for i := -1000; i <= 1000; i++ {
		zs = append(zs, float64(i)*cauchyFast/1000)
	}
	for _, c := range []float64{0, 1, -1, 8, -8} {
		for _, d := range []float64{-1.0 / 64, 1.0 / 64} {
			if z := c + d; math.Abs(z) <= cauchyFast {
				zs = append(zs, z, math.Nextafter(z, c))
			}
		}
	}
	zs = append(zs, cauchyFast, -cauchyFast, 0.5/probitPerUnit, -0.5/probitPerUnit)
	// inUlps is |got - ref| in ulps of scale (as ulpErr counts them).
	inUlps := func(got float64, ref, scale *big.Float) float64 {
		e := new(big.Float).SetPrec(normPrec).Sub(bigN(got), ref)
		e.Abs(e)
		e.SetMantExp(e, 53-scale.MantExp(nil))
		f, _ := e.Float64()
		return f
	}
	larger := func(a, b *big.Float) *big.Float {
		a, b = new(big.Float).Abs(a), new(big.Float).Abs(b)
		if a.Cmp(b) < 0 {
			return b
		}
		return a
	}
	var worst, worstTails [3]float64
	var at [3]float64
	for _, z := range zs {
		v, d1, d2, ok := Cauchy.ratio(z)
		if !ok {
			t.Fatalf("ratio(%g) not formed", z)
		}
		lv, ll, ld := cauchyNear(z, 2)
		uv, ul, ud := cauchyNear(-z, 2)
		av, al, ad := bigCauchyTail(z, pi)
		bv, bl, bd := bigCauchyTail(-z, pi)
		rv := new(big.Float).SetPrec(normPrec).Sub(av, bv)
		r1 := new(big.Float).SetPrec(normPrec).Add(al, bl)
		r2 := new(big.Float).SetPrec(normPrec).Sub(ad, bd)
		// lam' = f'/F - lam^2: its scale the larger of its terms
		dscale := func(l, d *big.Float) *big.Float {
			l2 := new(big.Float).SetPrec(normPrec).Mul(l, l)
			return larger(new(big.Float).SetPrec(normPrec).Add(d, l2), l2)
		}
		scales := []*big.Float{larger(av, bv), r1, larger(dscale(al, ad), dscale(bl, bd))}
		for i, c := range []struct {
			got, tails float64
			ref        *big.Float
		}{{v, lv - uv, rv}, {d1, ll + ul, r1}, {d2, ld - ud, r2}} {
			e := inUlps(c.got, c.ref, scales[i])
			if e > worst[i] {
				worst[i], at[i] = e, z
			}
			worstTails[i] = max(worstTails[i], inUlps(c.tails, c.ref, scales[i]))
		}
	}
	t.Logf("cauchy psi table against math/big: psi within %.2f ulp of its larger term (at %g; the two tails' difference %.2f), psi' within %.2f ulp (at %g; %.2f), psi'' within %.2f ulp of its larger term (at %g; %.2f)",
		worst[0], at[0], worstTails[0], worst[1], at[1], worstTails[1], worst[2], at[2], worstTails[2])
	if worst[0] > 8 || worst[1] > 8 || worst[2] > 8 {
		t.Errorf("cauchy psi table: %.2f, %.2f, %.2f ulp (limit 8)", worst[0], worst[1], worst[2])
	}
}

// TestCauchyTableULP measures cauchyNear's log F, f/F and its derivative
// against math/big (bigCauchyTail) over [-8, 8]: 2001 points and the
// ends of the intervals between centres near 0 and +-8. The largest
// errors, in ulps of the exact values (the derivative, f'/F - lam^2, in
// ulps of the larger of its two terms: it changes sign), are logged; the
// test fails above 5 ulp.
func TestCauchyTableULP(t *testing.T) {
	pi := bigPi()
	if v, _ := bigAtan(1, pi).Float64(); v != math.Pi/4 {
		t.Fatalf("atan(1) = %v", v)
	}
	if v, _ := bigAtan(-3, pi).Float64(); v != math.Atan(-3) {
		t.Fatalf("atan(-3) = %v, package math %v", v, math.Atan(-3))
	}
	var zs []float64
	for i := -1000; i <= 1000; i++ {
		zs = append(zs, float64(i)*cauchyFast/1000)
	}
	for _, c := range []float64{0, 1, -1, 8, -8} {
		for _, d := range []float64{-1.0 / 64, 1.0 / 64} {
			if z := c + d; math.Abs(z) <= cauchyFast {
				zs = append(zs, z, math.Nextafter(z, c))
			}
		}
	}
	var worst [3]float64
	var at [3]float64
	for _, z := range zs {
		v, lam, dlam := cauchyNear(z, 2)
		rv, rl, rd := bigCauchyTail(z, pi)
		// the derivative's scale: the larger of |f'/F| and lam^2
		rl2 := new(big.Float).SetPrec(normPrec).Mul(rl, rl)
		scale := new(big.Float).SetPrec(normPrec).Add(rd, rl2)
		scale.Abs(scale)
		if scale.Cmp(rl2) < 0 {
			scale = rl2
		}
		// |dlam - rd| in ulps of scale (as ulpErr counts them)
		de := new(big.Float).SetPrec(normPrec).Sub(bigN(dlam), rd)
		de.Abs(de)
		de.SetMantExp(de, 53-scale.MantExp(nil))
		ed, _ := de.Float64()
		for i, e := range []float64{ulpErr(v, rv), ulpErr(lam, rl), ed} {
			if e > worst[i] {
				worst[i], at[i] = e, z
			}
		}
	}
	t.Logf("cauchy table against math/big: log F within %.2f ulp (at %g), f/F within %.2f ulp (at %g), its derivative within %.2f ulp of its larger term (at %g)", worst[0], at[0], worst[1], at[1], worst[2], at[2])
	if worst[0] > 5 || worst[1] > 5 || worst[2] > 5 {
		t.Errorf("cauchy table: log F %.2f ulp at %g, f/F %.2f ulp at %g, derivative %.2f ulp at %g (limit 5)", worst[0], at[0], worst[1], at[1], worst[2], at[2])
	}
}
