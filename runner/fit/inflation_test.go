package fit

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// simCollinear draws n rows (seed 20261203): x1, z normal, x3 0/1,
// x2 = x1 + noise * N(0, 1), and a four-category outcome from a
// cumulative logit with slopes 0.6, -0.3, 0.5, 0.4 (J = 2: categories
// 1-2 against 3-4).
func simCollinear(n, J int, noise float64) *Data {
	r := rand.New(rand.NewPCG(20261203, 7))
	d := &Data{J: J, Predictors: []string{"x1", "x2", "x3", "z"}}
	cuts := []float64{-0.8, 0.2, 1.1}
	for i := 0; i < n; i++ {
		x1 := r.NormFloat64()
		x2 := x1 + noise*r.NormFloat64()
		x3 := 0.0
		if r.Float64() < 0.4 {
			x3 = 1
		}
		z := r.NormFloat64()
		u := r.Float64()
		s := 0.6*x1 - 0.3*x2 + 0.5*x3 + 0.4*z + math.Log(u/(1-u))
		y := 0
		for _, c := range cuts {
			if s > c {
				y++
			}
		}
		if J == 2 {
			y /= 2
		}
		d.Y = append(d.Y, y)
		d.X = append(d.X, x1, x2, x3, z)
	}
	return d
}

func singleTerms(names ...string) []Term {
	out := make([]Term, len(names))
	for i, n := range names {
		out[i] = Term{Name: n, Columns: []string{n}}
	}
	return out
}

// TestInflationIsWeightedVIF: for a binary logit the variance inflation of
// a one-column term is the textbook 1 / (1 - R^2) of the weighted least
// squares regression of that column on the other columns and a constant,
// with the fit's working weights p (1 - p) (the information of a binary
// logit is X'WX), computed here by normal equations; R's glm gives the
// same numbers from diag(V) * diag(solve(V)) of vcov (checked by hand on
// data of this kind: 1.0299e8 both ways, and 1.03116 for the 0/1 column).
func TestInflationIsWeightedVIF(t *testing.T) {
	d := simCollinear(600, 2, 0.01)
	m := Model{Comparison: Cumulative, Link: Logit, Effects: []Effect{Parallel, Parallel, Parallel, Parallel}}
	res, err := Fit(d, m, Options{})
	if err != nil || !res.OK() {
		t.Fatalf("fit: %v %v", err, res.Message)
	}
	infl := res.VarianceInflation(singleTerms("x1", "x2", "x3", "z"))
	if len(infl) != 4 {
		t.Fatalf("got %d inflations", len(infl))
	}
	K := 4
	w := make([]float64, d.N())
	for i := range w {
		eta := res.Cutpoints[0]
		for k := 0; k < K; k++ {
			eta -= res.Effects[0][k] * d.X[i*K+k]
		}
		p := 1 / (1 + math.Exp(-eta))
		w[i] = p * (1 - p)
	}
	for k := 0; k < K; k++ {
		// Regress column k on the constant and the other columns.
		A := mat.NewDense(d.N(), K, nil)
		y := mat.NewVecDense(d.N(), nil)
		for i := 0; i < d.N(); i++ {
			sw := math.Sqrt(w[i])
			A.Set(i, 0, sw)
			c := 1
			for j := 0; j < K; j++ {
				if j != k {
					A.Set(i, c, sw*d.X[i*K+j])
					c++
				}
			}
			y.SetVec(i, sw*d.X[i*K+k])
		}
		var beta mat.VecDense
		if err := beta.SolveVec(A, y); err != nil {
			t.Fatal(err)
		}
		var fitted mat.VecDense
		fitted.MulVec(A, &beta)
		sw, mean := 0.0, 0.0
		for i := 0; i < d.N(); i++ {
			sw += w[i]
			mean += w[i] * d.X[i*K+k]
		}
		mean /= sw
		rss, tss := 0.0, 0.0
		for i := 0; i < d.N(); i++ {
			e := y.AtVec(i) - fitted.AtVec(i)
			rss += e * e
			c := d.X[i*K+k] - mean
			tss += w[i] * c * c
		}
		want := tss / rss // 1 / (1 - R^2)
		if !near(infl[k].Factor, want, 1e-6, 0) {
			t.Errorf("%s: variance inflation %.10g, weighted least squares %.10g", infl[k].Term, infl[k].Factor, want)
		}
	}
	if infl[0].Factor < 1e3 || infl[2].Factor > 1.5 {
		t.Errorf("x1 (x2 = x1 + noise) %g, x3 %g", infl[0].Factor, infl[2].Factor)
	}
}

// TestCollinearTermsFlagged: on x2 = x1 + tiny noise, every effect
// structure and link flags x1 and x2 and neither x3 nor z; the two columns
// taken as one term are not flagged (a term is tested as a whole); the
// factors do not depend on the columns' units or origin (x1 in
// thousandths, shifted by 1e4); a design without near-collinearity flags
// nothing.
func TestCollinearTermsFlagged(t *testing.T) {
	d := simCollinear(800, 4, 1e-3)
	four := singleTerms("x1", "x2", "x3", "z")
	models := []Model{
		{Comparison: Cumulative, Link: Logit, Effects: []Effect{Parallel, Parallel, Parallel, Parallel}},
		{Comparison: Cumulative, Link: Cloglog, Effects: []Effect{Nonparallel, Parallel, Parallel, Parallel}},
		{Comparison: Stage, Link: Probit, Effects: []Effect{Parallel, Parallel, Parallel, Nonparallel}},
		{Comparison: Adjacent, Link: Logit, Effects: []Effect{Constrained, Constrained, Parallel, Parallel}},
	}
	for _, m := range models {
		res, err := Fit(d, m, Options{})
		if err != nil || !res.OK() {
			t.Fatalf("%v: %v %v", m, err, res.Message)
		}
		res.CheckCollinearity(four)
		if len(res.Collinear) != 2 || res.Collinear[0].Term != "x1" || res.Collinear[1].Term != "x2" {
			t.Errorf("%s: flagged %+v, want x1 and x2", res.Name, res.Collinear)
		}
		if res.CollinearNote(func(s string) string { return s }) == "" {
			t.Errorf("%s: no note", res.Name)
		}
		res.CheckCollinearity([]Term{{Name: "x", Columns: []string{"x1", "x2"}}, {Name: "x3", Columns: []string{"x3"}}, {Name: "z", Columns: []string{"z"}}})
		if len(res.Collinear) != 0 {
			t.Errorf("%s: x1 and x2 as one term flagged: %+v", res.Name, res.Collinear)
		}
	}
	m := models[0]
	res, _ := Fit(d, m, Options{})
	base := res.VarianceInflation(four)
	s := &Data{J: d.J, Y: d.Y, Predictors: d.Predictors, X: append([]float64(nil), d.X...)}
	for i := 0; i < s.N(); i++ {
		s.X[i*4] = 1e3*s.X[i*4] + 1e4
	}
	res2, _ := Fit(s, m, Options{})
	for k, v := range res2.VarianceInflation(four) {
		if !near(v.Factor, base[k].Factor, 1e-5, 0) {
			t.Errorf("%s: %g in other units, %g", v.Term, v.Factor, base[k].Factor)
		}
	}
	plain := simCollinear(800, 4, 1)
	res3, _ := Fit(plain, m, Options{})
	res3.CheckCollinearity(four)
	if len(res3.Collinear) != 0 {
		t.Errorf("x2 = x1 + N(0,1) flagged: %+v", res3.Collinear)
	}
}
