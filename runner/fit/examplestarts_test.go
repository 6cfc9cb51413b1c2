package fit_test

import (
	"fmt"
	"path/filepath"
	"testing"

	"ordplan/plan"
	"ordplan/runner"
	"ordplan/runner/fit"
)

// TestExamplePlanKeepStartsSameMaximum: the constrained and stereotype
// models of the example plan (plans/example.yaml, its invented data from
// plans/gendemo) reach the same maximum whether the starts that cannot
// reach the best are abandoned or not (Options.KeepStarts): the fits the
// plan's run reports against fits without abandoning, and the same with
// the starts screened on the quadratic approximation. The reference
// records are checked in TestKeepStartsSameMaximum.
func TestExamplePlanKeepStartsSameMaximum(t *testing.T) {
	p, err := plan.Load(filepath.Join("..", "..", "plans", "example.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	res, err := runner.Run(p, runner.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var tally fit.StartsTally
	for _, or := range res.Outcomes {
		for _, e := range or.Fits {
			if e.Effects != fit.ConstrainedEffects && e.Effects != fit.StereotypeEffects {
				continue
			}
			if e.Result == nil {
				t.Fatalf("%s: not fitted: %s", e.ID, e.Err)
			}
			m, err := e.Spec.Model()
			if err != nil {
				t.Fatal(err)
			}
			refit := func(opt fit.Options) *fit.Result {
				r, err := fit.Fit(or.FitData, m, opt)
				if err != nil {
					t.Fatalf("%s: %v", e.ID, err)
				}
				return r
			}
			opt := res.Analysis.Fit
			keep := opt
			keep.KeepStarts = true
			tally.Compare(t, fmt.Sprintf("%s %s, as the run reports it", or.Outcome.Column, e.ID), e.Result, refit(keep))
			opt.ScreenAbove, keep.ScreenAbove = -1, -1
			tally.Compare(t, fmt.Sprintf("%s %s, starts screened", or.Outcome.Column, e.ID), refit(opt), refit(keep))
		}
	}
	tally.Check(t)
}
