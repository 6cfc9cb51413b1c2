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
