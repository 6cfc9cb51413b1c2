package runner

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner/fit"
)

// TestRunEveryStart: models.run_every_start reaches the fits of a plan
// (fit.Options.KeepStarts): on the example plan (plans/example.yaml, its
// invented data from plans/gendemo) some starts of the constrained and
// stereotype searches are abandoned without the key, and none with it,
// and both reach the same best log-likelihood.
func TestRunEveryStart(t *testing.T) {
	path := filepath.Join("..", "plans", "example.yaml")
	src, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	run := func(every bool) map[string]*fit.Result {
		t.Helper()
		s := string(src)
		if every {
			s = strings.Replace(s, "\nmodels:\n", "\nmodels:\n  run_every_start: true\n", 1)
		}
		p, err := plan.Parse([]byte(s), path)
		if err != nil {
			t.Fatal(err)
		}
		if p.Models.RunEveryStart != every || ResolvePlan(p).Fit.KeepStarts != every {
			t.Fatalf("run_every_start %v: plan %v, fit options %v", every, p.Models.RunEveryStart, ResolvePlan(p).Fit.KeepStarts)
		}
		res, err := Run(p, Options{})
		if err != nil {
			t.Fatal(err)
		}
		out := map[string]*fit.Result{}
		for _, or := range res.Outcomes {
			for _, e := range or.Fits {
				if (e.Effects == fit.ConstrainedEffects || e.Effects == fit.StereotypeEffects) && e.Result != nil {
					out[or.Outcome.Column+"/"+e.ID] = e.Result
				}
			}
		}
		if len(out) == 0 {
			t.Fatal("no constrained or stereotype fit")
		}
		return out
	}
	abandoned := func(r *fit.Result) int {
		n := 0
		for _, s := range r.Starts {
			if strings.Contains(s.Reason, "abandoned") {
				n++
			}
		}
		return n
	}
	some, every := run(false), run(true)
	n := 0
	for id, r := range some {
		n += abandoned(r)
		e := every[id]
		if e == nil {
			t.Fatalf("%s: not fitted with run_every_start", id)
		}
		if k := abandoned(e); k > 0 {
			t.Errorf("%s: %d starts abandoned with run_every_start", id, k)
		}
		if len(e.Starts) != len(r.Starts) || e.LogLik != r.LogLik {
			t.Errorf("%s: %d starts, best %.10g with run_every_start; %d, %.10g without", id, len(e.Starts), e.LogLik, len(r.Starts), r.LogLik)
		}
	}
	if n == 0 {
		t.Error("no start abandoned without run_every_start: the test shows nothing")
	}
}
