package fit

import (
	"math"
	"slices"
	"testing"
)

// withInformation is ev, except that it evaluates second derivatives
// whenever the score is asked for: newtonLoop then runs the rule with each
// point's own information throughout (the rule before the score-only
// evaluation after a small decrement).
func withInformation(ev evalFunc, calls *[3]int) evalFunc {
	return func(th []float64, order int) evalOut {
		if order == 1 {
			order = 2
		}
		calls[order]++
		return ev(th, order)
	}
}

// counting is ev with its calls counted by order.
func counting(ev evalFunc, calls *[3]int) evalFunc {
	return func(th []float64, order int) evalOut {
		calls[order]++
		return ev(th, order)
	}
}

// sameMaximum compares the Newton runs a (score-only evaluations after a
// small decrement) and b (each point's own information): the same status,
// log-likelihood within 1e-12 relative, estimates within 1e-7 of their
// standard error (from b's information) and the information itself within
// 1e-7 relative.
func sameMaximum(t *testing.T, name string, a, b newtonState) {
	t.Helper()
	if a.converged != b.converged {
		t.Errorf("%s: converged %v, with the information at every point %v (%s; %s)", name, a.converged, b.converged, a.reason, b.reason)
		return
	}
	if !b.converged {
		return
	}
	if math.Abs(a.ll-b.ll) > 1e-12*math.Abs(b.ll) {
		t.Errorf("%s: log-likelihood %.15g, with the information at every point %.15g", name, a.ll, b.ll)
	}
	P := len(b.theta)
	cov, err := invertSym(negated(b.hess), P)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	for i := range b.theta {
		if se := math.Sqrt(cov[i*P+i]); math.Abs(a.theta[i]-b.theta[i]) > 1e-7*se {
			t.Errorf("%s: estimate %d %.15g, with the information at every point %.15g (standard error %.3g)", name, i, a.theta[i], b.theta[i], se)
		}
	}
	for i := range b.hess {
		scale := math.Sqrt(math.Abs(b.hess[(i/P)*(P+1)] * b.hess[(i%P)*(P+1)]))
		if math.Abs(a.hess[i]-b.hess[i]) > 1e-7*scale {
			t.Errorf("%s: information [%d,%d] %.15g, with the information at every point %.15g", name, i/P, i%P, a.hess[i], b.hess[i])
		}
	}
}

// TestScoreOnlyAfterSmallDecrement: the Newton rule evaluates the step
// after a small decrement for the score alone and ends there with the
// previous point's information when that leaves a negligible error. Its
// maximum is the one the rule finds with each point's own information
// (log-likelihood 1e-12 relative, estimates 1e-7 standard errors, the
// information at the maximum 1e-7 relative to the diagonal), on every
// reference record without constrained predictors (sources: refSources)
// from the usual start, and on 50000 rows from a start half a hundredth
// of a standard error from the maximum, for every comparison: there it needs
// one evaluation with second derivatives fewer.
func TestScoreOnlyAfterSmallDecrement(t *testing.T) {
	for _, rec := range refRecords(t, false) {
		name, rs, rm := rec.name, rec.rs, rec.rm
		m := rm.modelOf(t)
		d := rs.data(rm.Predictors)
		ly, err := newLayout(m, d.J, d.Predictors)
		if err != nil {
			t.Fatal(err)
		}
		ev := newProblem(d.design().compressed(), m, ly, 1).evaluator(false)
		var ca, cb [3]int
		a := newtonLoop(startValues(d, m, ly), 200, counting(ev, &ca))
		b := newtonLoop(startValues(d, m, ly), 200, withInformation(ev, &cb))
		sameMaximum(t, name+"/"+rm.ID, a, b)
	}
	// Starts close to the maximum, as a constrained model's from the
	// fit that nests it: half a hundredth of a standard error away in
	// every parameter.
	d := synthData(77, 50000, 3, 4, true, true)
	des := d.design().compressed()
	for _, c := range allComparisons {
		m := Model{Comparison: c.cmp, Backward: c.backward, Link: Logit, Effects: []Effect{Nonparallel, Parallel, Parallel}}
		ly, err := newLayout(m, d.J, d.Predictors)
		if err != nil {
			t.Fatal(err)
		}
		ev := newProblem(des, m, ly, 2).evaluator(false)
		var ca, cb [3]int
		top := newtonLoop(startValues(d, m, ly), 200, ev)
		P := len(top.theta)
		cov, err := invertSym(negated(top.hess), P)
		if err != nil {
			t.Fatal(err)
		}
		start := slices.Clone(top.theta)
		for i := range start {
			start[i] += 0.005 * math.Sqrt(cov[i*P+i]) * float64(1-2*(i%2))
		}
		a := newtonLoop(start, 200, counting(ev, &ca))
		b := newtonLoop(start, 200, withInformation(ev, &cb))
		sameMaximum(t, m.Name(), a, b)
		if ca[2] != 2 || ca[1] != 1 || cb[2] != 3 {
			t.Errorf("%s: %d + %d evaluations (score only + second derivatives), with the information at every point %d", m.Name(), ca[1], ca[2], cb[2])
		}
	}
}

// TestStartAtMaximumOneStep: a start already within the rule's last-step
// decrement of the maximum (1e-10 |LL|), as a constrained model's start at
// the maximum of its approximation, takes one step with second derivatives
// and ends there once that point's own decrement confirms it: two
// evaluations in all, none for the score alone (the step for the score
// and the last step made three), and the maximum the rule finds from the
// usual start (sameMaximum: log-likelihood 1e-12 relative, estimates 1e-7
// standard errors, information 1e-7), on 50000 rows from a start 1e-4
// standard errors from the maximum in every parameter, for every
// comparison. A start half a hundredth of a standard error away, with a
// decrement above that bound, keeps the usual path
// (TestScoreOnlyAfterSmallDecrement).
func TestStartAtMaximumOneStep(t *testing.T) {
	d := synthData(77, 50000, 3, 4, true, true)
	des := d.design().compressed()
	for _, c := range allComparisons {
		m := Model{Comparison: c.cmp, Backward: c.backward, Link: Logit, Effects: []Effect{Nonparallel, Parallel, Parallel}}
		ly, err := newLayout(m, d.J, d.Predictors)
		if err != nil {
			t.Fatal(err)
		}
		ev := newProblem(des, m, ly, 2).evaluator(false)
		top := newtonLoop(startValues(d, m, ly), 200, ev)
		P := len(top.theta)
		cov, err := invertSym(negated(top.hess), P)
		if err != nil {
			t.Fatal(err)
		}
		start := slices.Clone(top.theta)
		for i := range start {
			start[i] += 1e-4 * math.Sqrt(cov[i*P+i]) * float64(1-2*(i%2))
		}
		first := ev(start, 2)
		_, dec, pd := newtonDirection(first.H, first.g)
		if !pd || dec > 1e-10*math.Abs(first.ll) || dec <= 1e-16*math.Abs(first.ll) {
			t.Fatalf("%s: the start's decrement %.3g is not between 1e-16 and 1e-10 |LL| (%.6g)", m.Name(), dec, first.ll)
		}
		var calls [3]int
		a := newtonLoop(start, 200, counting(ev, &calls))
		sameMaximum(t, m.Name(), a, top)
		if calls[2] != 2 || calls[1] != 0 || calls[0] != 0 || a.iters != 1 {
			t.Errorf("%s: %d + %d + %d evaluations (log-likelihood, score only, second derivatives) and %d iterations, want 0 + 0 + 2 and 1", m.Name(), calls[0], calls[1], calls[2], a.iters)
		}
	}
}
