package render

import (
	"fmt"
	"slices"
	"strings"

	"ordplan/plan/lock"
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

// removedRules names the rules of the registered plan that the plan no
// longer has (a change removing a whole item of rules, by its index in
// the frozen plan, that did not move), with the stated reasons: the
// decision log lists the rules applied, and these were not.
func removedRules(st *lock.Status) string {
	if st == nil {
		return ""
	}
	var items []string
	for _, c := range st.Changes {
		if !strings.HasPrefix(c.Path, "rules[") || strings.Contains(c.Path, ".") || c.To != lock.Absent || c.Moved != "" {
			continue
		}
		why := "no stated reason"
		if t := strings.TrimSuffix(c.ReasonText(""), "."); t != "" {
			why = "stated reason: " + mdText(t)
		}
		items = append(items, fmt.Sprintf("%s (%s of the registered plan; %s)", codeCell(c.From), mdCode(c.Path), why))
	}
	if len(items) == 0 {
		return ""
	}
	return fmt.Sprintf("**Not applied: %s of the registered plan, removed after the plan was frozen** (see Deviations from the registered plan): %s.", sing(len(items) == 1, "a rule", "rules"), strings.Join(items, "; "))
}

func writeDecisionLog(d *doc, st *lock.Status, or *runner.OutcomeResult) {
	d.h(3, "Decision log")
	for _, f := range unusableFits(or) {
		d.p("- %s %s", f[0], mdText(f[1]))
	}
	for i, ro := range or.Rules {
		d.p("**Rule %d, `%s`** (plan line %d). %s%s", i+1, ro.Rule.Kind, ro.Rule.Line, mdText(ro.Description), ruleSinceFrozen(st.RuleChanges(i)))
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
	if rm := removedRules(st); rm != "" {
		d.p("%s", rm)
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

// ruleSinceFrozen says, after a rule's description in the decision log,
// how the rule departs from the registered plan (lock.Status.RuleChanges:
// added, moved, keys changed, with both values and the stated reason), or
// "" when it is as registered.
func ruleSinceFrozen(changes []lock.Explained) string {
	if len(changes) == 0 {
		return ""
	}
	var what, reasons []string
	for _, c := range changes {
		kind := strings.Count(c.Path, ".") == 1 // rules[i].KIND: the rule's kind itself
		switch {
		case c.From == lock.Absent && !strings.Contains(c.Path, "."):
			what = append(what, "added after the plan was frozen")
		case kind && c.From == lock.Absent:
			// the rule put in the registered one's place: said with it
		case kind && c.To == lock.Absent:
			what = append(what, fmt.Sprintf("put after the plan was frozen in the place of the registered rule %s", codeCell(`{"`+c.Path[strings.Index(c.Path, ".")+1:]+`": `+c.From+`}`)))
		case c.Moved != "" && len(c.Keys) == 0:
			what = append(what, fmt.Sprintf("moved from %s after the plan was frozen, unchanged", mdCode(c.Moved)))
		case c.Moved != "":
			what = append(what, fmt.Sprintf("moved from %s and changed after the plan was frozen (%s)", mdCode(c.Moved), keyChanges(c.Keys)))
		default:
			what = append(what, fmt.Sprintf("changed after the plan was frozen (%s: %s → %s)", mdCode(c.Path), codeCell(c.From), codeCell(c.To)))
		}
		if t := strings.TrimSuffix(c.ReasonText(""), "."); t != "" && !slices.Contains(reasons, t) {
			reasons = append(reasons, t)
		}
	}
	why := "no stated reason"
	if len(reasons) > 0 {
		why = "stated reason: " + mdText(strings.Join(reasons, "; "))
	}
	return fmt.Sprintf(" **Not as registered:** %s; %s (see Deviations from the registered plan).", strings.Join(what, "; "), why)
}
