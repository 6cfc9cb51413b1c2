package fit

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestBlockKernelsAsGeneral checks the block kernels written straight into
// the block's columns (cumulativeKernels, cumulativeLogitKernels,
// binaryKernels, tailKernels, adjacentKernels) against the general kernel (kernel.eval, row by row,
// weighted as blockKernels weights it): the same log-likelihood, smallest
// log-probability, first and second derivatives, bit for bit, with
// weights of 0, fractions and whole numbers, per-equation and parallel
// slopes.
func TestBlockKernelsAsGeneral(t *testing.T) {
	for _, tc := range []struct {
		name     string
		c        Comparison
		backward bool
	}{
		{"cumulative", Cumulative, false},
		{"stage", Stage, false},
		{"stage backward", Stage, true},
		{"stacked", stackedBinary, false},
		{"adjacent", Adjacent, false},
	} {
		for J := 2; J <= 6; J++ {
			const n, K = 1500, 3
			d := speedData(n, K, J)
			rng := rand.New(rand.NewPCG(7, uint64(J)))
			d.Weights = make([]float64, n)
			for i := range d.Weights {
				d.Weights[i] = []float64{0, 0.25, 1, 3}[rng.IntN(4)]
			}
			m := Model{Comparison: tc.c, Backward: tc.backward, Link: Logit, Effects: []Effect{Parallel, Nonparallel, Parallel}}
			p, theta := atMarginalCutpoints(t, d, m)
			if tc.c != Cumulative {
				for i := range theta[:J-1] {
					theta[i] += rng.NormFloat64()
				}
			}
			spread := 0.4 // the slopes' spread (cumulative: small, so that the L_m stay in order)
			if tc.c == Cumulative {
				spread = 0.02
			}
			for i := J - 1; i < len(theta); i++ {
				theta[i] = spread * rng.NormFloat64()
			}
			c := p.coefs(theta)
			for order := 0; order <= 2; order++ {
				s := p.newScratch()
				p.blockColumns(c, 0, n, s)
				p.blockLinear(c, 0, n, order >= 1, s)
				a := p.newAcc(0)
				if !p.blockKernels(c, 0, n, order, false, a, s) {
					t.Fatalf("%s J=%d: kernel failed", tc.name, J)
				}
				// The general kernel, row by row.
				q := p.q
				ll, minLP := 0.0, math.Inf(1)
				g, h, L := make([]float64, q), make([]float64, q*q), make([]float64, q)
				for i := 0; i < n; i++ {
					w := d.Weights[i]
					if w == 0 {
						for mm := 0; mm < q && order >= 1; mm++ {
							if v := s.gs[mm*n+i]; v != 0 {
								t.Fatalf("%s J=%d row %d (weight 0): g[%d] = %v", tc.name, J, i, mm, v)
							}
						}
						for pi := range p.pairs {
							if order < 2 {
								break
							}
							if v := s.hp[pi*n+i]; v != 0 {
								t.Fatalf("%s J=%d row %d (weight 0): h of pair %d = %v", tc.name, J, i, pi, v)
							}
						}
						continue
					}
					for mm := range L {
						L[mm] = c.tau[mm] - s.eta[mm*s.etaStride+i]
					}
					lp, ok := p.ker.eval(L, d.Y[i], g, h)
					if !ok {
						t.Fatalf("%s J=%d row %d: general kernel failed", tc.name, J, i)
					}
					ll += w * lp
					minLP = math.Min(minLP, lp)
					for mm := 0; mm < q && order >= 1; mm++ {
						if got, want := s.gs[mm*n+i], w*g[mm]; math.Float64bits(got) != math.Float64bits(want) {
							t.Fatalf("%s J=%d order %d row %d: g[%d] = %v, general %v", tc.name, J, order, i, mm, got, want)
						}
					}
					for pi, pr := range p.pairs {
						if order < 2 {
							break
						}
						if got, want := s.hp[pi*n+i], w*h[pr[0]*q+pr[1]]; math.Float64bits(got) != math.Float64bits(want) {
							t.Fatalf("%s J=%d row %d: h[%d,%d] = %v, general %v", tc.name, J, i, pr[0], pr[1], got, want)
						}
					}
				}
				if a.ll != ll || a.minLP != minLP {
					t.Errorf("%s J=%d order %d: ll %v min %v, general %v %v", tc.name, J, order, a.ll, a.minLP, ll, minLP)
				}
			}
		}
	}
}
