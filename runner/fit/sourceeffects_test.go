package fit

import (
	"math/rand/v2"
	"reflect"
	"testing"
)

// TestAverageSlopeRows checks that the effect along rows given one at a
// time is AverageSlope's on the same rows held whole, to the last bit, on
// the General Social Survey 1977/1989 extract (Long 1997), with weights.
func TestAverageSlopeRows(t *testing.T) {
	d := gssData(t)
	K, n := len(d.Predictors), d.N()
	rng := rand.New(rand.NewPCG(3, 4))
	w := make([]float64, n)
	dX := make([]float64, n*K)
	for i := range w {
		w[i] = rng.ExpFloat64()
		dX[i*K+2], dX[i*K+3] = 1, rng.NormFloat64()
	}
	for _, m := range []Model{
		{Comparison: Cumulative, Link: Logit, Effects: []Effect{Nonparallel, Nonparallel, Parallel, Parallel, Parallel, Parallel}},
		{Comparison: Adjacent, Link: Logit, Effects: []Effect{Constrained, Constrained, Parallel, Parallel, Parallel, Parallel}},
	} {
		r := fitOK(t, d, m)
		whole, err := r.AverageSlope("x", d.X, dX, nil, w, 0.95)
		if err != nil {
			t.Fatal(err)
		}
		x, dx := make([]float64, K), make([]float64, K)
		rows, err := r.AverageSlopeRows("x", n, func(i int) ([]float64, []float64) {
			copy(x, d.X[i*K:(i+1)*K])
			copy(dx, dX[i*K:(i+1)*K])
			return x, dx
		}, nil, w, 0.95)
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(whole, rows) {
			t.Errorf("%v: rows one at a time %v, held whole %v", m.Effects, rows, whole)
		}
	}
}
