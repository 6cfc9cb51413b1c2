package fit

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// The penalty of TIC is tr(A^-1 B) = tr(A V0), V0 = A^-1 B A^-1 the HC0
// sandwich and A the inverse of the observed-information covariance; the
// inverse and the product are computed here with gonum, on the General
// Social Survey extract (Long 1997).
func TestTICPenaltyIsTraceOfSandwichTimesInformation(t *testing.T) {
	d := gssData(t)
	for _, m := range metaModels[:2] {
		r := fitOK(t, d, m)
		P := len(r.Estimates)
		V0, _, err := SandwichEstimate(d, r, SandwichPlain, nil, false)
		if err != nil {
			t.Fatal(err)
		}
		var A mat.Dense
		if err := A.Inverse(mat.NewDense(P, P, append([]float64(nil), r.Cov...))); err != nil {
			t.Fatal(err)
		}
		var AV mat.Dense
		AV.Mul(&A, mat.NewDense(P, P, V0))
		want := mat.Trace(&AV)
		tic, pen, err := TIC(d, r, false)
		if err != nil {
			t.Fatal(err)
		}
		if !near(pen, want, 1e-7, 1e-9) || !near(tic, -2*r.LogLik+2*want, 1e-9, 1e-9) {
			t.Errorf("%s: penalty %.10g, want %.10g; TIC %.10g", r.Name, pen, want, tic)
		}
		// A model that fits these data reasonably: the penalty is near the
		// number of parameters.
		if math.Abs(pen-float64(P)) > 0.5*float64(P) {
			t.Errorf("%s: penalty %.3f for %d parameters", r.Name, pen, P)
		}
	}
}

// Sampling weights are scaled to sum to the number of rows, so equal
// weights give the unweighted TIC; frequency weights of 2 give the TIC of
// the data written twice.
func TestTICWeights(t *testing.T) {
	d := gssData(t)
	m := metaModels[0]
	base, _, _ := TIC(d, fitOK(t, d, m), false)
	w3 := &Data{J: d.J, Predictors: d.Predictors, Y: d.Y, X: d.X}
	w2 := &Data{J: d.J, Predictors: d.Predictors, Y: d.Y, X: d.X}
	dup := &Data{J: d.J, Predictors: d.Predictors}
	for range d.Y {
		w3.Weights = append(w3.Weights, 3)
		w2.Weights = append(w2.Weights, 2)
	}
	dup.Y = append(append(dup.Y, d.Y...), d.Y...)
	dup.X = append(append(dup.X, d.X...), d.X...)
	s, _, _ := TIC(w3, fitOK(t, w3, m), true)
	if !near(s, base, 1e-8, 1e-8) {
		t.Errorf("sampling weights 3: %.10g, unweighted %.10g", s, base)
	}
	a, _, _ := TIC(w2, fitOK(t, w2, m), false)
	b, _, _ := TIC(dup, fitOK(t, dup, m), false)
	if !near(a, b, 1e-7, 1e-7) {
		t.Errorf("frequency weights 2: %.10g, duplicated rows %.10g", a, b)
	}
}
