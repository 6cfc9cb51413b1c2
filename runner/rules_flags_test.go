package runner

import (
	"testing"

	"ordplan/runner/fit"
)

// The two rules without options, over hand-made results: the verdicts and
// their numbers, and every candidate rejected (nothing chosen, or the
// fallback).
func TestTableFlagRules(t *testing.T) {
	fits := func() []handFit {
		return []handFit{
			{id: "cumulative/parallel/logit", nparams: 3, aic: 100, bic: 110},
			{id: "cumulative/partial/logit", status: fit.StatusNegativeProbs, nparams: 4, aic: 99, bic: 112},
			{id: "cumulative/nonparallel/logit", status: fit.StatusNoFiniteMaximum, nparams: 5},
		}
	}
	cases := []struct {
		name, rules string
		want        []string
		chosen      string
		fallback    bool
	}{
		{"unconverged", "  - reject_unconverged: true\n  - choose: {by: aic}\n", []string{
			"cumulative/parallel/logit: kept: converged in 7 iterations, max |score| 1e-09",
			"cumulative/partial/logit: kept: converged in 7 iterations, max |score| 1e-09",
			"cumulative/nonparallel/logit: rejected: status no_finite_maximum: no finite maximum",
		}, "cumulative/partial/logit", false},
		{"negative probabilities", "  - reject_negative_probabilities: true\n  - choose: {by: aic}\n", []string{
			"cumulative/parallel/logit: kept: no row has a negative predicted category probability",
			"cumulative/partial/logit: rejected: 2 of 3 rows have a negative predicted category probability",
			"cumulative/nonparallel/logit: kept: no row has a negative predicted category probability",
		}, "cumulative/parallel/logit", false},
		{"both: all rejected, fallback", "  - reject_unconverged: true\n  - reject_negative_probabilities: true\n  - reject_if_sparse: {per_parameter: 2}\n  - choose: {by: aic, otherwise: cumulative/partial/logit}\n", nil,
			"cumulative/partial/logit", true},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := handPlan(t, "[parallel, partial, nonparallel]", c.rules)
			f := fits()
			or := handOutcome(f, []int{0, 1, 2}, []float64{0, 1, 2})
			for _, e := range or.Fits {
				e.Result.Iterations, e.Result.MaxAbsScore = 7, 1e-9
				if e.Result.Status == fit.StatusNegativeProbs {
					e.Result.NegativeRows = 2
				}
				if e.Result.Status == fit.StatusNoFiniteMaximum {
					e.Result.Message = "no finite maximum"
				}
			}
			newRuleEnv(ResolvePlan(p), or).apply()
			if c.want != nil {
				wantLines(t, verdictLines(or, 0), c.want)
			}
			if or.Chosen == nil || or.Chosen.ID != c.chosen || or.Fallback != c.fallback {
				t.Errorf("chosen %v (fallback %v): %s", or.Chosen, or.Fallback, or.Choice)
			}
		})
	}
}
