package fit

import (
	"math"
	"testing"
)

// TestLogitSharedExponentials checks that the logit quantities formed from
// one exponential and one logarithm per point equal, bit for bit, those of
// the link's general functions, over a grid reaching far into both tails
// and the values next to 0.
func TestLogitSharedExponentials(t *testing.T) {
	var zs []float64
	for _, z := range []float64{0, math.Copysign(0, -1), 1e-300, 1e-17, 1e-16, 5e-16, 1e-15, 2e-15, 1e-8, 0.3, 1, 2.5, 17, 36, 37, 40, 300, 709, 745, 800} {
		zs = append(zs, z, -z)
	}
	for i := -200; i <= 200; i++ {
		zs = append(zs, float64(i)*0.173)
	}
	same := func(what string, z, got, want float64) {
		if math.Float64bits(got) != math.Float64bits(want) && !(math.IsNaN(got) && math.IsNaN(want)) {
			t.Fatalf("%s(%g) = %v, general path %v", what, z, got, want)
		}
	}
	for _, z := range zs {
		p := newLogitPoint(z)
		same("logF", z, p.logF(), Logit.lower(z).v)
		same("logFc", z, p.logFc(), Logit.upper(z).v)
		F, Fc := p.probs()
		wF, wFc := logistic(z)
		same("F", z, F, wF)
		same("Fc", z, Fc, wFc)
		lf, r := p.logDensity()
		wlf, wr := Logit.logDensity(z)
		same("log f", z, lf, wlf)
		same("f'/f", z, r, wr)
	}
	for _, a := range zs {
		for _, b := range zs {
			if !(b > a) {
				continue
			}
			same("logDiff", a, logitDiff(newLogitPoint(a), newLogitPoint(b)), logDiffCDF(Logit, a, b))
		}
	}
}
