package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestColumnsAsRows: the design the fits of a data set share holds its
// predictors column-major as well (design.withColumns), and an evaluation
// copies a block's columns from there, or reads them in place, instead of
// transposing its rows (gatherRows); the sums are the same to the last bit
// (every sum's terms in the same order). Generated, seeded rows over
// several blocks, with and without weights and offsets, with group
// indicators summed by group and held as columns; parallel columns side by
// side in the design (read in place) and not (copied), per-equation,
// constrained and stereotype columns; the three comparisons, observed and
// expected information, orders 0 to 2.
func TestColumnsAsRows(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 3))
	n, K, G, J := 2*blockRows+301, 4, 4, 4
	base := &Data{J: J, Y: make([]int, n), X: make([]float64, n*K)}
	for k := 0; k < K; k++ {
		base.Predictors = append(base.Predictors, fmt.Sprintf("x%d", k+1))
	}
	for i := 0; i < n; i++ {
		base.Y[i] = rng.IntN(J)
		for k := 0; k < K; k++ {
			base.X[i*K+k] = float64(k%2) + rng.NormFloat64()
		}
	}
	group := make([]int, n)
	weights, offset := make([]float64, n), make([]float64, n)
	for i := range group {
		group[i] = rng.IntN(G)
		weights[i], offset[i] = rng.ExpFloat64(), 0.3*rng.NormFloat64()
	}
	P, N, C := Parallel, Nonparallel, Constrained
	for _, v := range []struct {
		name          string
		weights, inds bool
		offset        bool
		effects       []Effect // of x1..x4; the indicators' parallel unless indNP
		indNP         bool
	}{
		{"parallel", false, false, false, []Effect{P, P, P, P}, false},
		{"parallel, weights, offset", true, false, true, []Effect{P, P, P, P}, false},
		{"parallel apart", false, false, false, []Effect{P, N, P, P}, false},
		{"partial", true, false, false, []Effect{N, N, P, P}, false},
		{"nonparallel", false, false, true, []Effect{N, N, N, N}, false},
		{"constrained", true, false, false, []Effect{C, C, P, P}, false},
		{"stereotype", false, false, false, []Effect{C, C, C, C}, false},
		{"indicators by group", true, true, false, []Effect{P, P, P, P}, false},
		{"indicators as columns", false, true, true, []Effect{P, N, P, P}, true},
	} {
		d := *base
		d.Predictors = slices.Clone(base.Predictors)
		if v.weights {
			d.Weights = weights
		}
		if v.offset {
			d.Offset = offset
		}
		effects := slices.Clone(v.effects)
		if v.inds {
			d.ind = &indicators{group: group, count: G - 1}
			for g := 1; g < G; g++ {
				d.Predictors = append(d.Predictors, fmt.Sprintf("g%d", g))
				effects = append(effects, P)
			}
			if v.indNP {
				effects[len(effects)-1] = N
			}
		}
		for _, cmp := range []Comparison{Cumulative, Stage, Adjacent} {
			m := Model{Comparison: cmp, Link: Logit, Effects: effects}
			ly, err := newLayout(m, d.J, d.Predictors)
			if err != nil {
				t.Fatal(err)
			}
			rows := newProblem(d.design(), m, ly, 0)
			cols := newProblem(d.design().withColumns(), m, ly, 0)
			theta := make([]float64, len(ly.params))
			copy(theta, marginalCutpoints(&d, m))
			for i := d.J - 1; i < len(theta); i++ {
				theta[i] = 0.07 * float64(i%5-2)
			}
			for order := 0; order <= 2; order++ {
				for _, expected := range []bool{false, true} {
					a, b := rows.evaluate(theta, order, expected), cols.evaluate(theta, order, expected)
					if what := accDiff(a, b); what != "" {
						t.Errorf("%s, %v, order %d, expected %v: %s differs between the rows and the columns", v.name, cmp, order, expected, what)
					}
				}
			}
		}
	}
}

// accDiff names the first sum of a and b that differs in any bit ("" when
// none).
func accDiff(a, b *acc) string {
	if math.Float64bits(a.ll) != math.Float64bits(b.ll) {
		return fmt.Sprintf("ll (%v, %v)", a.ll, b.ll)
	}
	if math.Float64bits(a.minLP) != math.Float64bits(b.minLP) || a.bad != b.bad {
		return "minLP or bad"
	}
	for _, s := range []struct {
		name string
		x, y []float64
	}{{"V", a.V, b.V}, {"Vp", a.Vp, b.Vp}, {"R", a.R, b.R}, {"T", a.T, b.T}} {
		if len(s.x) != len(s.y) || !bitsEqual(s.x, s.y) {
			return s.name
		}
	}
	for i := range a.S {
		if !bitsEqual(a.S[i], b.S[i]) {
			return fmt.Sprintf("S[%d]", i)
		}
	}
	return ""
}

// TestEvaluateAgain: an evaluation's blocks sum into accs that earlier
// evaluations gave back (problem.blockAcc, cleared); evaluating again,
// after evaluations of other orders and at another point, gives the
// first evaluation's sums to the last bit (made with new accs).
func TestEvaluateAgain(t *testing.T) {
	rng := rand.New(rand.NewPCG(43, 7))
	n, K, J := 3*blockRows+17, 3, 4
	d := &Data{J: J, Y: make([]int, n), X: make([]float64, n*K), Weights: make([]float64, n)}
	for k := 0; k < K; k++ {
		d.Predictors = append(d.Predictors, fmt.Sprintf("x%d", k+1))
	}
	for i := 0; i < n; i++ {
		d.Y[i] = rng.IntN(J)
		d.Weights[i] = rng.ExpFloat64()
		for k := 0; k < K; k++ {
			d.X[i*K+k] = rng.NormFloat64()
		}
	}
	for _, effects := range [][]Effect{{Parallel, Parallel, Parallel}, {Nonparallel, Parallel, Nonparallel}} {
		m := Model{Comparison: Cumulative, Link: Logit, Effects: effects}
		ly, err := newLayout(m, d.J, d.Predictors)
		if err != nil {
			t.Fatal(err)
		}
		p := newProblem(d.design(), m, ly, 2)
		theta := make([]float64, len(ly.params))
		copy(theta, marginalCutpoints(d, m))
		other := slices.Clone(theta)
		for i := d.J - 1; i < len(theta); i++ {
			theta[i], other[i] = 0.05*float64(i%3-1), -0.1
		}
		for order := 0; order <= 2; order++ {
			first := p.evaluate(theta, order, false)
			for o := 0; o <= 2; o++ {
				p.evaluate(other, o, o == 2)
			}
			if what := accDiff(first, p.evaluate(theta, order, false)); what != "" {
				t.Errorf("%v, order %d: %s differs when evaluated again", effects, order, what)
			}
		}
	}
}
