package runner

import (
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner/fit"
)

// candidate is a fit as the choosing rule sees it: an id, a status, the
// two criteria and the number of parameters. No model is fitted.
func candidate(id string, status fit.Status, aic, bic float64, nparams int) *FitEntry {
	return &FitEntry{ID: id, Result: &fit.Result{Status: status, AIC: aic, BIC: bic, NParams: nparams}}
}

// The choosing rule and its tie-break, case by case: the smallest
// criterion wins; within the margin the model with fewer parameters wins;
// among those, the smaller criterion; criteria equal to rounding leave the
// grid order to decide; a fit without a criterion is set aside with its
// status named.
func TestChooseAndTieBreak(t *testing.T) {
	ok, neg, nofin := fit.StatusOK, fit.StatusNegativeProbs, fit.StatusNoFiniteMaximum
	cases := []struct {
		name   string
		by     string
		margin float64
		fits   []*FitEntry
		chosen string // "" when none
		reason string // a phrase of the chosen model's verdict, or of the choice when none
		others map[string]string
	}{
		{
			name: "smallest AIC", by: "aic",
			fits:   []*FitEntry{candidate("a", ok, 110, 130, 5), candidate("b", ok, 100, 140, 8), candidate("c", ok, 105, 120, 4)},
			chosen: "b", reason: "chosen: AIC 100.000 (smallest 100.000), 8 parameters",
			others: map[string]string{"a": "AIC 110.000 is 10.000 above the smallest (margin 0)", "c": "AIC 105.000 is 5.000 above the smallest (margin 0)"},
		},
		{
			name: "smallest BIC", by: "bic",
			fits:   []*FitEntry{candidate("a", ok, 110, 130, 5), candidate("b", ok, 100, 140, 8), candidate("c", ok, 105, 120, 4)},
			chosen: "c", reason: "chosen: BIC 120.000 (smallest 120.000), 4 parameters",
		},
		{
			name: "within the margin fewer parameters win", by: "aic", margin: 2,
			fits:   []*FitEntry{candidate("big", ok, 100, 0, 9), candidate("small", ok, 101.5, 0, 4), candidate("far", ok, 102.5, 0, 2)},
			chosen: "small", reason: "chosen: AIC 101.500 (smallest 100.000), 4 parameters; 2 models within the margin 2, this one has the fewest parameters",
			others: map[string]string{"big": "within the margin (AIC 100.000, +0.000) but 9 parameters, more than 4", "far": "AIC 102.500 is 2.500 above the smallest (margin 2)"},
		},
		{
			name: "same parameters within the margin: smaller criterion", by: "aic", margin: 2,
			fits:   []*FitEntry{candidate("a", ok, 101, 0, 4), candidate("b", ok, 100.5, 0, 4)},
			chosen: "b", reason: "2 models within the margin 2, this one has the fewest parameters (as 1 other has) and of those the smallest AIC",
		},
		{
			name: "equal to rounding: grid order", by: "bic",
			fits:   []*FitEntry{candidate("first", ok, 0, 200+1e-9, 6), candidate("second", ok, 0, 200, 6)},
			chosen: "first", reason: "chosen: BIC 200.000",
		},
		{
			name: "equal within the margin: grid order, said so", by: "bic", margin: 2,
			fits:   []*FitEntry{candidate("first", ok, 0, 200+1e-9, 6), candidate("second", ok, 0, 200, 6)},
			chosen: "first", reason: "this one has the fewest parameters (as 1 other has) and the same BIC, and comes first in the plan's grid",
		},
		{
			// Equal to rounding is 1e-8 relative (2e-6 at 200): "first" is
			// within it of "second", "second" of "third", but "first" not of
			// "third", the smallest; "second" is the first in grid order of
			// those equal to the smallest.
			name: "near ties in a chain: the smallest decides, then grid order", by: "bic", margin: 2,
			fits:   []*FitEntry{candidate("first", ok, 0, 200+2.4e-6, 6), candidate("second", ok, 0, 200+1.2e-6, 6), candidate("third", ok, 0, 200, 6)},
			chosen: "second", reason: "this one has the fewest parameters (as 2 others have) and the same BIC, and comes first in the plan's grid",
			others: map[string]string{"first": "within the margin (BIC 200.000, +0.000) but 6 parameters like second, whose BIC is smaller", "third": "within the margin (BIC 200.000, +0.000) but 6 parameters and the same BIC as second, which comes first in the plan's grid"},
		},
		{
			name: "a fit without a criterion is set aside", by: "aic",
			fits:   []*FitEntry{candidate("sep", nofin, 50, 50, 3), candidate("neg", neg, 120, 0, 6), candidate("fine", ok, 125, 0, 5)},
			chosen: "neg", reason: "chosen: AIC 120.000",
			others: map[string]string{"sep": "no AIC: status no_finite_maximum"},
		},
		{
			// The fit's own message says why it has no criterion (here the
			// separation a level found only in one category causes), which
			// the report's decision log would otherwise never show without
			// an earlier reject_unconverged rule.
			name: "a fit without a criterion is set aside with its reason", by: "aic",
			fits: []*FitEntry{{ID: "sep", Result: &fit.Result{Status: nofin, NParams: 3, Message: "every row with g.b = 1 is in category \"hi\""}},
				candidate("fine", ok, 125, 0, 5)},
			chosen: "fine", reason: "chosen: AIC 125.000",
			others: map[string]string{"sep": "no AIC: status no_finite_maximum: every row with g.b = 1 is in category \"hi\""},
		},
		{
			name: "nothing usable", by: "aic",
			fits:   []*FitEntry{candidate("sep", nofin, 0, 0, 3)},
			reason: "no model chosen: every candidate was rejected, and the plan says to stop",
		},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			or := &OutcomeResult{}
			ro := &RuleOutcome{}
			newRuleEnv(ResolvePlan(&plan.Plan{}), or).choose(plan.Rule{Kind: plan.RuleChoose, By: c.by, Margin: c.margin, Line: 7, Otherwise: plan.OtherwiseStop}, c.fits, ro)
			if c.chosen == "" {
				if or.Chosen != nil || !strings.Contains(or.Choice, c.reason) {
					t.Fatalf("chose %v (%q), want none (%q)", or.Chosen, or.Choice, c.reason)
				}
				return
			}
			if or.Chosen == nil || or.Chosen.ID != c.chosen {
				t.Fatalf("chose %v, want %s: %q", or.Chosen, c.chosen, or.Choice)
			}
			v := verdictOf(ro, c.chosen)
			if v == nil || !v.Kept || !strings.Contains(v.Reason, c.reason) {
				t.Errorf("verdict on %s: %+v, want kept with %q", c.chosen, v, c.reason)
			}
			if or.Choice != c.chosen+": "+v.Reason {
				t.Errorf("choice %q", or.Choice)
			}
			for id, want := range c.others {
				v := verdictOf(ro, id)
				if v == nil || v.Kept || v.Reason != want {
					t.Errorf("verdict on %s: %+v, want %q", id, v, want)
				}
			}
			for _, f := range c.fits {
				want := "not chosen"
				switch {
				case f.ID == c.chosen:
					want = "chosen"
				case !f.OK():
					want = "rejected"
				}
				if f.Verdict != want {
					t.Errorf("%s: verdict %q, want %q", f.ID, f.Verdict, want)
				}
			}
		})
	}
}
