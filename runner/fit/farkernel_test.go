package fit

import (
	"math"
	"testing"
)

// TestKernelDerivativesFiniteFar: wherever a row's log-probability is
// finite, its first and second derivatives in the linear predictors are
// finite, for every comparison, link and category, with linear predictors
// as far out as 800 (beyond 709.78 the cloglog's e^z, and the loglog's
// e^-z, overflow). A NaN second derivative used to send the Newton
// iterations of a diverging cloglog fit through a failed eigenvalue
// decomposition at every step (seconds a fit). Where the cloglog's
// density underflows at b, log P = log(1 - F(a)) = -e^a exactly, so the
// second derivative in b is 0 and in a is -e^a (the closed form of the
// cloglog's survival function).
func TestKernelDerivativesFiniteFar(t *testing.T) {
	far := []float64{-800, -709.9, -300, -40, -3, 0, 2, 40, 300, 709.9, 800}
	for _, cmp := range []Comparison{Cumulative, Stage, Adjacent} {
		for _, l := range allLinks {
			for _, back := range []bool{false, true} {
				if back && cmp != Stage {
					continue
				}
				k := &kernel{cmp: cmp, backward: back, link: l, nEq: 2}
				for _, a := range far {
					for _, b := range far {
						if cmp == Cumulative && !(b > a) {
							continue
						}
						L := []float64{a, b}
						for c := 0; c <= 2; c++ {
							g, h := make([]float64, 2), make([]float64, 4)
							lp, ok := k.eval(L, c, g, h)
							if !ok || math.IsInf(lp, 0) || math.IsNaN(lp) {
								continue
							}
							for _, v := range append(g, h...) {
								if math.IsNaN(v) || math.IsInf(v, 0) {
									t.Errorf("%v %v back=%v L=%v category %d: log P %g, score %v, second derivatives %v", cmp, l, back, L, c, lp, g, h)
									break
								}
							}
						}
					}
				}
			}
		}
	}
	k := &kernel{cmp: Cumulative, link: Cloglog, nEq: 2}
	g, h := make([]float64, 2), make([]float64, 4)
	a := 1.5
	lp, ok := k.eval([]float64{a, 800}, 1, g, h)
	if !ok || !near(lp, -math.Exp(a), 1e-15, 0) || h[3] != 0 || g[1] != 0 || !near(h[0], -math.Exp(a), 1e-12, 0) {
		t.Errorf("cloglog middle category below a boundary at 800: log P %g (want %g), score %v, second derivatives %v (want [%g 0 0 0])", lp, -math.Exp(a), g, h, -math.Exp(a))
	}
}
