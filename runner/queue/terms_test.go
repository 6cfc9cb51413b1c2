package queue

import (
	"math"
	"path/filepath"
	"testing"
	"time"

	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
	"ordplan/runner/queue/localserver"
)

// Jobs whose predictors are categorical terms (Madsen 1976, Copenhagen
// housing: infl, type and cont as levels) run on a worker, which rebuilds
// the design from the terms and the constants frozen on the coordinator, and come back as the local fits
// (the design columns, not the raw columns, are the result's predictors).
func TestJobsWithCategoricalTerms(t *testing.T) {
	ctx := testContext(t, 60*time.Second)
	url := localserver.ForTest(t)
	c := connect(t, ctx, url)
	path := filepath.Join(refDir, "housing_factors.csv")
	h, err := HashFile(path)
	if err != nil {
		t.Fatal(err)
	}
	cat := func(levels ...string) *design.Categorical {
		return &design.Categorical{Levels: levels, Reference: levels[0], Coding: design.Treatment, Unobserved: design.UnobservedRefuse}
	}
	spec := design.Spec{
		Sources: []design.Source{{Name: "infl", Cat: cat("low", "medium", "high")},
			{Name: "type", Cat: cat("tower", "apartment", "atrium", "terrace")}, {Name: "cont", Cat: cat("low", "high")}},
		Terms: []design.TermSpec{{Name: "infl", Source: "infl"}, {Name: "type", Source: "type"}, {Name: "cont", Source: "cont"}},
	}
	cols := []string{"infl.medium", "infl.high", "type.apartment", "type.atrium", "type.terrace", "cont.high"}
	dopt := data.Options{Outcome: "sat", Weights: "freq", Predictors: []string{"infl", "type", "cont"},
		PredictorLevels: map[string][]string{"infl": {"low", "medium", "high"}, "type": {"tower", "apartment", "atrium", "terrace"}, "cont": {"low", "high"}}}
	ds, err := data.Load(path, dopt)
	if err != nil {
		t.Fatal(err)
	}
	dz, err := design.Build(spec, ds.X, ds.N, ds.Weights, ds.Lines)
	if err != nil {
		t.Fatal(err)
	}
	var jobs []runner.Job
	for i, st := range []fit.Structure{fit.ParallelEffects, fit.PartialEffects} {
		s, err := runner.EffectsSpec(fit.Cumulative, false, fit.Logit, st, cols, []string{"type.apartment", "type.atrium", "type.terrace"}, nil)
		if err != nil {
			t.Fatal(err)
		}
		jobs = append(jobs, runner.Job{Outcome: "sat", Index: i, ID: "cumulative/" + st.String() + "/logit", Spec: s,
			DataFile: "housing_factors.csv", DataHash: h, DataOptions: dopt, Design: dz.Freeze(spec),
			FitOptions: fit.Options{Covariance: fit.Observed, Workers: 1}})
	}
	co := NewCoordinator(ctx, c, "plan-hash", &LogBuffer{})
	if _, err := co.AddData(path); err != nil {
		t.Fatal(err)
	}
	startWorker(t, url, "w1", 5*time.Second, 0)
	res, errs := co.Execute(jobs)
	for i, j := range jobs {
		if errs[i] != nil {
			t.Fatalf("%s: %v", j.ID, errs[i])
		}
		want, err := runner.ExecuteJob(path, j)
		if err != nil {
			t.Fatal(err)
		}
		if math.Float64bits(res[i].LogLik) != math.Float64bits(want.LogLik) || res[i].Predictors[2] != "type.apartment" {
			t.Errorf("%s: %v %v, local %v", j.ID, res[i].LogLik, res[i].Predictors, want.LogLik)
		}
	}
}
