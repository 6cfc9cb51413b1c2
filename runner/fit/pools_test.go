package fit

import (
	"math/rand/v2"
	"runtime"
	"testing"
	"weak"
)

// TestProblemFreedAfterUse checks that a problem whose evaluations used
// its pools, its design and the design's copy of X (design.cols, which a
// block's scratch reads in place) are collected by the first collection
// after the problem is dropped: the runtime keeps a pool used since the
// last collection until the next one, so pools that were fields of the
// problem, or scratch still pointing into the design, kept each refit's
// copy of X (the term tests') one collection longer.
func TestProblemFreedAfterUse(t *testing.T) {
	for _, effects := range [][]Effect{{Parallel, Parallel, Parallel}, {Nonparallel, Parallel, Nonparallel}} {
		p, d, cols := usedProblem(t, effects)
		runtime.GC()
		if p.Value() != nil || d.Value() != nil || cols.Value() != nil {
			t.Errorf("%v: after one collection the problem is kept %v, its design %v, the design's columns %v",
				effects, p.Value() != nil, d.Value() != nil, cols.Value() != nil)
		}
	}
}

// usedProblem makes a problem on a design holding its columns, evaluates
// it to every order and checks its fitted probabilities (fittedCheck), and returns
// weak pointers to the problem, its design and the columns.
func usedProblem(t *testing.T, effects []Effect) (weak.Pointer[problem], weak.Pointer[design], weak.Pointer[float64]) {
	t.Helper()
	rng := rand.New(rand.NewPCG(7, 8))
	n, K, J := 3*blockRows+17, 3, 4
	d := &Data{J: J, Y: make([]int, n), X: make([]float64, n*K), Predictors: []string{"x1", "x2", "x3"}}
	for i := 0; i < n; i++ {
		d.Y[i] = rng.IntN(J)
		for k := 0; k < K; k++ {
			d.X[i*K+k] = rng.NormFloat64()
		}
	}
	m := Model{Comparison: Cumulative, Link: Logit, Effects: effects}
	ly, err := newLayout(m, d.J, d.Predictors)
	if err != nil {
		t.Fatal(err)
	}
	dz := d.design().withColumns()
	p := newProblem(dz, m, ly, 2)
	theta := make([]float64, len(ly.params))
	copy(theta, marginalCutpoints(d, m))
	for order := 0; order <= 2; order++ {
		p.evaluate(theta, order, order == 2)
	}
	p.fittedCheck(theta)
	return weak.Make(p), weak.Make(dz), weak.Make(&dz.cols[0])
}
