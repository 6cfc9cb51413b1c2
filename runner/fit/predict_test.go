package fit

import (
	"math"
	"testing"
)

// Average marginal effects agree with finite differences of predicted
// probabilities; predicted probabilities sum to one on every row; the
// delta-method standard errors agree with a numerical Jacobian.
func TestPredictionsAndMarginalEffects(t *testing.T) {
	d := gssData(t) // General Social Survey 1977/1989 extract, Long (1997)
	K := len(d.Predictors)
	for _, m := range []Model{
		{Comparison: Cumulative, Link: Logit, Effects: []Effect{Nonparallel, Nonparallel, Parallel, Parallel, Parallel, Parallel}},
		{Comparison: Stage, Link: Probit, Effects: []Effect{Nonparallel, Parallel, Parallel, Parallel, Parallel, Parallel}},
		{Comparison: Adjacent, Link: Logit, Effects: []Effect{Constrained, Constrained, Parallel, Parallel, Parallel, Parallel}},
	} {
		r := fitOK(t, d, m)
		pred, err := r.Predict(d.X[:50*K], nil)
		if err != nil {
			t.Fatal(err)
		}
		for i := 0; i < pred.N; i++ {
			s := 0.0
			for j := 0; j < pred.J; j++ {
				s += pred.Prob[i*pred.J+j]
			}
			if math.Abs(s-1) > 1e-12 {
				t.Fatalf("row %d: probabilities sum to %v", i, s)
			}
		}
		// Delta-method SE of one prediction against a numerical Jacobian.
		pr, _ := r.problem()
		x := d.X[:K]
		P := len(r.Estimates)
		jac := centralJacobian(func(th []float64) []float64 {
			p := make([]float64, r.J)
			pr.probsAt(th, x, 0, p)
			return p
		}, r.Estimates)
		for j := 0; j < r.J; j++ {
			se := math.Sqrt(quadForm(jac[j*P:(j+1)*P], r.Cov))
			if !near(pred.SE[j], se, 1e-5, 1e-9) {
				t.Errorf("%s: se of P(%d) %v, numerical %v", r.Name, j, pred.SE[j], se)
			}
		}
		ames, err := r.AverageMarginalEffects(d, 0.95)
		if err != nil {
			t.Fatal(err)
		}
		for _, me := range ames {
			k := indexOf(d.Predictors, me.Predictor)
			j := indexOf(r.Categories, me.Category)
			fd := 0.0
			for i := 0; i < d.N(); i++ {
				x := append([]float64(nil), d.X[i*K:(i+1)*K]...)
				p1, p0 := make([]float64, r.J), make([]float64, r.J)
				if me.Discrete {
					x[k] = 1
					pr.probsAt(r.Estimates, x, 0, p1)
					x[k] = 0
					pr.probsAt(r.Estimates, x, 0, p0)
					fd += p1[j] - p0[j]
					continue
				}
				h := 1e-4 * math.Max(1, math.Abs(x[k]))
				x[k] += h
				pr.probsAt(r.Estimates, x, 0, p1)
				x[k] -= 2 * h
				pr.probsAt(r.Estimates, x, 0, p0)
				fd += (p1[j] - p0[j]) / (2 * h)
			}
			fd /= float64(d.N())
			if math.Abs(me.Effect-fd) > 1e-6 {
				t.Errorf("%s: AME of %s on %s = %.10g, finite differences %.10g", r.Name, me.Predictor, me.Category, me.Effect, fd)
			}
			if !(me.SE > 0) {
				t.Errorf("%s: AME se %v", r.Name, me.SE)
			}
		}
	}
}

// Cumulative probabilities, the expected category and the linear
// predictors: values and delta-method errors against numerical Jacobians.
func TestPredictionSummaries(t *testing.T) {
	d := gssData(t) // General Social Survey 1977/1989 extract, Long (1997)
	K := len(d.Predictors)
	m := Model{Comparison: Cumulative, Link: Logit, Effects: []Effect{Nonparallel, Nonparallel, Parallel, Parallel, Parallel, Parallel}}
	r := fitOK(t, d, m)
	x := d.X[3*K : 4*K]
	pred, err := r.Predict(x, nil)
	if err != nil {
		t.Fatal(err)
	}
	pr, _ := r.problem()
	P, J := len(r.Estimates), r.J
	summary := func(theta []float64) []float64 {
		p := make([]float64, J)
		pr.probsAt(theta, x, 0, p)
		L := pr.rowLinear(theta, x, 0)
		out := []float64{}
		cum, e := 0.0, 0.0
		for j := 0; j < J; j++ {
			e += float64(j+1) * p[j]
			if j < J-1 {
				cum += p[j]
				out = append(out, cum, L[j])
			}
		}
		return append(out, e)
	}
	base := summary(r.Estimates)
	var got, gotSE []float64
	for m := 0; m < J-1; m++ {
		got = append(got, pred.Cum[m], pred.Linear[m])
		gotSE = append(gotSE, pred.CumSE[m], pred.LinearSE[m])
	}
	got = append(got, pred.Expected[0])
	gotSE = append(gotSE, pred.ExpectedSE[0])
	jac := centralJacobian(summary, r.Estimates)
	for i := range base {
		if !near(got[i], base[i], 1e-12, 1e-12) {
			t.Errorf("summary %d: %v vs %v", i, got[i], base[i])
		}
		if se := math.Sqrt(quadForm(jac[i*P:(i+1)*P], r.Cov)); !near(gotSE[i], se, 1e-5, 1e-9) {
			t.Errorf("summary %d se: %v vs numerical %v", i, gotSE[i], se)
		}
	}
	if best := pred.MostLikely[0]; pred.Prob[best] < pred.Prob[(best+1)%J] {
		t.Errorf("most likely category %d is not the largest", best)
	}
}

// Marginal effects at the means: derivatives and 0-to-1 changes against
// finite differences of predicted probabilities at that point.
func TestMarginalEffectsAtMeans(t *testing.T) {
	d := gssData(t) // General Social Survey 1977/1989 extract, Long (1997)
	K := len(d.Predictors)
	r := fitOK(t, d, Model{Comparison: Stage, Link: Logit, Effects: []Effect{Nonparallel, Parallel, Parallel, Parallel, Parallel, Parallel}})
	mean := make([]float64, K)
	binary := make([]bool, K)
	for k := 0; k < K; k++ {
		for i := 0; i < d.N(); i++ {
			mean[k] += d.X[i*K+k] / float64(d.N())
		}
		binary[k] = isBinary(d, k)
	}
	me, err := r.MarginalEffectsAt(mean, binary, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	pr, _ := r.problem()
	for _, e := range me {
		k, j := indexOf(d.Predictors, e.Predictor), indexOf(r.Categories, e.Category)
		x := append([]float64(nil), mean...)
		p1, p0 := make([]float64, r.J), make([]float64, r.J)
		var fd float64
		if binary[k] {
			x[k] = 1
			pr.probsAt(r.Estimates, x, 0, p1)
			x[k] = 0
			pr.probsAt(r.Estimates, x, 0, p0)
			fd = p1[j] - p0[j]
		} else {
			h := 1e-4 * math.Max(1, math.Abs(x[k]))
			x[k] += h
			pr.probsAt(r.Estimates, x, 0, p1)
			x[k] -= 2 * h
			pr.probsAt(r.Estimates, x, 0, p0)
			fd = (p1[j] - p0[j]) / (2 * h)
		}
		if e.Discrete != binary[k] || math.Abs(e.Effect-fd) > 1e-6 || !(e.SE > 0) {
			t.Errorf("%s on %s: %+v, finite difference %v", e.Predictor, e.Category, e, fd)
		}
	}
}
