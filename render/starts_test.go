package render

import (
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner"
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
	if s := startsSentence(none); strings.Contains(s, "run_every_start") || strings.Contains(s, "abandoned") {
		t.Errorf("without constrained or stereotype models: %q", s)
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
