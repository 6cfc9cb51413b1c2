package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// indicatorFit fits, from scratch, the model of r with the indicators of
// t's groups 2..G held as ordinary 0/1 columns of X (a copy of d's rows
// with them appended): the model the Lipsitz refit maximizes, fitted the
// ordinary way (default starts, Newton iterations to the usual rule, the
// usual finish).
func indicatorFit(t *testing.T, d *Data, r *Result, g *ScoreGroups) *Result {
	t.Helper()
	ad, am, _, err := withIndicators(d, r, g)
	if err != nil {
		t.Fatal(err)
	}
	K, G := len(d.Predictors), g.Groups
	x := &Data{Y: d.Y, J: d.J, Weights: d.Weights, Offset: d.Offset, Predictors: ad.Predictors}
	for i := 0; i < d.N(); i++ {
		x.X = append(x.X, d.X[i*K:(i+1)*K]...)
		for h := 1; h < G; h++ {
			v := 0.0
			if g.group[i] == h {
				v = 1
			}
			x.X = append(x.X, v)
		}
	}
	res, err := Fit(x, am, Options{})
	if err != nil || !res.OK() {
		t.Fatalf("%s with indicators from scratch: %v %+v", am.Name(), err, res)
	}
	return res
}

// refitCases are the models and data the Lipsitz refit is checked on:
// every comparison, parallel, partial, nonparallel and constrained
// effects, J = 3 to 5, weights and offsets, observed and expected
// information.
func refitCases() []struct {
	name    string
	d       *Data
	m       Model
	scoring bool
} {
	type c = struct {
		name    string
		d       *Data
		m       Model
		scoring bool
	}
	P, N, C := Parallel, Nonparallel, Constrained
	var out []c
	for i, cc := range allComparisons {
		m := Model{Comparison: cc.cmp, Backward: cc.backward, Link: Logit, Effects: []Effect{P, P, P}}
		out = append(out, c{"weighted offset " + m.Name(), synthData(uint64(300+i), 2500, 3, 4, true, true), m, false})
		m.Effects = []Effect{N, P, P}
		out = append(out, c{"partial " + m.Name(), synthData(uint64(310+i), 2500, 3, 4, false, false), m, false})
	}
	out = append(out,
		c{"J=5 cumulative", synthData(320, 3000, 3, 5, false, false), Model{Comparison: Cumulative, Link: Logit, Effects: []Effect{P, P, P}}, false},
		c{"J=5 cumulative probit weighted", synthData(321, 3000, 3, 5, true, false), Model{Comparison: Cumulative, Link: Probit, Effects: []Effect{P, N, P}}, false},
		c{"nonparallel cumulative cloglog", synthData(322, 3000, 3, 4, false, true), Model{Comparison: Cumulative, Link: Cloglog, Effects: []Effect{N, N, N}}, false},
		c{"constrained cumulative", synthData(323, 2500, 3, 4, false, false), Model{Comparison: Cumulative, Link: Logit, Effects: []Effect{C, P, C}}, false},
		c{"expected information", synthData(324, 2500, 3, 4, true, false), Model{Comparison: Stage, Link: Logit, Effects: []Effect{P, P, P}}, true},
	)
	return out
}

// TestLipsitzRefitAtMaximum: the Lipsitz refit (maximumLoop from the
// fit's estimates, the first evaluation from the fit's sums) reaches the
// maximum of the model with group indicators: its log-likelihood is, within
// 1e-6, that of the same model fitted from scratch with the indicators as
// ordinary columns, and that of the ordinary refit (Newton iterations to
// the usual rule, from the same start). For the refits of maximumLoop the
// Newton decrement at the end bounds what is left: at most
// maximumDecrement, and the maximum from scratch lies above the refit's
// log-likelihood by less than it.
func TestLipsitzRefitAtMaximum(t *testing.T) {
	for _, tc := range refitCases() {
		t.Run(tc.name, func(t *testing.T) {
			opt := Options{Scoring: tc.scoring}
			r, err := Fit(tc.d, tc.m, opt)
			if err != nil || !r.OK() {
				t.Fatalf("%v %+v", err, r)
			}
			g, err := GroupByScore(tc.d, r, 0)
			if err != nil {
				t.Fatal(err)
			}
			fast, err := lipsitzRefit(tc.d, r, g, opt)
			if err != nil || !fast.OK() {
				t.Fatalf("refit: %v %+v", err, fast)
			}
			ad, am, start, err := withIndicators(tc.d, r, g)
			if err != nil {
				t.Fatal(err)
			}
			ordinary, err := fitFrom(ad, am, Options{Scoring: tc.scoring, Start: start}, r.rank)
			if err != nil || !ordinary.OK() {
				t.Fatalf("ordinary refit: %v %+v", err, ordinary)
			}
			scratch := indicatorFit(t, tc.d, r, g)
			for _, o := range []struct {
				what string
				ll   float64
			}{{"from scratch", scratch.LogLik}, {"ordinary refit", ordinary.LogLik}} {
				if math.Abs(fast.LogLik-o.ll) > 1e-6 {
					t.Errorf("log-likelihood %.9f, %s %.9f", fast.LogLik, o.what, o.ll)
				}
			}
			left := scratch.LogLik - fast.LogLik
			t.Logf("LL %.9f, from scratch %+.2e, ordinary %+.2e; decrement %.2g; %d iterations", fast.LogLik, left, ordinary.LogLik-fast.LogLik, fast.Decrement, fast.Iterations)
			if len(r.Model.Groups) == 0 && tc.m.Effects[0] != Constrained {
				if fast.Decrement > maximumDecrement {
					t.Errorf("decrement %.3g above %g", fast.Decrement, maximumDecrement)
				}
				if left > fast.Decrement+1e-9 {
					t.Errorf("the maximum lies %.3g above the refit, more than its decrement %.3g", left, fast.Decrement)
				}
			}
			if tc.m.Effects[0] != Constrained && (fast.Cov != nil || fast.StdErrors != nil) {
				t.Errorf("the refit for its maximum has a covariance")
			}
		})
	}
}

// logitRows are n rows of K standard normal predictors and a binary
// outcome drawn from the logistic model with slopes 0.3 and threshold
// -1.5 (the model fits).
func logitRows(seed uint64, n, K int) *Data {
	rng := rand.New(rand.NewPCG(seed, 13))
	d := &Data{J: 2}
	for k := 0; k < K; k++ {
		d.Predictors = append(d.Predictors, fmt.Sprintf("x%d", k+1))
	}
	for i := 0; i < n; i++ {
		eta := 0.0
		for k := 0; k < K; k++ {
			v := rng.NormFloat64()
			d.X = append(d.X, v)
			eta += 0.3 * v
		}
		y := 0
		if rng.Float64() >= 1/(1+math.Exp(eta+1.5)) {
			y = 1
		}
		d.Y = append(d.Y, y)
	}
	return d
}

// TestLipsitzRefitPasses counts the passes over the data of the Lipsitz
// refit of a fit on 1e5 rows (RowsEvaluated, and rowsCrossed for the
// passes that form the cross-products of the columns; the score groups'
// own pass and the rank check of the indicators are not evaluations). The
// ordinary refit from the same start and first sums (taken from the fit's
// last evaluation plus a pass for the indicator parts) evaluates three
// times to second order: four passes, three with cross-products. The
// refit for the maximum alone makes the same first evaluation, then
// evaluates for the score alone, with the information at hand (on these
// data three times, the decrement falling from 14 to 4e-3, 4e-6 and
// 4e-10; on 1e6 rows twice): no pass with cross-products. The two reach
// the same log-likelihood (within 1e-6).
func TestLipsitzRefitPasses(t *testing.T) {
	d := logitRows(330, 100_000, 4)
	m := Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(4, Parallel)}
	r, err := Fit(d, m, Options{})
	if err != nil || !r.OK() {
		t.Fatalf("%v %+v", err, r)
	}
	g, err := GroupByScore(d, r, 0)
	if err != nil {
		t.Fatal(err)
	}
	n := float64(d.N())
	passes := func(f func() *Result) (*Result, float64, float64) {
		t.Helper()
		rows, crossed := RowsEvaluated(), rowsCrossed.Load()
		res := f()
		return res, float64(RowsEvaluated()-rows) / n, float64(rowsCrossed.Load()-crossed) / n
	}
	fast, fastPasses, fastCrossed := passes(func() *Result {
		res, err := lipsitzRefit(d, r, g, Options{})
		if err != nil || !res.OK() {
			t.Fatalf("refit: %v %+v", err, res)
		}
		return res
	})
	ordinary, ordinaryPasses, ordinaryCrossed := passes(func() *Result {
		ad, am, start, err := withIndicators(d, r, g)
		if err != nil {
			t.Fatal(err)
		}
		res, err := fitFromWith(ad, am, Options{Start: start}, r.rank, &firstSums{theta: start, base: r.last})
		if err != nil || !res.OK() {
			t.Fatalf("ordinary refit: %v %+v", err, res)
		}
		return res
	})
	t.Logf("passes (with cross-products): refit for the maximum %g (%g), LL %.9f, decrement %.2g; ordinary refit %g (%g), LL %.9f",
		fastPasses, fastCrossed, fast.LogLik, fast.Decrement, ordinaryPasses, ordinaryCrossed, ordinary.LogLik)
	if fastPasses != 4 || fastCrossed != 0 || ordinaryPasses != 4 || ordinaryCrossed != 3 {
		t.Errorf("passes %g (%g with cross-products) and %g (%g), want 4 (0) and 4 (3)", fastPasses, fastCrossed, ordinaryPasses, ordinaryCrossed)
	}
	if math.Abs(fast.LogLik-ordinary.LogLik) > 1e-6 {
		t.Errorf("log-likelihood %.9f, ordinary refit %.9f", fast.LogLik, ordinary.LogLik)
	}
}

// TestRefitFirstSumsOnlyOfTheirRows: the sums a fit keeps of its last
// evaluation are taken for a refit's first evaluation only on the rows
// they were formed on (the same arrays): not on other data of the same
// shape (the sums would be wrong), nor on a copy of the rows.
func TestRefitFirstSumsOnlyOfTheirRows(t *testing.T) {
	for _, wo := range []bool{false, true} {
		d := synthData(340, 2*blockRows+77, 3, 3, wo, wo)
		other := synthData(341, 2*blockRows+77, 3, 3, wo, wo)
		same := &Data{Y: append([]int(nil), d.Y...), J: d.J, X: append([]float64(nil), d.X...), Predictors: d.Predictors,
			Weights: append([]float64(nil), d.Weights...), Offset: append([]float64(nil), d.Offset...)}
		if !wo {
			same.Weights, same.Offset = nil, nil
		}
		m := Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(3, Parallel)}
		r, err := Fit(d, m, Options{})
		if err != nil || !r.OK() || r.last == nil {
			t.Fatalf("%v %+v", err, r)
		}
		for _, c := range []struct {
			name string
			d    *Data
			take bool
		}{{"its rows", d, true}, {"other rows", other, false}, {"a copy of its rows", same, false}} {
			pr, start := refitProblem(t, c.d, r)
			name := fmt.Sprintf("%s (weights and offset %v)", c.name, wo)
			if took := pr.takeFirst(start, 2, false) != nil; took != c.take {
				t.Errorf("%s: sums taken %v, want %v", name, took, c.take)
			}
			pr.first = &firstSums{theta: start, base: r.last}
			got, want := pr.evaluateKept(start, 2, false), pr.evaluate(start, 2, false)
			if !bitsEqual([]float64{got.ll}, []float64{want.ll}) || !bitsEqual(got.Vp, want.Vp) || !bitsEqual(got.T, want.T) {
				t.Errorf("%s: first evaluation LL %.12g, evaluated %.12g", name, got.ll, want.ll)
			}
		}
	}
}
