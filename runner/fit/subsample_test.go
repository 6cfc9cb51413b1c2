package fit

import (
	"math"
	"testing"
)

// smallSubsample lets the subsample stage run from 20000 rows in a test:
// the rows of its data, and the options that start the stage there.
const smallSubsample = 20_000

var smallSubsampleOpt = Options{SubsampleAbove: smallSubsample}

// fitFromUsualStart fits m from the usual starting values given as the
// user's start, which skips the subsample stage.
func fitFromUsualStart(t *testing.T, d *Data, m Model) (*Result, error) {
	t.Helper()
	ly, err := newLayout(m, d.J, d.Predictors)
	if err != nil {
		t.Fatal(err)
	}
	return Fit(d, m, Options{Start: startValues(d, m, ly)})
}

// TestSubsampleStageSameMaximum: on data large enough for the subsample
// stage, the fit reaches the maximum the usual start reaches (log-
// likelihood within 1e-9 relative, estimates and standard errors within
// 1e-7 relative), with fewer full-data iterations, for every comparison,
// with weights and an offset.
func TestSubsampleStageSameMaximum(t *testing.T) {
	d := synthData(77, smallSubsample, 3, 4, true, true)
	for _, c := range allComparisons {
		m := Model{Comparison: c.cmp, Backward: c.backward, Link: Logit, Effects: []Effect{Nonparallel, Parallel, Parallel}}
		got, err := Fit(d, m, smallSubsampleOpt)
		if err != nil {
			t.Fatal(err)
		}
		want, err := fitFromUsualStart(t, d, m)
		if err != nil {
			t.Fatal(err)
		}
		if !got.OK() || !want.OK() {
			t.Fatalf("%s: %s / %s", m.Name(), got.Status, want.Status)
		}
		if math.Abs(got.LogLik-want.LogLik) > 1e-9*math.Abs(want.LogLik) {
			t.Errorf("%s: log-likelihood %.12f, from the usual start %.12f", m.Name(), got.LogLik, want.LogLik)
		}
		for i := range want.Estimates {
			if !near(got.Estimates[i], want.Estimates[i], 1e-7, 1e-9) || !near(got.StdErrors[i], want.StdErrors[i], 1e-7, 1e-9) {
				t.Errorf("%s %s: %.12g (%.8g), from the usual start %.12g (%.8g)", m.Name(), want.ParamNames[i],
					got.Estimates[i], got.StdErrors[i], want.Estimates[i], want.StdErrors[i])
			}
		}
		if got.Iterations >= want.Iterations {
			t.Errorf("%s: %d full-data iterations from the subsample, %d from the usual start", m.Name(), got.Iterations, want.Iterations)
		}
	}
}

// TestSubsampleStageFailureAsBefore: where the subsample lacks a category
// or the data have no maximum (a predictor that separates a category), the
// fit is the one from the usual start, field for field.
func TestSubsampleStageFailureAsBefore(t *testing.T) {
	n := smallSubsample
	d := synthData(78, n, 3, 3, false, false)
	// A fourth category on one row the subsample does not draw.
	d.J = 4
	sub := d.design().subsample(3, smallSubsample)
	drawn := map[float64]bool{}
	for i := 0; i < sub.n; i++ {
		drawn[sub.x[i*sub.K]] = true
	}
	rare := 1000
	for drawn[d.X[rare*3]] {
		rare++
	}
	d.Y[rare] = 3
	m := Model{Comparison: Cumulative, Link: Logit, Effects: []Effect{Parallel, Parallel, Parallel}}
	got, err := Fit(d, m, smallSubsampleOpt)
	want, werr := fitFromUsualStart(t, d, m)
	if dumpResult(got, err) != dumpResult(want, werr) {
		t.Errorf("category missing from the subsample:\n%s\n%s", dumpResult(got, err), dumpResult(want, werr))
	}
	// Separation: x1 > 0 exactly on the rows of the first category (of
	// two).
	d = synthData(79, n, 3, 2, false, false)
	for i, y := range d.Y {
		d.X[i*3] = math.Abs(d.X[i*3]) + 0.01
		if y != 0 {
			d.X[i*3] = -d.X[i*3]
		}
	}
	got, err = Fit(d, m, smallSubsampleOpt)
	want, werr = fitFromUsualStart(t, d, m)
	if got == nil || got.Status != StatusNoFiniteMaximum {
		t.Fatalf("separated data: %s", dumpResult(got, err))
	}
	if dumpResult(got, err) != dumpResult(want, werr) {
		t.Errorf("separated data:\n%s\n%s", dumpResult(got, err), dumpResult(want, werr))
	}
}

// TestCurvatureStepsPasses counts the full-data evaluations after the
// subsample stage, for every comparison on data with weights and an
// offset, as many rows as the stage needs by default (below that the
// subsample's curvature is too rough for the steps to pay): the curvature steps (score only) bring the start into the region
// where the convergence rule needs two evaluations with second derivatives
// and the last step, three in all, where the iterations from the
// subsample's maximum itself need at least four; the maximum is the same
// (log-likelihood within 1e-9 relative).
func TestCurvatureStepsPasses(t *testing.T) {
	d := synthData(77, defaultSubsampleAbove, 3, 4, true, true)
	des := d.design().compressed()
	sub := des.subsample(d.J, defaultSubsampleAbove)
	for _, c := range allComparisons {
		m := Model{Comparison: c.cmp, Backward: c.backward, Link: Logit, Effects: []Effect{Nonparallel, Parallel, Parallel}}
		ly, err := newLayout(m, d.J, d.Predictors)
		if err != nil {
			t.Fatal(err)
		}
		sst := newProblem(sub, m, ly, 2).newton(startValues(d, m, ly), 200, false)
		if !sst.converged {
			t.Fatalf("%s: the subsample's fit did not converge", m.Name())
		}
		ev := newProblem(des, m, ly, 2).evaluator(false)
		var calls [3]int
		counted := func(th []float64, order int) evalOut {
			calls[order]++
			return ev(th, order)
		}
		st := fromSubsample(counted, sst, des.totalWeight()/sub.totalWeight(), sub.n, 200)
		steps := calls
		calls = [3]int{}
		plain := newtonLoop(sst.theta, 200, counted)
		if !st.converged || !plain.converged {
			t.Fatalf("%s: converged %v, from the subsample's maximum %v", m.Name(), st.converged, plain.converged)
		}
		if steps[2] != 3 || steps[1] < 1 || steps[1] > maxCurvatureSteps || steps[0] != 0 {
			t.Errorf("%s: %d evaluations with second derivatives, %d with the score only, %d of the value alone", m.Name(), steps[2], steps[1], steps[0])
		}
		if calls[2] < 4 {
			t.Errorf("%s: from the subsample's maximum %d evaluations with second derivatives", m.Name(), calls[2])
		}
		if math.Abs(st.ll-plain.ll) > 1e-9*math.Abs(plain.ll) {
			t.Errorf("%s: log-likelihood %.12f, from the subsample's maximum %.12f", m.Name(), st.ll, plain.ll)
		}
		t.Logf("%s: %d + %d evaluations (score only + second derivatives), from the subsample's maximum %d", m.Name(), steps[1], steps[2], calls[2])
	}
}
