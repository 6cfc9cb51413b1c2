package render

import (
	"fmt"
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// The report says how the searches from several starts were run: every
// start to its end with models.run_every_start, otherwise with starts
// abandoned early, screened first when the data have more rows than the
// fits' screening threshold (fit.Options.ScreenRows, not a copy of it).
func TestStartsSentence(t *testing.T) {
	above := fit.Options{}.ScreenRows()
	result := func(every bool, rows int) *runner.Result {
		return &runner.Result{Plan: &plan.Plan{Models: plan.Models{RunEveryStart: every, Effects: []fit.Structure{fit.ParallelEffects, fit.ConstrainedEffects}}},
			Outcomes: []*runner.OutcomeResult{{FitData: &fit.Data{Y: make([]int, rows)}}}}
	}
	cases := []struct {
		every      bool
		rows       int
		want, lack []string
	}{
		{true, above + 1, []string{"every start was run to its end, none abandoned early"}, []string{"screened"}},
		{false, above + 1, []string{"abandoned early", "as here, the starts are first screened", "`models.run_every_start: true`"}, []string{"not the case here"}},
		{false, above, []string{"abandoned early", "not the case here", "`models.run_every_start: true`"}, []string{"as here"}},
	}
	// A plan without searches from several starts is not told to set the key.
	none := result(false, above+1)
	none.Plan.Models.Effects = []fit.Structure{fit.ParallelEffects}
	if s := startsSentence(none); s != "" {
		t.Errorf("without constrained or stereotype models the report speaks of their starts: %q", s)
	}
	for _, c := range cases {
		s := startsSentence(result(c.every, c.rows))
		for _, w := range c.want {
			if !strings.Contains(s, w) {
				t.Errorf("every %v, %d rows: %q lacks %q", c.every, c.rows, s, w)
			}
		}
		for _, w := range c.lack {
			if strings.Contains(s, w) {
				t.Errorf("every %v, %d rows: %q holds %q", c.every, c.rows, s, w)
			}
		}
	}
}

// The report's sentence on the rows compared says what the run did with
// missing values, and what that assumes: dropped rows (a complete-case
// analysis), imputed sets (missing at random), or none missing.
func TestRowsSentence(t *testing.T) {
	result := func(mt *data.MissingTable, imputed bool) *runner.Result {
		or := &runner.OutcomeResult{Data: &data.Dataset{Missing: mt}}
		if imputed {
			or.Imputed = &runner.ImputedRun{M: 5}
		}
		return &runner.Result{Outcomes: []*runner.OutcomeResult{or}}
	}
	dropped := &data.MissingTable{Columns: []string{"y", "x"}, Patterns: []data.MissingPattern{{Missing: []bool{false, true}, Rows: 3}}, Rows: 10}
	complete := &data.MissingTable{Columns: []string{"y", "x"}, Rows: 10}
	for _, c := range []struct {
		r          *runner.Result
		want, lack string
	}{
		{result(dropped, false), "a complete-case analysis", "missing at random"},
		{result(complete, false), "no used column had a missing value", "dropped"},
		{result(nil, false), "no used column had a missing value", "dropped"},
		{result(dropped, true), "missing at random given the columns of the imputation models", "complete-case"},
	} {
		s := rowsSentence(c.r)
		if !strings.Contains(s, c.want) || strings.Contains(s, c.lack) {
			t.Errorf("%q: want %q, not %q", s, c.want, c.lack)
		}
	}
}

// The sentence on independence says what the run's standard errors allow
// for: cluster-robust errors name the clusters (and caution when they are
// few) and say that likelihood-ratio tests and criteria ignore them.
func TestIndependenceSentence(t *testing.T) {
	result := func(cov fit.Covariance, clusters int) *runner.Result {
		ds := &data.Dataset{}
		for i := 0; i < 3*clusters; i++ {
			ds.Cluster = append(ds.Cluster, fmt.Sprint("c", i%clusters))
		}
		p := &plan.Plan{}
		p.Data.Cluster = "district"
		return &runner.Result{Plan: p, Analysis: &runner.Analysis{Errors: runner.CovariancePolicy{Covariance: cov}},
			Outcomes: []*runner.OutcomeResult{{Data: ds}}}
	}
	sampling := func(r *runner.Result) *runner.Result {
		r.Analysis.Errors.Sampling = true
		return r
	}
	for _, c := range []struct {
		r          *runner.Result
		want, lack []string
	}{
		{result(fit.Clustered, 24), []string{"within the 24 clusters of `district`", "likelihood-ratio, score, Brant and Wolfe-Gould tests and AIC and BIC do not", "With 24 clusters (fewer than about 40)"}, nil},
		{result(fit.Clustered, 50), []string{"within the 50 clusters of `district`"}, []string{"fewer than about 40"}},
		{result(fit.Sandwich, 0), []string{"sandwich standard errors, intervals and Wald tests stay valid"}, []string{"clusters"}},
		{result(fit.Observed, 0), []string{"Each model assumes that observations are independent given the predictors"}, []string{"clusters", "sandwich"}},
		{sampling(result(fit.Sandwich, 0)), []string{"rescaled to sum to the rows used", "no clusters unless clustered errors are asked for", runner.SamplingTestsText(), "Errors of average marginal effects carry only the parameters' uncertainty"}, []string{"stay valid"}},
	} {
		s := independenceSentence(c.r)
		for _, w := range c.want {
			if !strings.Contains(s, w) {
				t.Errorf("%q lacks %q", s, w)
			}
		}
		for _, w := range c.lack {
			if strings.Contains(s, w) {
				t.Errorf("%q holds %q", s, w)
			}
		}
	}
}
