package render

import (
	"fmt"
	"strings"

	"ordplan/runner"
)

// unusableFits lists the candidate models that no rule saw, with why:
// fits that failed or whose covariance could not be computed, as
// (model, why) pairs in the order of the fits.
func unusableFits(or *runner.OutcomeResult) [][2]string {
	var out [][2]string
	for _, f := range or.Fits {
		if !f.Auxiliary && f.Err != "" {
			why := f.Rejected // "could not be fitted: ..." or "fitted, but its covariance ..." (applyRules)
			if why == "" {
				why = "could not be fitted: " + f.Err
			}
			out = append(out, [2]string{f.ID, why})
		}
	}
	return out
}

func writeDecisionLog(d *doc, or *runner.OutcomeResult) {
	d.h(3, "Decision log")
	for _, f := range unusableFits(or) {
		d.p("- %s %s", f[0], mdText(f[1]))
	}
	for i, ro := range or.Rules {
		d.p("**Rule %d, `%s`** (plan line %d). %s", i+1, ro.Rule.Kind, ro.Rule.Line, mdText(ro.Description))
		choosing := ro.Rule.Final()
		var rows [][]string
		for _, v := range ro.Verdicts {
			verdict := "kept"
			switch {
			case !v.Kept && choosing:
				verdict = "not chosen"
			case !v.Kept:
				verdict = "rejected"
			case choosing:
				verdict = "chosen"
			}
			rows = append(rows, []string{v.Model, verdict, v.Reason})
		}
		if len(rows) == 0 {
			d.p("No model was left for this rule.")
			continue
		}
		d.captioned(fmt.Sprintf("Rule %d, %s: verdict on each model", i+1, ro.Rule.Kind)).table([]string{"Model", "Verdict", "Why"}, rows)
	}
	switch {
	case or.Chosen == nil:
		d.p("**Result: no model chosen:** %s.", strings.TrimPrefix(or.Choice, "no model chosen: "))
	case or.Fallback:
		d.p("**Result (the plan's fallback, not a choice by the rules):** %s.", or.Choice)
	default:
		d.p("**Result:** %s.", or.Choice)
	}
}
