package render

import (
	"strings"
	"testing"

	"ordplan/runner"
	"ordplan/runner/fit"
)

// The parallel-lines section says, for each kind of test shown, which two
// models it compares (runner/tests.go: overall the parallel model against
// the nonparallel one; a term's likelihood-ratio test the model in which
// that term alone is parallel against the nonparallel one; the score test
// of a term in the parallel model), and why a nested test and a term's
// test can disagree; kinds not shown are not described.
func TestParallelLinesTextSaysWhatEachTestCompares(t *testing.T) {
	ok := func(k fit.TestKind) fit.Test { return fit.Test{Name: k.String(), OK: true, P: 0.5} }
	or := &runner.OutcomeResult{
		Fits: []*runner.FitEntry{
			{ID: "cumulative/parallel/logit", Effects: fit.ParallelEffects},
			{ID: "cumulative/partial/logit", Effects: fit.PartialEffects, Spec: runner.Spec{Nonparallel: []string{"dose.low", "dose.high"}}},
		},
		Tests: []*runner.TestBlock{{Approach: fit.Cumulative, Link: fit.Logit,
			Global:      []fit.Test{ok(fit.TestLR), ok(fit.TestWald)},
			PerVariable: []runner.VarTests{{Predictor: "dose", Tests: []fit.Test{ok(fit.TestLR), ok(fit.TestScore)}}},
			Nested:      []runner.NestedTest{{Restricted: "cumulative/parallel/logit", Full: "cumulative/partial/logit", Test: ok(fit.TestLR)}}}},
	}
	got := strings.Join(testsMeaning(or), "\n")
	for _, w := range []string{
		"Overall (all predictors): the likelihood-ratio test compares the parallel model (one slope per column) with the nonparallel model (a slope per column and boundary); the Wald test fits only the nonparallel model",
		"For one term (the rows named by a term): the likelihood-ratio test of a term compares the model in which that term alone is parallel (every other term with a slope per boundary) with the nonparallel model; the score test of a term asks, in the parallel model (every other term parallel too), whether giving that term alone a slope per boundary would improve it.",
		"cumulative/parallel/logit within cumulative/partial/logit compares the parallel model with the partial model, which gives the columns of its partial set (dose.low, dose.high) a slope per boundary and keeps every other term parallel",
		"The two answer different questions and can disagree",
	} {
		if !strings.Contains(got, w) {
			t.Errorf("lacks %q:\n%s", w, got)
		}
	}
	for _, not := range []string{"Brant", "one slope per predictor against the model with a slope per category boundary", "Wald test of a term"} {
		if strings.Contains(got, not) {
			t.Errorf("has %q:\n%s", not, got)
		}
	}
}
