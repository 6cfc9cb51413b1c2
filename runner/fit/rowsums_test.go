package fit

import (
	"math"
	"testing"
)

// TestRowSumsSameAsCrossProducts checks the sums of a block of parallel
// effects (rowsums.go: the constant's column sums, the row weights by the
// shape of the pairs) against the general forms they replace, the
// cross-products with a column of ones and the row weights summed pair by
// pair, to the last bit: every comparison, observed and expected
// information, rows of zero weight, a block shorter than blockRows.
func TestRowSumsSameAsCrossProducts(t *testing.T) {
	for _, c := range []Comparison{Cumulative, Stage, Adjacent} {
		for _, J := range []int{2, 3, 5, 7} {
			for _, expected := range []bool{false, true} {
				d := speedData(3001, 4, J)
				d.Weights = make([]float64, len(d.Y))
				for i := range d.Weights {
					d.Weights[i] = float64(i % 3)
				}
				m := speedModel(c, Parallel, 4)
				m.Link = Probit
				p, theta := atMarginalCutpoints(t, d, m)
				for i := J - 1; i < len(theta); i++ {
					theta[i] = 0.1 * float64(i%3-1)
				}
				co := p.coefs(theta)
				s := p.newScratch()
				rows := len(d.Y)
				p.blockColumns(co, 0, rows, s)
				p.blockLinear(co, 0, rows, true, s)
				got := p.newAcc(2)
				if !p.blockKernels(co, 0, rows, 2, expected, got, s) {
					t.Fatal("kernel failed")
				}
				p.blockScore(0, rows, got, s)
				p.blockInformation(0, rows, got, s)

				// The general forms: the constant as a column of ones, the
				// row weights pair by pair.
				q, kp := p.q, len(p.parCols)
				ones := make([]float64, rows)
				for i := range ones {
					ones[i] = 1
				}
				want := p.newAcc(2)
				fullCross(want.V, 1, s.gs, q, ones, 1, rows, nil)
				for pi := range p.pairs {
					symCross(want.S[pi], 1, ones, 1, rows, s.hp[pi*rows:(pi+1)*rows])
				}
				shape := p.shape
				p.shape = densePairs
				wt, rl := p.rowWeights(rows, s)
				p.shape = shape
				fullCrossAt(want.R, q, s.xpv, s.xpStride, kp, rl, rows, q, rows, nil)
				symCrossAt(want.T, kp, s.xpv, s.xpStride, kp, rows, wt)
				same := func(what string, a, b []float64) {
					for i := range a {
						if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
							t.Fatalf("%v J=%d expected=%v: %s[%d] = %v, the general form %v", c, J, expected, what, i, a[i], b[i])
						}
					}
				}
				same("V", got.V, want.V)
				for pi := range p.pairs {
					same("S", got.S[pi], want.S[pi])
				}
				same("R", got.R, want.R)
				same("T", got.T, want.T)
			}
		}
	}
}
