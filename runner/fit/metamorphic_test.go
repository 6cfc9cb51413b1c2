package fit

import (
	"math"
	"math/rand/v2"
	"testing"
)

// gsswarm: General Social Survey 1977/1989 extract, Long (1997) ch. 5.
func gssData(t *testing.T) *Data {
	rs := loadRef(t, "gsswarm")
	return rs.data([]string{"yr89", "male", "white", "age", "ed", "prst"})
}

func fitOK(t *testing.T, d *Data, m Model) *Result {
	t.Helper()
	r, err := Fit(d, m, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if !r.OK() {
		t.Fatalf("%s: %s", r.Status, r.Message)
	}
	return r
}

func sameFit(t *testing.T, a, b *Result, tol float64) {
	t.Helper()
	if math.Abs(a.LogLik-b.LogLik) > 1e-8*math.Max(1, math.Abs(a.LogLik)) {
		t.Errorf("loglik %.12f vs %.12f", a.LogLik, b.LogLik)
	}
	for i := range a.Estimates {
		if !near(a.Estimates[i], b.Estimates[i], tol, tol) || !near(a.StdErrors[i], b.StdErrors[i], tol, tol) {
			t.Errorf("%s: %.10g (%.6g) vs %.10g (%.6g)", a.ParamNames[i], a.Estimates[i], a.StdErrors[i], b.Estimates[i], b.StdErrors[i])
		}
	}
}

var metaModels = []Model{
	{Comparison: Cumulative, Link: Logit, Effects: []Effect{Nonparallel, Nonparallel, Parallel, Parallel, Parallel, Parallel}},
	{Comparison: Stage, Link: Probit, Effects: []Effect{Nonparallel, Parallel, Parallel, Parallel, Parallel, Parallel}},
	{Comparison: Adjacent, Link: Logit, Effects: []Effect{Constrained, Constrained, Parallel, Parallel, Parallel, Parallel}},
}

func TestShuffledRowsGiveSameFit(t *testing.T) {
	d := gssData(t)
	n, K := d.N(), len(d.Predictors)
	perm := rand.New(rand.NewPCG(9, 9)).Perm(n)
	s := &Data{J: d.J, Predictors: d.Predictors, Categories: d.Categories}
	for _, i := range perm {
		s.Y = append(s.Y, d.Y[i])
		s.X = append(s.X, d.X[i*K:(i+1)*K]...)
	}
	for _, m := range metaModels {
		sameFit(t, fitOK(t, d, m), fitOK(t, s, m), 1e-7)
	}
}

func TestDuplicatedRowsEqualWeightTwo(t *testing.T) {
	d := gssData(t)
	dup := &Data{J: d.J, Predictors: d.Predictors, Categories: d.Categories}
	dup.Y = append(append(dup.Y, d.Y...), d.Y...)
	dup.X = append(append(dup.X, d.X...), d.X...)
	w := &Data{J: d.J, Predictors: d.Predictors, Categories: d.Categories, Y: d.Y, X: d.X}
	for range d.Y {
		w.Weights = append(w.Weights, 2)
	}
	for _, m := range metaModels {
		a, b := fitOK(t, dup, m), fitOK(t, w, m)
		sameFit(t, a, b, 1e-7)
		if a.NObs != b.NObs || math.Abs(a.BIC-b.BIC) > 1e-7 {
			t.Errorf("nobs %g/%g bic %g/%g", a.NObs, b.NObs, a.BIC, b.BIC)
		}
	}
}

// Reversing the categories of a cumulative logit flips the slopes and
// reverses and negates the cutpoints; log-likelihood unchanged.
func TestReversedCategoriesFlipCumulativeLogit(t *testing.T) {
	d := gssData(t)
	r := &Data{J: d.J, Predictors: d.Predictors, X: d.X}
	for _, y := range d.Y {
		r.Y = append(r.Y, d.J-1-y)
	}
	for _, eff := range [][]Effect{metaModels[0].Effects, {Parallel, Parallel, Parallel, Parallel, Parallel, Parallel}} {
		m := Model{Comparison: Cumulative, Link: Logit, Effects: eff}
		a, b := fitOK(t, d, m), fitOK(t, r, m)
		if math.Abs(a.LogLik-b.LogLik) > 1e-8 {
			t.Fatalf("loglik %v vs %v", a.LogLik, b.LogLik)
		}
		q := d.J - 1
		for j := 0; j < q; j++ {
			if !near(a.Cutpoints[j], -b.Cutpoints[q-1-j], 1e-7, 1e-9) {
				t.Errorf("tau[%d] %v vs -%v", j+1, a.Cutpoints[j], b.Cutpoints[q-1-j])
			}
			for k := range d.Predictors {
				if !near(a.Effects[j][k], -b.Effects[q-1-j][k], 1e-7, 1e-9) {
					t.Errorf("effect %s eq %d: %v vs %v", d.Predictors[k], j+1, a.Effects[j][k], -b.Effects[q-1-j][k])
				}
			}
		}
	}
}

// With two categories every comparison is the binary model for P(y = 1):
// same log-likelihood and slopes for each link.
func TestTwoCategoriesGiveBinaryModel(t *testing.T) {
	d := gssData(t)
	b := &Data{J: 2, Predictors: d.Predictors, X: d.X}
	for _, y := range d.Y {
		b.Y = append(b.Y, min(y/2, 1))
	}
	for _, l := range []Link{Logit, Probit, Cloglog} {
		var ref *Result
		for _, cc := range allComparisons {
			if l != Logit && cc.cmp == Adjacent {
				continue
			}
			for _, e := range []Effect{Parallel, Nonparallel} {
				eff := make([]Effect, len(d.Predictors))
				for k := range eff {
					eff[k] = e
				}
				r := fitOK(t, b, Model{Comparison: cc.cmp, Backward: cc.backward, Link: l, Effects: eff})
				if ref == nil {
					ref = r
					continue
				}
				sameFit(t, ref, r, 1e-7)
			}
		}
	}
	// The logit case equals the binary logit fitted by hand: check the
	// score of a plain logistic log-likelihood vanishes at the estimates.
	r := fitOK(t, b, Model{Comparison: Cumulative, Link: Logit, Effects: make([]Effect, len(d.Predictors))})
	K := len(d.Predictors)
	score := make([]float64, K+1)
	for i, y := range b.Y {
		eta := r.Cutpoints[0]
		for k := 0; k < K; k++ {
			eta -= b.X[i*K+k] * r.Effects[0][k]
		}
		p := 1 / (1 + math.Exp(-eta)) // P(y = lower)
		res := p
		if y == 0 {
			res = p - 1
		}
		score[0] -= res
		for k := 0; k < K; k++ {
			score[k+1] += res * b.X[i*K+k]
		}
	}
	for i, s := range score {
		if math.Abs(s) > 1e-6 {
			t.Errorf("binary logistic score %d = %g at the estimates", i, s)
		}
	}
}

// The backward stage logit on y is the forward stage logit on the reversed
// categories with cutpoints and slopes negated and the equations reversed
// (the logit is symmetric).
func TestBackwardStageIsReversedForward(t *testing.T) {
	d := gssData(t)
	r := &Data{J: d.J, Predictors: d.Predictors, X: d.X}
	for _, y := range d.Y {
		r.Y = append(r.Y, d.J-1-y)
	}
	eff := []Effect{Nonparallel, Parallel, Parallel, Parallel, Parallel, Parallel}
	b := fitOK(t, d, Model{Comparison: Stage, Backward: true, Link: Logit, Effects: eff})
	f := fitOK(t, r, Model{Comparison: Stage, Link: Logit, Effects: eff})
	if math.Abs(b.LogLik-f.LogLik) > 1e-8 {
		t.Fatalf("loglik %v vs %v", b.LogLik, f.LogLik)
	}
	q := d.J - 1
	for j := 0; j < q; j++ {
		if !near(b.Cutpoints[j], -f.Cutpoints[q-1-j], 1e-7, 1e-9) {
			t.Errorf("tau[%d] %v vs %v", j+1, b.Cutpoints[j], -f.Cutpoints[q-1-j])
		}
		for k := range d.Predictors {
			if !near(b.Effects[j][k], -f.Effects[q-1-j][k], 1e-7, 1e-9) {
				t.Errorf("%s eq %d: %v vs %v", d.Predictors[k], j+1, b.Effects[j][k], -f.Effects[q-1-j][k])
			}
		}
	}
	// With an asymmetric link the two are different models.
	bc := fitOK(t, d, Model{Comparison: Stage, Backward: true, Link: Cloglog, Effects: eff})
	fc := fitOK(t, r, Model{Comparison: Stage, Link: Cloglog, Effects: eff})
	if math.Abs(bc.LogLik-fc.LogLik) < 1e-6 {
		t.Errorf("cloglog backward and reversed forward should differ: %v %v", bc.LogLik, fc.LogLik)
	}
}
