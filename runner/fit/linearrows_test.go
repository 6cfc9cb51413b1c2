package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestLinearWithoutColumns: an evaluation of the log-likelihood alone
// forms x'b from the rows without copying the parallel columns into the
// block (gatherRows without a destination), the evaluations with
// derivatives in the same sweep as the copy; at the same point all give
// the same log-likelihood, and the score and second-order evaluations the
// same score, bit for bit. Generated, seeded rows over several blocks,
// with and without weights and offsets; parallel, partial and binary
// models, and group indicators held by group (the Lipsitz refit's data).
func TestLinearWithoutColumns(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 9))
	n, K, G := 3*blockRows+77, 4, 5
	for _, J := range []int{2, 4} {
		base := &Data{J: J, Y: make([]int, n), X: make([]float64, n*K)}
		for k := 0; k < K; k++ {
			base.Predictors = append(base.Predictors, fmt.Sprintf("x%d", k+1))
		}
		for i := 0; i < n; i++ {
			base.Y[i] = rng.IntN(J)
			for k := 0; k < K; k++ {
				base.X[i*K+k] = float64(k) + rng.NormFloat64()
			}
		}
		group := make([]int, n)
		for i := range group {
			group[i] = rng.IntN(G)
		}
		weights, offset := make([]float64, n), make([]float64, n)
		for i := range weights {
			weights[i], offset[i] = rng.ExpFloat64(), 0.3*rng.NormFloat64()
		}
		for _, v := range []struct {
			name           string
			weights, inds  bool
			offset, single bool
		}{{"plain", false, false, false, false}, {"weights, offset", true, false, true, false},
			{"indicators", false, true, false, false}, {"indicators, weights", true, true, false, false},
			{"one predictor of its own", false, false, false, true}} {
			d := *base
			d.Predictors = slices.Clone(base.Predictors)
			if v.weights {
				d.Weights = weights
			}
			if v.offset {
				d.Offset = offset
			}
			if v.inds {
				d.ind = &indicators{group: group, count: G - 1}
				for g := 1; g < G; g++ {
					d.Predictors = append(d.Predictors, fmt.Sprintf("g%d", g))
				}
			}
			effects := allEffects(len(d.Predictors), Parallel)
			if v.single && J > 2 {
				effects[1] = Nonparallel
			}
			m := Model{Comparison: Cumulative, Link: Logit, Effects: effects}
			ly, err := newLayout(m, d.J, d.Predictors)
			if err != nil {
				t.Fatal(err)
			}
			p := newProblem(d.design(), m, ly, 0)
			theta := make([]float64, len(ly.params))
			copy(theta, marginalCutpoints(&d, m))
			for i := d.J - 1; i < len(theta); i++ {
				theta[i] = 0.07 * float64(i%5-2)
			}
			one, two := p.evaluate(theta, 1, false), p.evaluate(theta, 2, false)
			zero := p.evaluate(theta, 0, false)
			same := math.Float64bits(one.ll) == math.Float64bits(two.ll) && math.Float64bits(zero.ll) == math.Float64bits(two.ll) &&
				bitsEqual(one.V, two.V) && bitsEqual(one.Vp, two.Vp)
			if !same {
				t.Errorf("J=%d %s: ll alone %v; score alone ll %v V %v Vp %v; with second derivatives ll %v V %v Vp %v", J, v.name, zero.ll, one.ll, one.V, one.Vp, two.ll, two.V, two.Vp)
			}
		}
	}
}
