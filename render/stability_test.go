package render

import (
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner"
)

// TestStabilityReadingNearMargin: the plain reading of a share the
// primary's choice got in few resamples names the test that turned it
// down most often, with its p-value in the primary analysis, and reads
// the low share as the bootstrap's lean when most resamples are expected
// to reject: chi2(27) = 36.974, p = 0.0956, whose resamples' statistic is
// about noncentral chi-squared on 27 df with noncentrality 36.974, beyond
// the critical value 40.113 with probability 0.9671 (base R:
// pchisq(qchisq(0.95, 27), 27, ncp = 36.974, lower.tail = FALSE) =
// 0.96709244); with a statistic far below it (chi2(27) = 5.0: 0.1684 by
// the same R call with ncp = 5) or a rule that is no test, the reading
// keeps calling the choice fragile.
func TestStabilityReadingNearMargin(t *testing.T) {
	const chosen, full = "cumulative/constrained/logit", "cumulative/nonparallel/logit"
	build := func(kind string, nums map[string]float64) (*runner.OutcomeResult, *runner.Stability, *runner.StabilityModel) {
		or := &runner.OutcomeResult{Rules: []*runner.RuleOutcome{
			{Rule: plan.Rule{Kind: kind}, Verdicts: []runner.Verdict{{Model: chosen, Kept: true, Reason: "likelihood-ratio test against " + full + ": chi2(27) = 36.974, p = 0.0956 >= alpha 0.05", Numbers: nums}}},
			{Rule: plan.Rule{Kind: plan.RulePreferSimpler}, Verdicts: []runner.Verdict{{Model: chosen, Kept: true}}},
		}}
		st := &runner.Stability{Resamples: 40, Models: []runner.StabilityModel{
			{Model: chosen, Chosen: runner.RateOf(2, 40), Primary: true},
			{Model: full, Chosen: runner.RateOf(38, 40)},
		}, Rules: []runner.StabilityRule{
			{Number: 1, Kind: kind, Rejected: []runner.ModelShare{{Model: chosen, Share: runner.RateOf(38, 40)}, {Model: full, Share: runner.RateOf(0, 40)}}},
			{Number: 2, Kind: plan.RulePreferSimpler, Rejected: []runner.ModelShare{{Model: chosen, Share: runner.RateOf(0, 40)}, {Model: full, Share: runner.RateOf(2, 40)}}},
		}}
		return or, st, &st.Models[0]
	}
	test := func(chi2 float64) map[string]float64 {
		return map[string]float64{"alpha": 0.05, "chi2_against_cumulative_nonparallel_logit": chi2, "df_against_cumulative_nonparallel_logit": 27, "p_against_cumulative_nonparallel_logit": 0.0956}
	}

	or, st, pm := build(plan.RuleRejectIfTestRejects, test(36.974))
	got := stabilityReading(or, st, pm, st.Models[1])
	for _, want := range []string{"chose it again in 2 of 40", "rule 1 (`reject_if_test_rejects`), in 38 of 40 resamples",
		"chi2(27) = 36.974, p = 0.0956", "here on 27 df with noncentrality 36.974, mean 63.974", "a share of about 0.9671 of resamples beyond the critical value 40.113", "expected to reject the restriction in most resamples",
		"near this rule's margin, not how often a new study would choose the same model"} {
		if !strings.Contains(got, want) {
			t.Errorf("near the margin: the reading lacks %q:\n%s", want, got)
		}
	}
	if strings.Contains(got, "fragile") {
		t.Errorf("near the margin: the reading still calls the choice fragile:\n%s", got)
	}
	if strings.Contains(got, "takes the rows as independent") {
		t.Errorf("near the margin, rows resampled: the reading speaks of clusters:\n%s", got)
	}
	// Whole clusters resampled: the approximation is said to take the
	// rows as independent.
	st.Unit, st.Units = runner.UnitClusters, 7
	got = stabilityReading(or, st, pm, st.Models[1])
	if !strings.Contains(got, "beyond the critical value 40.113 (an approximation that takes the rows as independent: with whole clusters drawn, 7 of them here,") {
		t.Errorf("near the margin, clusters resampled: the reading lacks the caveat:\n%s", got)
	}

	for name, c := range map[string]struct {
		kind string
		nums map[string]float64
	}{"far from the margin": {plan.RuleRejectIfTestRejects, test(5)}, "no test": {plan.RuleRejectIfSparse, map[string]float64{"per_parameter": 12}}} {
		or, st, pm := build(c.kind, c.nums)
		got := stabilityReading(or, st, pm, st.Models[1])
		if !strings.Contains(got, "the choice is fragile") || strings.Contains(got, "margin") {
			t.Errorf("%s: the reading should call the choice fragile and say nothing of a margin:\n%s", name, got)
		}
	}
}

// TestStabilityReadingMostlyFailed: when the procedure failed as a whole in
// most resamples (19 of 20, as when every cluster of a cluster bootstrap
// is a level of a predictor), the plain reading does not
// call the choice fragile on the one that ran: it says the share counts
// failures, how many ran and what they chose, and to remove the cause;
// with 9 of 20 failed it reads the share as before.
func TestStabilityReadingMostlyFailed(t *testing.T) {
	const chosen = "cumulative/parallel/logit"
	build := func(failed int, draw string) (*runner.Stability, *runner.StabilityModel) {
		st := &runner.Stability{Resamples: 20, Draw: draw, Failed: runner.RateOf(failed, 20), Models: []runner.StabilityModel{
			{Model: chosen, Chosen: runner.RateOf(1, 20), Primary: true},
		}}
		return st, &st.Models[0]
	}
	or := &runner.OutcomeResult{}
	st, pm := build(19, "")
	got := stabilityReading(or, st, pm, st.Models[0])
	for _, want := range []string{"failed as a whole in 19 of 20 resamples", "not how stable the choice is", "of the 1 where it ran, it chose cumulative/parallel/logit in 1", "Remove the cause of the failures", "when every cluster is a level of its own no resample can differ from the data"} {
		if !strings.Contains(got, want) {
			t.Errorf("mostly failed: the reading lacks %q:\n%s", want, got)
		}
	}
	if strings.Contains(got, "fragile") {
		t.Errorf("mostly failed: the reading calls the choice fragile:\n%s", got)
	}
	st, pm = build(15, plan.StabilityChosenModel)
	got = stabilityReading(or, st, pm, st.Models[0])
	if !strings.Contains(got, "failed as a whole in 15 of 20 simulated sets") || strings.Contains(got, "weak evidence") || strings.Contains(got, "a level of its own") {
		t.Errorf("mostly failed, chosen_model: %s", got)
	}
	st, pm = build(9, "")
	if got := stabilityReading(or, st, pm, st.Models[0]); !strings.Contains(got, "the choice is fragile") || strings.Contains(got, "not how stable") {
		t.Errorf("9 of 20 failed: the reading should be as before:\n%s", got)
	}
}
