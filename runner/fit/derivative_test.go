package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// synthData draws a small data set with K predictors and J categories.
func synthData(seed uint64, n, K, J int, weights, offset bool) *Data {
	rng := rand.New(rand.NewPCG(seed, 7))
	d := &Data{J: J}
	for k := 0; k < K; k++ {
		d.Predictors = append(d.Predictors, fmt.Sprintf("x%d", k+1))
	}
	for i := 0; i < n; i++ {
		s := 0.0
		for k := 0; k < K; k++ {
			v := rng.NormFloat64()
			if k%3 == 2 {
				v = float64(rng.IntN(2))
			}
			d.X = append(d.X, v)
			s += 0.5 * v
		}
		y := int(math.Floor(float64(J) * (0.5 + 0.3*math.Tanh(s+0.8*rng.NormFloat64()) + 0.2*rng.Float64())))
		d.Y = append(d.Y, min(max(y, 0), J-1))
		if weights {
			d.Weights = append(d.Weights, float64(1+rng.IntN(3)))
		}
		if offset {
			d.Offset = append(d.Offset, 0.3*rng.NormFloat64())
		}
	}
	for c := 0; c < J; c++ { // make sure every category is present
		d.Y[c] = c
	}
	return d
}

type structCase struct {
	name string
	eff  []Effect
}

var structCases = []structCase{
	{"parallel", []Effect{Parallel, Parallel, Parallel}},
	{"partial", []Effect{Nonparallel, Parallel, Parallel}},
	{"nonparallel", []Effect{Nonparallel, Nonparallel, Nonparallel}},
	{"constrained", []Effect{Constrained, Parallel, Constrained}},
	{"mixed", []Effect{Constrained, Nonparallel, Parallel}},
	{"all-constrained", []Effect{Constrained, Constrained, Constrained}},
}

var allLinks = LinkWords.All()

type cmpCase struct {
	cmp      Comparison
	backward bool
}

var allComparisons = []cmpCase{{Cumulative, false}, {Stage, false}, {Stage, true}, {Adjacent, false}}

// testPoint is a valid parameter vector away from the optimum.
func testPoint(d *Data, m Model, ly *layout, seed uint64) []float64 {
	rng := rand.New(rand.NewPCG(seed, 11))
	th := make([]float64, len(ly.params))
	copy(th, marginalCutpoints(d, m))
	for i, p := range ly.params {
		switch p.kind {
		case pCut:
			th[i] += 0.05 * rng.NormFloat64()
		case pPhi:
			th[i] = 1 + 0.3*rng.NormFloat64()
		default:
			th[i] = 0.2 * rng.NormFloat64()
		}
	}
	return th
}

// TestScoreAndInformationFiniteDifferences checks the analytic score and
// observed information against central differences for every comparison,
// link and effect structure, with weights and offsets.
func TestScoreAndInformationFiniteDifferences(t *testing.T) {
	d := synthData(1, 60, 3, 4, true, true)
	for _, cc := range allComparisons {
		for _, l := range allLinks {
			for _, sc := range structCases {
				m := Model{Comparison: cc.cmp, Backward: cc.backward, Link: l, Effects: sc.eff}
				name := fmt.Sprintf("%s/%s/%s", m.ComparisonName(), sc.name, l)
				t.Run(name, func(t *testing.T) {
					ly, err := newLayout(m, d.J, d.Predictors)
					if err != nil {
						t.Fatal(err)
					}
					pr := newProblem(d.design(), m, ly, 1)
					th := testPoint(d, m, ly, 3)
					a := pr.evaluate(th, 2, false)
					if a.bad {
						t.Skip("test point invalid")
					}
					g := pr.gradient(th, a)
					H := pr.hessian(th, a, true)
					P := len(th)
					llAt := func(x []float64) float64 { return pr.evaluate(x, 0, false).ll }
					gradAt := func(x []float64) []float64 { return pr.gradient(x, pr.evaluate(x, 1, false)) }
					for i := 0; i < P; i++ {
						h := 1e-5 * math.Max(1, math.Abs(th[i]))
						tp, tm := append([]float64(nil), th...), append([]float64(nil), th...)
						tp[i] += h
						tm[i] -= h
						fd := (llAt(tp) - llAt(tm)) / (2 * h)
						if !near(g[i], fd, 1e-6, 1e-6) {
							t.Errorf("score[%s] = %.10g, finite difference %.10g", ly.params[i].name, g[i], fd)
						}
						gp, gm := gradAt(tp), gradAt(tm)
						for j := 0; j < P; j++ {
							fdh := (gp[j] - gm[j]) / (2 * h)
							if !near(H[j*P+i], fdh, 1e-5, 1e-5) {
								t.Errorf("hessian[%s,%s] = %.10g, finite difference %.10g", ly.params[j].name, ly.params[i].name, H[j*P+i], fdh)
							}
						}
					}
				})
			}
		}
	}
}

// TestExpectedInformation checks the expected information against the
// observed information of a data set holding every category of every row
// with weight w*P(category): the two agree exactly.
func TestExpectedInformation(t *testing.T) {
	base := synthData(2, 25, 3, 4, true, false)
	for _, cc := range allComparisons {
		for _, l := range allLinks {
			for _, sc := range structCases[:4] {
				m := Model{Comparison: cc.cmp, Backward: cc.backward, Link: l, Effects: sc.eff}
				t.Run(fmt.Sprintf("%s/%s/%s", m.ComparisonName(), sc.name, l), func(t *testing.T) {
					ly, _ := newLayout(m, base.J, base.Predictors)
					th := testPoint(base, m, ly, 5)
					pr := newProblem(base.design(), m, ly, 1)
					a := pr.evaluate(th, 2, true)
					if a.bad {
						t.Skip("invalid point")
					}
					E := pr.hessian(th, a, false)
					// expanded data set
					ex := &Data{J: base.J, Predictors: base.Predictors}
					c := pr.coefs(th)
					L := make([]float64, base.J-1)
					p := make([]float64, base.J)
					K := len(base.Predictors)
					for i := range base.Y {
						pr.linear(c, i, L, make([]float64, pr.d.K))
						pr.ker.probs(L, p)
						for cat := 0; cat < base.J; cat++ {
							ex.Y = append(ex.Y, cat)
							ex.X = append(ex.X, base.X[i*K:(i+1)*K]...)
							ex.Weights = append(ex.Weights, base.Weights[i]*p[cat])
						}
					}
					pe := newProblem(ex.design(), m, ly, 1)
					b := pe.evaluate(th, 2, false)
					H := pe.hessian(th, b, true)
					for i := range H {
						if !near(E[i], H[i], 1e-8, 1e-9) {
							t.Fatalf("expected information entry %d: %.12g vs %.12g", i, E[i], H[i])
						}
					}
				})
			}
		}
	}
}

// TestProbabilitiesSumToOne checks every comparison and link.
func TestProbabilitiesSumToOne(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 4))
	for _, cc := range allComparisons {
		for _, l := range allLinks {
			k := kernel{cmp: cc.cmp, backward: cc.backward, link: l, nEq: 4}
			for rep := 0; rep < 200; rep++ {
				L := make([]float64, 4)
				x := -3 + 2*rng.NormFloat64()
				for m := range L {
					x += math.Abs(rng.NormFloat64()) * 2
					L[m] = x
					if cc.cmp != Cumulative {
						L[m] = 8 * rng.NormFloat64()
					}
				}
				p := make([]float64, 5)
				k.probs(L, p)
				s := 0.0
				for c, v := range p {
					s += v
					lp, ok := k.eval(L, c, nil, nil)
					if ok && !near(math.Exp(lp), v, 1e-9, 1e-15) {
						t.Fatalf("%v %v: P(%d) = %g but exp(log P) = %g", cc, l, c, v, math.Exp(lp))
					}
				}
				if math.Abs(s-1) > 1e-12 {
					t.Fatalf("%v %v: probabilities sum to %.15g at %v", cc, l, s, L)
				}
			}
		}
	}
}

// TestLinkTails checks the links far in both tails: finite logs and
// derivatives that match finite differences.
func TestLinkTails(t *testing.T) {
	for _, l := range allLinks {
		for _, z := range []float64{-60, -35, -20, -5, -0.3, 0, 0.7, 5, 20, 35, 60} {
			lo, up := l.lower(z), l.upper(z)
			for _, tt := range []tail{lo, up} {
				if math.IsNaN(tt.v) || math.IsInf(tt.v, 0) || math.IsNaN(tt.d1) || math.IsNaN(tt.d2) {
					t.Fatalf("%v at %g: %+v", l, z, tt)
				}
			}
			h := 1e-5
			fd := (l.lower(z+h).v - l.lower(z-h).v) / (2 * h)
			if !near(lo.d1, fd, 1e-5, 1e-9) {
				t.Errorf("%v lower d1 at %g: %g vs %g", l, z, lo.d1, fd)
			}
			fd2 := (l.lower(z+h).d1 - l.lower(z-h).d1) / (2 * h)
			if !near(lo.d2, fd2, 1e-4, 1e-9) {
				t.Errorf("%v lower d2 at %g: %g vs %g", l, z, lo.d2, fd2)
			}
			fdu := (l.upper(z+h).v - l.upper(z-h).v) / (2 * h)
			if !near(up.d1, fdu, 1e-5, 1e-9) {
				t.Errorf("%v upper d1 at %g: %g vs %g", l, z, up.d1, fdu)
			}
		}
	}
}
