package fit

import (
	"math"
	"testing"
)

// TestRefitFirstSumsSameBits: the Lipsitz refit's first evaluation made
// from the fit's last one plus the indicator sums by group (extendSums)
// equals the evaluation over all rows, every sum to the last bit, for
// every comparison, with and without weights and an offset, with a
// nonparallel predictor, for observed and expected information. The
// reference is the engine's own full evaluation (an exact identity: both
// add the same terms in the same order).
func TestRefitFirstSumsSameBits(t *testing.T) {
	for ci, c := range allComparisons {
		for _, wo := range []bool{false, true} {
			for _, scoring := range []bool{false, true} {
				d := synthData(uint64(90+ci), 3*blockRows+517, 3, 4, wo, wo)
				m := Model{Comparison: c.cmp, Backward: c.backward, Link: Logit, Effects: []Effect{Parallel, Nonparallel, Parallel}}
				r, err := Fit(d, m, Options{Scoring: scoring})
				if err != nil || !r.OK() {
					t.Fatalf("%s: %v %v", m.Name(), err, r)
				}
				if r.last == nil {
					t.Fatalf("%s: the fit kept no last evaluation", m.Name())
				}
				pr, start := refitProblem(t, d, r)
				got := pr.evaluateKept(start, 2, scoring)
				if pr.first != nil {
					t.Fatalf("%s: the first sums were not used", m.Name())
				}
				want := pr.evaluate(start, 2, scoring)
				name := m.Name()
				same := func(what string, a, b []float64) {
					t.Helper()
					if !bitsEqual(a, b) {
						t.Errorf("%s weights/offset %v scoring %v: %s %v, evaluated %v", name, wo, scoring, what, a, b)
					}
				}
				same("ll", []float64{got.ll, got.minLP}, []float64{want.ll, want.minLP})
				same("V", got.V, want.V)
				same("Vp", got.Vp, want.Vp)
				for i := range want.S {
					same("S", got.S[i], want.S[i])
				}
				same("R", got.R, want.R)
				same("T", got.T, want.T)
				if got.bad != want.bad || math.IsNaN(got.ll) {
					t.Errorf("%s: bad %v, evaluated %v", name, got.bad, want.bad)
				}
			}
		}
	}
}

// refitProblem is the problem of the Lipsitz refit of fit r on its data d
// (the model with the indicators of d's score groups) and its start, with
// the first sums from r's last evaluation.
func refitProblem(t *testing.T, d *Data, r *Result) (*problem, []float64) {
	t.Helper()
	g, err := GroupByScore(d, r, 0)
	if err != nil {
		t.Fatal(err)
	}
	ad, am, start, err := withIndicators(d, r, g)
	if err != nil {
		t.Fatal(err)
	}
	ly, err := newLayout(am, ad.J, ad.Predictors)
	if err != nil {
		t.Fatal(err)
	}
	pr := newProblem(ad.design(), am, ly, 0)
	pr.first = &firstSums{theta: start, base: r.last}
	return pr, start
}
