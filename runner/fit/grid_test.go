package fit

import (
	"fmt"
	"strings"
	"sync/atomic"
	"testing"
)

// dumpResult writes every field of a fit (the separation's contents rather
// than its address), so that two fits compare bit for bit.
func dumpResult(r *Result, err error) string {
	if r == nil {
		return fmt.Sprintf("error: %v", err)
	}
	c := *r
	sep := c.Separation
	c.Separation = nil
	c.rank = nil // the rank check's sums, a pointer (the same data give the same sums)
	c.last = nil // the last evaluation's sums, a pointer
	s := fmt.Sprintf("%+v", c)
	if sep != nil {
		s += fmt.Sprintf(" separation %+v", *sep)
	}
	return s + fmt.Sprintf(" error: %v", err)
}

// gridModels is the example plan's grid on three predictors (the first
// nonparallel in the partial model and constrained in the constrained
// one), with the stereotype model and one model whose effects do not match
// the data.
func gridModels() []Model {
	var out []Model
	for _, c := range []Comparison{Cumulative, Stage, Adjacent} {
		out = append(out,
			Model{Comparison: c, Link: Logit, Effects: []Effect{Constrained, Parallel, Parallel}},
			Model{Comparison: c, Link: Logit, Effects: []Effect{Parallel, Parallel, Parallel}},
			Model{Comparison: c, Link: Logit, Effects: []Effect{Nonparallel, Parallel, Parallel}},
			Model{Comparison: c, Link: Logit, Effects: []Effect{Nonparallel, Nonparallel, Nonparallel}})
	}
	return append(out,
		Model{Comparison: Adjacent, Link: Logit, Effects: []Effect{Constrained, Constrained, Constrained}},
		Model{Comparison: Cumulative, Link: Probit, Effects: []Effect{Parallel, Parallel}})
}

// TestFitGridSameAsFit: every fit of a grid is the fit Fit makes alone, bit
// for bit, whatever the number of fits at once, also when the caller
// changes a result (as the sandwich step does) before the fits that start
// from it end; on small data (starts run on the data, the parallel fit
// shared) and above ScreenAbove (starts screened, the partial fit shared).
func TestFitGridSameAsFit(t *testing.T) {
	for _, n := range []int{800, 6000} {
		d := synthData(41, n, 3, 4, false, false)
		models := gridModels()
		want := make([]string, len(models))
		for i, m := range models {
			want[i] = dumpResult(Fit(d, m, Options{}))
		}
		if !strings.HasPrefix(want[len(want)-1], "error:") {
			t.Fatalf("the last model should be refused: %s", want[len(want)-1])
		}
		for _, run := range []struct{ workers, limitAbove int }{{1, limitAbove}, {3, limitAbove}, {3, 0}} {
			workers := run.workers
			// limitAbove 0: the grid holds the soft memory limit
			// (holdGridLimit) as a large one does.
			limitAbove, run.limitAbove = run.limitAbove, limitAbove
			got := make([]string, len(models))
			var calls atomic.Int32 // done is called from the fits' goroutines
			FitGrid(d, models, Options{Workers: 2}, workers, func(i int, r *Result, err error) {
				got[i] = dumpResult(r, err)
				calls.Add(1)
				if r != nil {
					for k := range r.Cov {
						r.Cov[k] = -1
					}
					r.Estimates[0] = 99
				}
			})
			limitAbove = run.limitAbove
			if int(calls.Load()) != len(models) {
				t.Errorf("n = %d, %d at once: %d calls for %d models", n, workers, calls.Load(), len(models))
			}
			for i := range models {
				if got[i] != want[i] {
					t.Errorf("n = %d, %d at once: %s differs from its own fit:\ngrid %s\nfit  %s", n, workers, models[i].Name(), got[i], want[i])
				}
			}
		}
	}
}

// TestFitGridSubsampleSameAsFit: with the subsample stage brought down to
// the data's size (Options.SubsampleAbove), every fit of a grid is still
// the fit Fit makes alone, bit for bit: the partial fit a constrained model
// starts from is made with the same threshold in both.
func TestFitGridSubsampleSameAsFit(t *testing.T) {
	d := synthData(43, 3000, 3, 4, false, false)
	opt := Options{SubsampleAbove: 1000}
	models := gridModels()[:3]
	want := make([]string, len(models))
	for i, m := range models {
		want[i] = dumpResult(Fit(d, m, opt))
	}
	FitGrid(d, models, opt, 2, func(i int, r *Result, err error) {
		if got := dumpResult(r, err); got != want[i] {
			t.Errorf("%s differs from its own fit:\ngrid %s\nfit  %s", models[i].Name(), got, want[i])
		}
	})
}

// TestFitGridBadData: data that fail the checks give every model Fit's
// error.
func TestFitGridBadData(t *testing.T) {
	d := synthData(5, 200, 3, 3, false, false)
	for i := 0; i < d.N(); i++ {
		d.X[i*3+1] = 2 // a constant predictor
	}
	models := gridModels()[:4]
	FitGrid(d, models, Options{}, 2, func(i int, r *Result, err error) {
		_, want := Fit(d, models[i], Options{})
		if r != nil || err == nil || err.Error() != want.Error() {
			t.Errorf("%s: %v, %v; want %v", models[i].Name(), r, err, want)
		}
	})
}

// TestGridDeps: a constrained model waits for its partial counterpart, and
// for its parallel one only where the starts run on the data; not when the
// options differ from those of the auxiliary fits.
func TestGridDeps(t *testing.T) {
	models := gridModels()
	small := synthData(1, 100, 3, 4, false, false)
	big := &Data{Y: make([]int, 6000), J: 4}
	deps := gridDeps(small, models, Options{})
	if fmt.Sprint(deps[0]) != "[2 1]" || fmt.Sprint(deps[12]) != "[11 9]" || len(deps[1]) != 0 {
		t.Errorf("small data: %v", deps)
	}
	deps = gridDeps(big, models, Options{})
	if fmt.Sprint(deps[0]) != "[2]" || fmt.Sprint(deps[12]) != "[11]" {
		t.Errorf("large data: %v", deps)
	}
	for _, o := range []Options{{Covariance: Expected}, {Scoring: true}, {Start: []float64{1}}} {
		for i, ds := range gridDeps(small, models, o) {
			if len(ds) > 0 {
				t.Errorf("options %+v: %s waits for %v", o, models[i].Name(), ds)
			}
		}
	}
}
