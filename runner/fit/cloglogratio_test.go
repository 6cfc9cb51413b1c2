package fit

import (
	"fmt"
	"math"
	"math/big"
	"testing"
)

// TestCloglogRatioSmallBig checks Link.ratio's cloglog psi = log(e^u - 1),
// u = e^z, and its two derivatives in z against math/big (normtail_test.go's
// bigExpNeg and bigLog at 400 bits; psi = z + log((e^u - 1)/u), psi' =
// u/(1 - e^-u), psi” = psi' (e^u - 1 - u)/(e^u - 1)) from e^z of 1e-300 up to
// past the switch to the tails' formulas at u = 1, where the series in
// u (cloglogRatioSmall) takes over (densely for u from e^-8 to 1), and the
// loglog's as its mirror image.
// Tolerances: 4e-16 (|psi| + psi') for psi and 4e-16 (psi' + psi”) for
// psi' (u's rounding times the derivative, plus psi's own), 1e-15 |psi”|
// for psi”.
func TestCloglogRatioSmallBig(t *testing.T) {
	bigExp := func(z float64) *big.Float { // e^z for z < 64
		if z >= 0 {
			e := bigExpNeg(bigN(z))
			return e.Quo(bigN(1), e)
		}
		r := new(big.Float).SetPrec(normPrec).SetInt64(1)
		for z < -32 {
			r.Mul(r, bigExpNeg(bigN(32)))
			z += 32
		}
		return r.Mul(r, bigExpNeg(bigN(-z)))
	}
	var zs []float64
	for i := -690 * 4; i <= 4; i++ {
		zs = append(zs, float64(i)/4)
	}
	sw := 0.0 // u = 1
	for _, z := range []float64{sw, math.Log(1e-300), -1e-8, 1e-8, -0.3, -0.5, math.Log(0.5)} {
		zs = append(zs, z, math.Nextafter(z, -1), math.Nextafter(z, 1),
			math.Nextafter(math.Nextafter(z, -1), -1), math.Nextafter(math.Nextafter(z, 1), 1))
	}
	for z := sw - 0.01; z < sw+0.01; z += 0.0007 {
		zs = append(zs, z)
	}
	// Densely where the series' terms matter (u from e^-8 to 1: the
	// sums' order of evaluation, Estrin's scheme, shows there).
	for i := -4000; i < 0; i++ {
		zs = append(zs, float64(i)/500+0.0001)
	}
	var worst [3]float64
	var worstAt [3]string
	small := 0
	for _, z := range zs {
		v, d1, d2, ok := Cloglog.ratio(z)
		if !ok {
			if fastExp(z) >= 1e-300 {
				t.Errorf("ratio(%g) not done", z)
			}
			continue
		}
		if fastExp(z) < 1 {
			small++
		}
		lv, ld1, ld2, lok := Loglog.ratio(-z)
		if !lok || lv != -v || ld1 != d1 || ld2 != -d2 {
			t.Errorf("loglog ratio(%g) = %g %g %g, not the cloglog's at %g mirrored: %g %g %g", -z, lv, ld1, ld2, z, v, d1, d2)
		}
		u := bigExp(z)
		// e^u - 1 = u + rest, rest by its series from u^2/2 (u < 64, 400
		// bits; psi'' takes rest itself, which 1 - u/(e^u - 1) would lose
		// where u is tiny).
		rest := new(big.Float).SetPrec(normPrec)
		term := new(big.Float).SetPrec(normPrec).Set(u)
		for k := int64(2); k < 2000; k++ {
			term.Mul(term, u)
			term.Quo(term, new(big.Float).SetInt64(k))
			rest.Add(rest, term)
			if term.Sign() == 0 || term.MantExp(nil)-rest.MantExp(nil) < -normPrec-10 {
				break
			}
		}
		em1 := new(big.Float).SetPrec(normPrec).Add(u, rest)
		q := new(big.Float).SetPrec(normPrec).Quo(em1, u)
		wv := bigLog(q, normPrec)
		wv.Add(wv, bigN(z))
		e := new(big.Float).SetPrec(normPrec).Add(em1, bigN(1))
		wd1 := new(big.Float).SetPrec(normPrec).Mul(u, e)
		wd1.Quo(wd1, em1)
		wd2 := new(big.Float).SetPrec(normPrec).Quo(rest, em1)
		wd2.Mul(wd2, wd1)
		fv, _ := wv.Float64()
		f1, _ := wd1.Float64()
		f2, _ := wd2.Float64()
		errs := [3]float64{
			math.Abs(v-fv) / (4e-16 * (math.Abs(fv) + f1)),
			math.Abs(d1-f1) / (4e-16 * (f1 + math.Abs(f2))),
			math.Abs(d2-f2) / (1e-15 * math.Abs(f2)),
		}
		for i, x := range errs {
			if !(x <= 1) {
				t.Errorf("cloglog ratio(%v) part %d = %v %v %v, want %v %v %v (%.3g of its tolerance)", z, i, v, d1, d2, fv, f1, f2, x)
			}
			if x > worst[i] {
				worst[i], worstAt[i] = x, fmt.Sprint(z)
			}
		}
	}
	if small < 1000 {
		t.Fatalf("only %d points below the switch", small)
	}
	t.Logf("%d points, %d below u = 1; largest errors (of tolerance): psi %.3g at z = %s, psi' %.3g at %s, psi'' %.3g at %s",
		len(zs), small, worst[0], worstAt[0], worst[1], worstAt[1], worst[2], worstAt[2])
}
