package fit

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"ordplan/internal/testsurvey"
)

// levelSeparatedData is testsurvey.LevelSeparated, n rows over L levels
// drawn from seed: a fit with nonparallel effects of the factor
// separates, and the slopes of every tenth level in the first two
// equations appear in no row's likelihood.
func levelSeparatedData(seed uint64, n, L int) *Data {
	s := testsurvey.NewLevelSeparated(rand.New(rand.NewPCG(seed, 21)), n, L)
	x, names := s.Design()
	d := &Data{J: 4, X: x, Predictors: names}
	for _, y := range s.Y {
		d.Y = append(d.Y, y-1)
	}
	return d
}

// nonparallelModel is the cumulative logit with every predictor of d
// nonparallel.
func nonparallelModel(d *Data) Model {
	eff := make([]Effect, len(d.Predictors))
	for i := range eff {
		eff[i] = Nonparallel
	}
	return Model{Comparison: Cumulative, Link: Logit, Effects: eff}
}

// nonparallelStart is the log-likelihood of nonparallelModel on d (one
// worker) and its usual start.
func nonparallelStart(t *testing.T, d *Data) (evalFunc, []float64) {
	t.Helper()
	m := nonparallelModel(d)
	ly, err := newLayout(m, d.J, d.Predictors)
	if err != nil {
		t.Fatal(err)
	}
	return newProblem(d.design(), m, ly, 1).evaluator(false), startValues(d, m, ly)
}

// TestSemidefiniteStepAscent: at every iteration of the nonparallel fit
// of separated data (levelSeparatedData), whose information is singular
// throughout (slopes no row reads, levels whose rows inform a combination
// of equations only), the step is Newton's on the range of the
// information: an ascent direction (decrement g'd > 0 while the score is
// not zero), solving (-H) d = g to rounding, zero in the coordinates the
// likelihood does not read, and the log-likelihood rises along it. An
// indefinite information still takes the eigenvalue repair, also an
// ascent direction.
func TestSemidefiniteStepAscent(t *testing.T) {
	ev, theta := nonparallelStart(t, levelSeparatedData(1, 400, 40))
	P := len(theta)
	semi := 0
	for it := 0; it < 40; it++ {
		a := ev(theta, 2)
		d, dec, c := newtonStep(a.H, a.g)
		if c == semidefinite {
			semi++
		}
		if c == definite {
			t.Fatalf("iteration %d: the information is positive definite; the data should make it singular", it)
		}
		if !(dec > 0) {
			t.Fatalf("iteration %d (%v): decrement %g, not an ascent direction", it, c, dec)
		}
		if c == semidefinite {
			gmax := 0.0
			for i := 0; i < P; i++ {
				gmax = math.Max(gmax, math.Abs(a.g[i]))
			}
			for i := 0; i < P; i++ {
				v := a.g[i]
				for j := 0; j < P; j++ {
					v += a.H[i*P+j] * d[j]
				}
				if math.Abs(v) > 1e-8*gmax+1e-10 {
					t.Fatalf("iteration %d: row %d of (-H) d - g is %g (max |g| %g)", it, i, v, gmax)
				}
				if a.H[i*P+i] == 0 && d[i] != 0 {
					t.Fatalf("iteration %d: parameter %d, which no row reads, moves by %g", it, i, d[i])
				}
			}
		}
		if b := ev(addScaled(theta, d, 1e-3), 0); !(b.ll > a.ll) && dec > 1e-10*math.Abs(a.ll) {
			t.Fatalf("iteration %d: the log-likelihood falls along the step (%.15g to %.15g)", it, a.ll, b.ll)
		}
		st := 1.0
		for h := 0; h < 60; h++ {
			if b := ev(addScaled(theta, d, st), 0); !b.bad && b.ll >= a.ll {
				break
			}
			st /= 2
		}
		theta = addScaled(theta, d, st)
	}
	if semi == 0 {
		t.Fatal("no step was taken on the range of a singular information")
	}
	// An indefinite information: the eigenvalue repair, an ascent direction.
	H := []float64{-2, 0, 0, 1} // -H = diag(2, -1)
	g := []float64{1, 1}
	if _, dec, c := newtonStep(H, g); c != repaired || !(dec > 0) {
		t.Fatalf("indefinite information: %v, decrement %g", c, dec)
	}
}

// TestSemidefiniteSameFit: the fits of separated data by nonparallel
// cumulative, stage and adjacent logits (levelSeparatedData, small enough
// for the eigenvalue repair) end as they did when every information that
// is not positive definite was repaired by its eigenvalues
// (eigenRepairOnly): the same status and separation (predictors, category
// boundaries, whether proved), the log-likelihood reached within 1e-6, the
// precision of the report, and never lower by more than 1e-9. Where the
// steps on the range of a singular information end the iterations
// (rangeExhausted: the cumulative fit), the log-likelihood reached is the
// supremum to 1e-9: Newton iterations with the eigenvalue repair alone
// carried on from there for up to 200 iterations gain less. (The
// eigenvalue repair alone stops short: its floor on the curvature slows the
// steps along the diverging directions, and it ends, after 119 iterations
// against 35, about 6e-8 below.)
func TestSemidefiniteSameFit(t *testing.T) {
	d := levelSeparatedData(2, 300, 30)
	for _, cmp := range []Comparison{Cumulative, Stage, Adjacent} {
		m := nonparallelModel(d)
		m.Comparison = cmp
		now, err := Fit(d, m, Options{})
		if err != nil {
			t.Fatal(err)
		}
		eigenRepairOnly = true
		before, err := Fit(d, m, Options{})
		eigenRepairOnly = false
		if err != nil {
			t.Fatal(err)
		}
		if now.Status != before.Status || now.Status != StatusNoFiniteMaximum {
			t.Errorf("%v: status %v, with the eigenvalue repair alone %v", cmp, now.Status, before.Status)
		}
		a, b := now.Separation, before.Separation
		if a == nil || b == nil || a.Proved != b.Proved || !slices.Equal(a.Predictors, b.Predictors) || !slices.Equal(a.Boundaries, b.Boundaries) {
			t.Errorf("%v: separation %+v, with the eigenvalue repair alone %+v", cmp, a, b)
		}
		if diff := now.SupLogLik - before.SupLogLik; !(diff >= -1e-9 && diff <= 1e-6) {
			t.Errorf("%v: log-likelihood reached %.12f, with the eigenvalue repair alone %.12f", cmp, now.SupLogLik, before.SupLogLik)
		}
		t.Logf("%v: %s; log-likelihood reached %.12f (eigenvalue repair alone %.12f), %d iterations (%d)", cmp, now.Status, now.SupLogLik, before.SupLogLik, now.Iterations, before.Iterations)
	}
	// The supremum, on the Newton iterations themselves.
	ev, start := nonparallelStart(t, d)
	st := newtonLoop(start, 200, ev)
	if st.reason != rangeExhaustedReason {
		t.Fatalf("cumulative: the iterations ended with %q after %d", st.reason, st.iters)
	}
	eigenRepairOnly = true
	more := newtonLoop(st.theta, 200, ev)
	eigenRepairOnly = false
	if more.ll-st.ll > 1e-9 {
		t.Errorf("cumulative: the iterations ended at log-likelihood %.12f; carried on with the eigenvalue repair alone, they reach %.12f", st.ll, more.ll)
	}
	t.Logf("cumulative: ended at %.12f after %d iterations; carried on with the eigenvalue repair alone, %.12f after %d more (%s)", st.ll, st.iters, more.ll, more.iters, more.reason)
}
