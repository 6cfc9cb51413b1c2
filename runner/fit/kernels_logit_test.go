package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// TestBlockKernelsAsGeneral checks the block kernels written straight into
// the block's columns (cumulativeKernels, cumulativeLogitKernels,
// binaryKernels, tailKernels, stageKernels, adjacentKernels) against the
// general kernel (kernel.eval, row by row, weighted as blockKernels
// weights it): the same log-likelihood, smallest log-probability, first
// and second derivatives, bit for bit, with weights of 0, fractions and
// whole numbers, per-equation and parallel slopes, under every link.
func TestBlockKernelsAsGeneral(t *testing.T) {
	for _, link := range []Link{Logit, Probit, Cloglog, Loglog, Cauchy} {
		testBlockKernelsAsGeneral(t, link)
	}
}

func testBlockKernelsAsGeneral(t *testing.T, link Link) {
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
		for _, J := range []int{2, 3, 4, 5, 6, 20} {
			const n, K = 1500, 3
			d := speedData(n, K, J)
			rng := rand.New(rand.NewPCG(7, uint64(J)))
			d.Weights = make([]float64, n)
			for i := range d.Weights {
				d.Weights[i] = []float64{0, 0.25, 1, 3}[rng.IntN(4)]
			}
			m := Model{Comparison: tc.c, Backward: tc.backward, Link: link, Effects: []Effect{Parallel, Nonparallel, Parallel}}
			p, theta := atMarginalCutpoints(t, d, m)
			if tc.c != Cumulative {
				for i := range theta[:J-1] {
					theta[i] += rng.NormFloat64()
				}
			}
			spread := 0.4 // the slopes' spread (cumulative: small, so that the L_m stay in order)
			if tc.c == Cumulative {
				spread = 0.02
				if link != Logit {
					// the other links' marginal cutpoints lie closer
					spread = 0.005
				}
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
					t.Fatalf("%s %s J=%d: kernel failed", link, tc.name, J)
				}
				checkAsGeneral(t, fmt.Sprintf("%s %s J=%d order %d", link, tc.name, J, order), p, c, s, d, order, a)
			}
		}
	}
}

// checkAsGeneral checks the block kernel's values of the block of all of
// d's rows (in s and a, derivatives to order) against the general kernel
// (kernel.eval, row by row, weighted as blockKernels weights it), bit for
// bit; rows of weight 0 must have derivatives 0.
func checkAsGeneral(t *testing.T, name string, p *problem, c *coefs, s *scratch, d *Data, order int, a *acc) {
	t.Helper()
	n, q := len(d.Y), p.q
	ll, minLP := 0.0, math.Inf(1)
	g, h, L := make([]float64, q), make([]float64, q*q), make([]float64, q)
	for i := 0; i < n; i++ {
		w := 1.0
		if d.Weights != nil {
			w = d.Weights[i]
		}
		if w == 0 {
			for mm := 0; mm < q && order >= 1; mm++ {
				if v := s.gs[mm*n+i]; v != 0 {
					t.Fatalf("%s row %d (weight 0): g[%d] = %v", name, i, mm, v)
				}
			}
			for pi := range p.pairs {
				if order < 2 {
					break
				}
				if v := s.hp[pi*n+i]; v != 0 {
					t.Fatalf("%s row %d (weight 0): h of pair %d = %v", name, i, pi, v)
				}
			}
			continue
		}
		for mm := range L {
			L[mm] = c.tau[mm] - s.eta[mm*s.etaStride+i]
		}
		lp, ok := p.ker.eval(L, d.Y[i], g, h)
		if !ok {
			t.Fatalf("%s row %d: general kernel failed", name, i)
		}
		ll += w * lp
		minLP = math.Min(minLP, lp)
		for mm := 0; mm < q && order >= 1; mm++ {
			if got, want := s.gs[mm*n+i], w*g[mm]; math.Float64bits(got) != math.Float64bits(want) {
				t.Fatalf("%s row %d: g[%d] = %v, general %v", name, i, mm, got, want)
			}
		}
		for pi, pr := range p.pairs {
			if order < 2 {
				break
			}
			if got, want := s.hp[pi*n+i], w*h[pr[0]*q+pr[1]]; math.Float64bits(got) != math.Float64bits(want) {
				t.Fatalf("%s row %d: h[%d,%d] = %v, general %v", name, i, pr[0], pr[1], got, want)
			}
		}
	}
	if a.ll != ll || a.minLP != minLP {
		t.Errorf("%s: ll %v min %v, general %v %v", name, a.ll, a.minLP, ll, minLP)
	}
}

// TestAdjacentKernelsFar checks adjacentKernels against the general kernel
// (adjacentProbs), bit for bit, where the rows' L_m are far from the
// values of a fit: equal category scores (L_m of 0 and whole numbers, so
// that the search for the largest meets ties), L_m in the hundreds and
// thousands (exponentials below -700 and 0, relative scores above 0 by
// rounding), up to 1e15, with weights of 0, and a block of rows not a
// multiple of adjacentChunk; under every link (the others' psi_m far out
// from the two tails, clamped).
func TestAdjacentKernelsFar(t *testing.T) {
	for _, link := range []Link{Logit, Probit, Cloglog, Loglog, Cauchy} {
		for _, J := range []int{2, 3, 4, 5, 6, 7, 16} {
			for _, weighted := range []bool{true, false} {
				adjacentKernelsFar(t, link, J, weighted)
			}
		}
	}
}

// adjacentKernelsFar is TestAdjacentKernelsFar with J categories, with
// weights (zeros among them) or without (the rows' shared weight of one).
func adjacentKernelsFar(t *testing.T, link Link, J int, weighted bool) {
	const n = 1100
	d := speedData(n, 2, J)
	rng := rand.New(rand.NewPCG(29, uint64(J)))
	d.Weights = nil
	if weighted {
		d.Weights = make([]float64, n)
		for i := range d.Weights {
			d.Weights[i] = []float64{0, 0.5, 1, 2}[rng.IntN(4)]
		}
	}
	m := Model{Comparison: Adjacent, Link: link, Effects: []Effect{Nonparallel, Nonparallel}}
	p, theta := atMarginalCutpoints(t, d, m)
	c := p.coefs(theta)
	for order := 0; order <= 2; order++ {
		s := p.newScratch()
		p.blockColumns(c, 0, n, s)
		p.blockLinear(c, 0, n, order >= 1, s)
		cols := J - 1 // equations with a column of their own (one shared: stride 0)
		if s.etaStride == 0 {
			cols = 1
		}
		r := rand.New(rand.NewPCG(31, uint64(J)))
		for i := range s.eta[:cols*n] {
			switch r.IntN(6) {
			case 0:
				s.eta[i] = c.tau[i/n] // L = 0
			case 1:
				s.eta[i] = c.tau[i/n] - float64(r.IntN(5)-2)
			case 2:
				s.eta[i] = c.tau[i/n] - 300*r.NormFloat64()
			case 3:
				s.eta[i] = 2000 * r.NormFloat64()
			case 4:
				s.eta[i] = math.Ldexp(r.NormFloat64(), r.IntN(50))
			default:
				s.eta[i] = 3 * r.NormFloat64()
			}
		}
		a := p.newAcc(0)
		if !p.blockKernels(c, 0, n, order, false, a, s) {
			t.Fatalf("%s J=%d weighted %t order %d: kernel failed", link, J, weighted, order)
		}
		checkAsGeneral(t, fmt.Sprintf("%s far J=%d weighted %t order %d", link, J, weighted, order), p, c, s, d, order, a)
	}
}
