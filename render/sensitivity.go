package render

import (
	"fmt"
	"slices"
	"strings"

	"ordplan/internal/words"
	"ordplan/plan"
	"ordplan/plan/lock"
	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/fit"
	"ordplan/runner/impute/chained"
)

// sensitivityLimit is what the report says of every set of sensitivity
// analyses: they are the ones fixed in advance, and their agreement shows
// no robustness beyond them; an analysis whose estimates are the primary
// analysis's by construction (errorsOnlyNames) is not counted as
// agreement.
func sensitivityLimit(r *runner.Result) string {
	head := "The sensitivity analyses shown are those the plan fixed in advance, and only those. "
	if late := sinceFrozenNames(r); len(late) > 0 {
		head = fmt.Sprintf("The sensitivity analyses shown are those of the plan, and only those; not fixed in advance, since they are not as registered (added or changed after the plan was frozen: see Deviations from the registered plan): %s. ", strings.Join(late, ", "))
	}
	if rm := removedSensitivityNote(r); rm != "" {
		head = strings.Replace(head, ", and only those", "", 1) + rm + " "
	}
	const moved = "the choice and the estimates did not move under the changes tried; it is not proof that the results are robust to changes not tried (other subsets of rows, other models or predictors, another handling of missing values, data missing not at random, confounding)."
	eo := errorsOnlyNames(r)
	if len(eo) == 0 {
		return head + "Agreement between them shows that " + moved
	}
	one := fmt.Sprintf("The analysis %s changes only how the standard errors are computed, on the same rows, so its estimates are the primary analysis's by construction, and so is its choice but for decisions that read the covariance: its agreement is not evidence, and only its standard errors and intervals (and such decisions) are informative.", strings.Join(eo, ", "))
	if len(eo) > 1 {
		one = fmt.Sprintf("The analyses %s change only how the standard errors are computed, on the same rows, so their estimates are the primary analysis's by construction, and so are their choices but for decisions that read the covariance: their agreement is not evidence, and only their standard errors and intervals (and such decisions) are informative.", strings.Join(eo, ", "))
	}
	if len(eo) == len(r.Sensitivity) {
		return head + one + " They are not proof that the results are robust to other changes (other subsets of rows, other models or predictors, another handling of missing values, data missing not at random, confounding)."
	}
	return head + one + " Agreement between the others and the primary analysis shows that " + moved
}

// removedSensitivityNote says which sensitivity analyses of the
// registered plan the plan no longer has (lock.Status.RemovedSensitivity):
// removed, or renamed, after the plan was frozen, so not run, with the
// stated reasons; "" when none.
func removedSensitivityNote(r *runner.Result) string {
	if r.Registration == nil || len(r.Registration.RemovedSensitivity) == 0 {
		return ""
	}
	var names, reasons []string
	for _, ra := range r.Registration.RemovedSensitivity {
		names = append(names, mdText(ra.Name))
		if t := strings.TrimSuffix(ra.Reason, "."); t != "" && !slices.Contains(reasons, t) {
			reasons = append(reasons, t)
		}
	}
	why := "no stated reason"
	if len(reasons) > 0 {
		why = "stated reason: " + mdText(strings.Join(reasons, "; "))
	}
	if len(names) == 1 {
		return fmt.Sprintf("The registered sensitivity analysis %s is not run: it was removed (or renamed) after the plan was frozen (%s; see Deviations from the registered plan).", names[0], why)
	}
	return fmt.Sprintf("The registered sensitivity analyses %s are not run: they were removed (or renamed) after the plan was frozen (%s; see Deviations from the registered plan).", words.AndList(names), why)
}

// errorsOnlyNames are the sensitivity analyses whose estimates are the
// primary analysis's by construction for every outcome
// (runner.ErrorsOnly), in the plan's order.
func errorsOnlyNames(r *runner.Result) []string {
	var out []string
	for _, sr := range r.Sensitivity {
		all := len(r.Outcomes) > 0
		for _, or := range r.Outcomes {
			ok, _ := runner.ErrorsOnly(r, sr, or.Outcome.Column)
			all = all && ok
		}
		if all {
			out = append(out, mdText(sr.Sensitivity.Name))
		}
	}
	return out
}

// errorsOnlyNote is what the report says, for one outcome, of an analysis
// whose estimates are the primary analysis's by construction
// (runner.ErrorsOnly): only its errors and intervals, and the decisions
// that read the covariance, are informative; "" for another analysis.
func errorsOnlyNote(r *runner.Result, sr *runner.SensitivityResult, column string) string {
	ok, readers := runner.ErrorsOnly(r, sr, column)
	if !ok {
		return ""
	}
	var keys []string
	for _, c := range sr.Sensitivity.Changes {
		keys = append(keys, mdCode(c))
	}
	s := fmt.Sprintf("**%s** changes only how the standard errors are computed (%s), on the same rows: the fits maximise the same likelihood, so its estimates are the primary analysis's by construction", mdText(sr.Sensitivity.Name), strings.Join(keys, ", "))
	if len(readers) == 0 {
		return s + ", and so is its choice, as no rule reads the covariance. Its agreement with the primary analysis is not evidence of robustness: only its standard errors and intervals are informative."
	}
	return s + fmt.Sprintf("; its choice can differ only through the decisions that read the covariance (%s). Only its standard errors and intervals, and those decisions, are informative: agreement otherwise is not evidence of robustness.", strings.Join(readers, "; "))
}

// writeSensitivity writes the section of the plan's sensitivity analyses:
// what each changes and why, the model its rules chose beside the primary
// analysis's, and the primary chosen model's estimates under each. The
// numbers are those of decisions.json (runner.KeyEstimates,
// runner.PrimaryModelUnder).
func writeSensitivity(d *doc, r *runner.Result) {
	if len(r.Sensitivity) == 0 {
		return
	}
	d.h(2, "Sensitivity analyses")
	d.p("Each sensitivity analysis below is the primary plan with the change listed, checked as a whole plan and run on the same data through the same candidate models and decision rules (its inference beyond the estimates, such as hypotheses and marginal effects, is not run). %s", sensitivityLimit(r))
	var rows [][]string
	for i, sr := range r.Sensitivity {
		s := sr.Sensitivity
		var ch []string
		for _, c := range sensitivityChanges(r, s) {
			if c.Moved != "" {
				what := "(unchanged)"
				if len(c.Keys) > 0 {
					what = "and changed: " + keyChanges(c.Keys)
				}
				ch = append(ch, fmt.Sprintf("%s: moved from %s %s", mdCode(c.Path), mdCode(c.Moved), what))
				continue
			}
			ch = append(ch, fmt.Sprintf("%s: %s → %s", mdCode(c.Path), mdCode(c.From), mdCode(c.To)))
		}
		why := s.Why
		if note := sinceFrozenNote(r, i); note != "" {
			why = md(mdText(s.Why) + " **" + note + ".**")
		}
		rows = append(rows, []string{md(mdText(s.Name)), md(strings.Join(ch, "; ")), why})
	}
	d.captioned("Sensitivity analyses of the plan: what each changes (primary plan → this analysis) and why").table([]string{"Analysis", "Changes", "Why"}, rows)
	for _, sr := range r.Sensitivity {
		if sr.Err != "" {
			d.p("**The sensitivity analysis %s could not be run:** %s", mdText(sr.Sensitivity.Name), mdText(sr.Err))
		}
		if ws := sr.Warnings(r); len(ws) > 0 {
			d.p("**Warnings of the sensitivity analysis %s** (beyond those of the primary analysis; `ordplan run` prints them too):", mdText(sr.Sensitivity.Name))
			for i, w := range ws {
				ws[i] = mdText(w)
			}
			d.list(ws)
		}
	}
	level, _ := confidence(r)
	for _, or := range r.Outcomes {
		writeSensitivityOutcome(d, r, or, level)
	}
}

// sensitivityChanges are the changes of an analysis key by key, down to
// the values that differ (categorical.street_type.unobserved: "refuse" →
// "drop"), as the comparison of a plan with its lock finds them
// (lock.Diff); a value the plan does not have is (none).
func sensitivityChanges(r *runner.Result, s plan.Sensitivity) []lock.Change {
	var out []lock.Change
	for _, v := range s.Values(r.Plan) {
		wrap := func(js string) []byte {
			if js == "null" {
				return []byte("{}")
			}
			return []byte(`{"` + v.Key + `": ` + js + `}`)
		}
		cs, err := lock.Diff(wrap(v.Primary), wrap(v.Here))
		if err != nil || len(cs) == 0 {
			cs = []lock.Change{{Path: v.Key, From: v.Primary, To: v.Here}}
		}
		for _, c := range cs {
			for _, x := range []*string{&c.From, &c.To} {
				if *x == lock.Absent || *x == "null" {
					*x = "(none)"
				}
			}
			out = append(out, c)
		}
	}
	return out
}

// sensitivityReferenceWords says what the columns Reference and df of
// the sensitivity analyses' estimates hold (runner.KeyEstimate).
const sensitivityReferenceWords = "Column Reference names the distribution each interval refers to, on the degrees of freedom in column df (inf for the normal): the normal for a fit of one data set, t on G-1 under cluster-robust errors from G clusters, t on each estimate's Barnard-Rubin degrees of freedom when pooled over imputed sets (the normal where they are infinite); so the same standard error can give intervals of different widths."

// writeSensitivityOutcome writes, for one outcome, the model each
// analysis chose and the primary chosen model's estimates under each.
func writeSensitivityOutcome(d *doc, r *runner.Result, or *runner.OutcomeResult, level float64) {
	d.h(3, "Sensitivity analyses of "+mdText(or.Outcome.Label))
	primary := "none"
	if or.Chosen != nil {
		primary = or.Chosen.ID
	}
	rows := [][]string{{"primary analysis (the plan)", fmt.Sprint(or.AsRead().N), primary, "—"}}
	for _, sr := range r.Sensitivity {
		sor := sr.Outcome(or.Outcome.Column)
		if sor == nil {
			rows = append(rows, []string{sr.Sensitivity.Name, "", "not run", ""})
			continue
		}
		chosen, same := "none: "+strings.TrimSuffix(sor.Choice, "."), "no"
		if sor.Chosen != nil {
			chosen = sor.Chosen.ID
			if sor.Fallback {
				chosen += " (the plan's fallback)"
			}
			if or.Chosen != nil && sor.Chosen.ID == or.Chosen.ID {
				same = "yes"
			}
		}
		rows = append(rows, []string{sr.Sensitivity.Name, fmt.Sprint(sor.AsRead().N), chosen, same})
	}
	d.captioned("The model the rules chose under each analysis, "+mdCode(or.Outcome.Column)).table([]string{"Analysis", "Rows used", "Model chosen", "The primary analysis's choice"}, rows)
	var how []string
	for _, sr := range r.Sensitivity {
		if h := sensitivityRows(sr, sr.Outcome(or.Outcome.Column)); h != "" {
			how = append(how, h)
		}
	}
	if len(how) > 0 {
		d.p("The rows each analysis used, and how it handled missing values and clusters:")
		d.list(how)
	}
	for _, sr := range r.Sensitivity {
		if n := errorsOnlyNote(r, sr, or.Outcome.Column); n != "" {
			d.p("%s", n)
		}
	}
	if or.Chosen == nil {
		d.p("The primary analysis chose no model, so there are no estimates to compare.")
		return
	}
	res := or.Chosen.Result
	type column struct {
		name string
		m    runner.SensitivityModel
	}
	cols := []column{{primaryAnalysis, runner.SensitivityModel{Model: or.Chosen.ID, Estimates: runner.KeyEstimates(res, level)}}}
	var missing []string
	for _, sr := range r.Sensitivity {
		m := runner.PrimaryModelUnder(or.Chosen.ID, sr.Outcome(or.Outcome.Column), level)
		if m.NotFitted != "" {
			missing = append(missing, fmt.Sprintf("%s: %s", mdText(sr.Sensitivity.Name), mdText(m.NotFitted)))
			continue
		}
		cols = append(cols, column{sr.Sensitivity.Name, m})
	}
	// The parameters in the primary fit's order, then those only an
	// analysis's fit has (a term it adds), in its order.
	var params []string
	for _, c := range cols {
		for _, e := range c.m.Estimates {
			if !slices.Contains(params, e.Parameter) {
				params = append(params, e.Parameter)
			}
		}
	}
	var est [][]string
	for _, p := range params {
		for _, c := range cols {
			row := []string{ParamLabel(res, p), c.name + " (not in this model)", "", "", "", "", "", ""}
			for _, e := range c.m.Estimates {
				if e.Parameter == p {
					row = []string{ParamLabel(res, p), c.name, numfmt.Est(e.Estimate), numfmt.Est(e.StdError), numfmt.Est(e.Lower), numfmt.Est(e.Upper), e.Reference, dfCell(e.RefDF())}
				}
			}
			est = append(est, row)
		}
	}
	d.p("The primary analysis's chosen model, %s, fitted under each sensitivity analysis (whatever its rules chose): its effects with %s intervals, as in the primary analysis's table of estimates; the boundaries' tau are left out. %s", or.Chosen.ID, pct(level), sensitivityReferenceWords)
	d.captioned("Estimates of "+or.Chosen.ID+" under each analysis, "+mdCode(or.Outcome.Column)).table(
		[]string{"Parameter", "Analysis", "Estimate", "Std. error", pct(level) + " low", pct(level) + " high", "Reference", "df"}, est)
	for _, sr := range r.Sensitivity {
		if n := notEstimableUnder(sr, or); n != "" {
			d.p("n/a under %s: %s.", mdText(sr.Sensitivity.Name), n)
		}
	}
	if len(missing) > 0 {
		d.p("Not fitted under: %s.", strings.Join(missing, "; "))
	}
}

// notEstimableUnder says why the primary analysis's chosen model, fitted
// under the sensitivity analysis sr with clustered errors, has standard
// errors that are not estimable (fit.NotEstimable), or "" when it has
// none such.
func notEstimableUnder(sr *runner.SensitivityResult, or *runner.OutcomeResult) string {
	sor := sr.Outcome(or.Outcome.Column)
	if sor == nil {
		return ""
	}
	f := sor.Find(or.Chosen.ID)
	if f == nil || f.Auxiliary || f.Result == nil || !f.OK() {
		return ""
	}
	return f.Result.NotEstimableNote(mdCode)
}

// sensitivityRows says, for one outcome under one sensitivity analysis,
// what a reviewer asks of it beside its choice: the rows read, used and
// dropped by reason, how its missing values were imputed (the method,
// sets, iterations, seed and each column's model and predictors, as the
// primary analysis's section on imputation says them) and the clusters of
// its cluster-robust errors; "" when it was not run.
func sensitivityRows(sr *runner.SensitivityResult, sor *runner.OutcomeResult) string {
	if sr.Result == nil || sor == nil {
		return ""
	}
	ds := sor.AsRead()
	s := fmt.Sprintf("**%s**: %d rows read, %d used; %s.", mdText(sr.Sensitivity.Name), ds.RowsRead, ds.N, mdText(ds.DropSummary()))
	p := sr.Result.Plan
	if im := sor.Imputed; im != nil {
		if ch := im.Chained; ch != nil {
			var models []string
			for _, m := range ch.Models {
				w := modelWords[m.Method]
				if m.Method == chained.MeanMatching {
					w = fmt.Sprintf(w, ch.Donors)
				}
				models = append(models, fmt.Sprintf("%s (%d values) by %s given %s", mdCode(m.Column), m.Missing, w, mdText(strings.Join(m.Predictors, ", "))))
			}
			incomplete, rows, units := chainedRows(ch, im.Rows)
			if units != "" {
				units = " (" + units + ")"
			}
			s += fmt.Sprintf(" Of these, %d (%s) had a missing value in the outcome or a predictor and were kept%s: their values were imputed by chained equations, %d sets, each after %d iterations, seed %d; %s. The fits of the %d sets were pooled by Rubin's rules, intervals on t with Barnard-Rubin degrees of freedom. This assumes that values are missing at random given the columns of the imputation models.",
				incomplete, sharePct(incomplete, rows), units, ch.Sets, ch.Iterations, ch.Seed, strings.Join(models, "; "), im.M)
		} else {
			s += fmt.Sprintf(" Analysed on the %d imputed sets of the data, pooled by Rubin's rules.", im.M)
		}
	} else if p.Data.Missing == plan.MissingImpute {
		s += " No value of the columns it uses is missing: nothing was imputed, and the data were analysed as they are."
	}
	if ce, ok := analysisClusters(sr, sor); ok {
		col, g := ce.column, ce.g
		kind := "the cluster-robust sandwich"
		if ce.jackknife {
			kind = "the delete-one-cluster jackknife"
		}
		ref := fmt.Sprintf("intervals on t with G-1 = %d degrees of freedom", g-1)
		if ce.pooled {
			ref = fmt.Sprintf("pooled with G-1 = %d complete-data degrees of freedom", g-1)
		}
		s += fmt.Sprintf(" Standard errors by %s over the %d clusters of %s in the rows used, %s.", kind, g, mdCode(col), ref)
		if sor.Imputed != nil && sor.Imputed.Chained != nil {
			s += clusterCaution(col)
		}
	}
	return s
}

// clusterErrors is how a sensitivity analysis's errors of one outcome
// were clustered: the column, the clusters G of the rows used, the
// delete-one-cluster jackknife or the sandwich, pooled over imputed sets.
type clusterErrors struct {
	column            string
	g                 int
	jackknife, pooled bool
}

// analysisClusters is the one reading of an analysis's clustered errors
// for its report section and its Methods sentence; false when its errors
// are not clustered.
func analysisClusters(sr *runner.SensitivityResult, sor *runner.OutcomeResult) (clusterErrors, bool) {
	an := sr.Result.Analysis
	col := sr.Result.Plan.Data.Cluster
	if col == "" || an == nil || an.Errors.Covariance != fit.Clustered {
		return clusterErrors{}, false
	}
	return clusterErrors{column: col, g: runner.ClusterCount(sor.Data), jackknife: an.Errors.Jackknife(), pooled: sor.Imputed != nil}, true
}

// sensitivitySummary is the summary's line on the sensitivity analyses
// ("" when the plan has none).
func sensitivitySummary(r *runner.Result) string {
	if len(r.Sensitivity) == 0 {
		if rm := removedSensitivityNote(r); rm != "" {
			return "**Sensitivity analyses:** none run. " + rm
		}
		return ""
	}
	same, ran := 0, 0
	for _, sr := range r.Sensitivity {
		if sr.Result == nil {
			continue
		}
		ran++
		all := true
		for _, or := range r.Outcomes {
			sor := sr.Outcome(or.Outcome.Column)
			all = all && sor != nil && or.Chosen != nil && sor.Chosen != nil && sor.Chosen.ID == or.Chosen.ID
		}
		if all {
			same++
		}
	}
	s := fmt.Sprintf("**Sensitivity analyses** fixed in the plan: %d; under %d of the %d run the rules chose the primary analysis's model for every outcome (see Sensitivity analyses: the changes tried, and only those).", len(r.Sensitivity), same, ran)
	if late := sinceFrozenNames(r); len(late) > 0 {
		s = fmt.Sprintf("**Sensitivity analyses** in the plan: %d, of which %d **not as registered** (added or changed after the plan was frozen: %s); under %d of the %d run the rules chose the primary analysis's model for every outcome (see Sensitivity analyses: the changes tried, and only those).", len(r.Sensitivity), len(late), strings.Join(late, ", "), same, ran)
	}
	if eo := errorsOnlyNames(r); len(eo) > 0 {
		s += fmt.Sprintf(" The agreement of %s is by construction, not evidence: changing only the standard errors, it keeps the primary analysis's estimates, and its choice but for decisions that read the covariance; only its errors and intervals are informative.", strings.Join(eo, ", "))
	}
	if ran < len(r.Sensitivity) {
		s += fmt.Sprintf(" **%d could not be run.**", len(r.Sensitivity)-ran)
	}
	if rm := removedSensitivityNote(r); rm != "" {
		s = strings.Replace(s, ", and only those", "", 1) + " " + rm
	}
	return s
}

// sensitivityMethods is the methods paragraph on the sensitivity
// analyses ("" when the plan has none).
func sensitivityMethods(r *runner.Result) string {
	rm := removedSensitivityNote(r)
	s := plannedSensitivityMethods(r)
	if s == "" || rm == "" {
		return s + rm
	}
	return s + " " + rm
}

// plannedSensitivityMethods is sensitivityMethods of the analyses the
// plan has.
func plannedSensitivityMethods(r *runner.Result) string {
	if len(r.Sensitivity) == 0 {
		return ""
	}
	var each []string
	for i, sr := range r.Sensitivity {
		var keys []string
		for _, c := range sensitivityChanges(r, sr.Sensitivity) {
			keys = append(keys, fmt.Sprintf("%s set to %s", mdCode(c.Path), mdCode(c.To)))
		}
		note := ""
		if n := sinceFrozenNote(r, i); n != "" {
			note = "; " + n
		}
		each = append(each, fmt.Sprintf("%s (%s; why: %s%s)", mdText(sr.Sensitivity.Name), strings.Join(keys, ", "), mdText(strings.TrimSuffix(sr.Sensitivity.Why, ".")), note))
	}
	how := ""
	if hs := sensitivityMethodsHow(r); len(hs) > 0 {
		how = " " + strings.Join(hs, " ")
	}
	if late := sinceFrozenNames(r); len(late) > 0 {
		return fmt.Sprintf("The plan has %s, %d of them fixed in advance and %d not as registered (added or changed after the plan was frozen: %s), each the whole analysis repeated with its stated changes to the plan, on the same data, with the same candidate models and decision rules: %s.%s For each, the model the rules chose and the estimates of the primary analysis's chosen model are reported beside the primary analysis's; they show the effect of these changes only.",
			sensitivityCount(len(r.Sensitivity)), len(r.Sensitivity)-len(late), len(late), strings.Join(late, ", "), strings.Join(each, "; "), how)
	}
	return fmt.Sprintf("The plan fixed %s in advance, each the whole analysis repeated with its stated changes to the plan, on the same data, with the same candidate models and decision rules: %s.%s For each, the model the rules chose and the estimates of the primary analysis's chosen model are reported beside the primary analysis's; they show the effect of these changes only.",
		sensitivityCount(len(r.Sensitivity)), strings.Join(each, "; "), how)
}

// sensitivityCount is "1 sensitivity analysis" or "N sensitivity analyses".
func sensitivityCount(n int) string {
	if n == 1 {
		return "1 sensitivity analysis"
	}
	return fmt.Sprintf("%d sensitivity analyses", n)
}

// sensitivityMethodsHow says, for the Methods draft, how each sensitivity
// analysis that imputes or clusters did so (the section's
// sensitivityRows in a sentence each): the imputation's rows, sets,
// iterations and models, and the clusters of its errors; an outcome is
// named when the plan has several.
func sensitivityMethodsHow(r *runner.Result) []string {
	var out []string
	for _, sr := range r.Sensitivity {
		if sr.Result == nil || sr.Result.Analysis == nil {
			continue
		}
		for _, sor := range sr.Result.Outcomes {
			var parts []string
			if im := sor.Imputed; im != nil && im.Chained != nil {
				ch := im.Chained
				var models []string
				for _, m := range ch.Models {
					w := modelWords[m.Method]
					if m.Method == chained.MeanMatching {
						w = fmt.Sprintf(w, ch.Donors)
					}
					models = append(models, fmt.Sprintf("%s for %s", w, mdCode(m.Column)))
				}
				incomplete, rows, units := chainedRows(ch, im.Rows)
				if units != "" {
					units = "; " + units
				}
				parts = append(parts, fmt.Sprintf("the %d rows (%s of %d%s) with a missing value were multiply imputed by chained equations (%d sets, %d iterations each; %s; every model given the outcome and the other columns used) and the fits pooled by Rubin's rules", incomplete, sharePct(incomplete, rows), rows, units, ch.Sets, ch.Iterations, strings.Join(models, ", ")))
			}
			if ce, ok := analysisClusters(sr, sor); ok {
				kind := "cluster-robust"
				if ce.jackknife {
					kind = "the delete-one-cluster jackknife's"
				}
				ref := fmt.Sprintf("with t on %d degrees of freedom", ce.g-1)
				if ce.pooled {
					ref = fmt.Sprintf("pooled with %d complete-data degrees of freedom", ce.g-1)
				}
				parts = append(parts, fmt.Sprintf("standard errors were %s over the %d clusters of %s, %s", kind, ce.g, mdCode(ce.column), ref))
			}
			if len(parts) == 0 {
				continue
			}
			who := mdText(sr.Sensitivity.Name)
			if len(sr.Result.Outcomes) > 1 {
				who += ", outcome " + mdCode(sor.Outcome.Column)
			}
			out = append(out, fmt.Sprintf("In %s, %s.", who, strings.Join(parts, "; ")))
		}
	}
	return out
}

// limitIf is s when cond holds, else "" (an item the limits leave out).
func limitIf(cond bool, s string) string {
	if cond {
		return s
	}
	return ""
}

// primaryAnalysis names the primary analysis among the sensitivity
// analyses, in the report's table of estimates under each and in its CSV
// (a name the plan refuses for a sensitivity analysis).
const primaryAnalysis = "primary analysis"

// sensitivityCSV is the table of the chosen model's effects under the
// primary analysis and each sensitivity analysis (the report's table, full
// precision); ok is false without sensitivity analyses or a chosen model.
func sensitivityCSV(r *runner.Result, or *runner.OutcomeResult, level float64, lv string) (kind, about string, head []string, rows [][]string, ok bool) {
	if len(r.Sensitivity) == 0 || or.Chosen == nil {
		return "", "", nil, nil, false
	}
	add := func(analysis string, m runner.SensitivityModel) {
		for _, e := range m.Estimates {
			rows = append(rows, []string{analysis, ParamLabel(or.Chosen.Result, e.Parameter), csvNum(e.Estimate), csvNum(e.StdError), csvNum(e.Lower), csvNum(e.Upper), e.Reference, csvDFOf(e.DF)})
		}
	}
	add(primaryAnalysis, runner.SensitivityModel{Estimates: runner.KeyEstimates(or.Chosen.Result, level)})
	for _, sr := range r.Sensitivity {
		add(sr.Sensitivity.Name, runner.PrimaryModelUnder(or.Chosen.ID, sr.Outcome(or.Outcome.Column), level))
	}
	about = fmt.Sprintf("the effects of the chosen model, %s, under the primary analysis (named \""+primaryAnalysis+"\") and under each sensitivity analysis the plan fixed (by its name), with %s%% intervals and the distribution they refer to (reference: normal, or t on df degrees of freedom, G-1 under cluster-robust errors from G clusters or the Barnard-Rubin degrees of freedom pooled over imputed sets; df inf for the normal); an analysis under which the model was not fitted has no rows (the report says why)", or.Chosen.ID, lv)
	return "sensitivity", about, []string{"analysis", "parameter", "estimate", "std_error", "low_" + lv, "high_" + lv, "reference", "df"}, rows, true
}

// sinceFrozenNames are the sensitivity analyses that are not as the
// plan's lock registered them (lock.Status.SensitivityChanges), in the
// plan's order; none without a lock.
func sinceFrozenNames(r *runner.Result) []string {
	var out []string
	for i, sr := range r.Sensitivity {
		if len(r.Registration.SensitivityChanges(i)) > 0 {
			out = append(out, mdText(sr.Sensitivity.Name))
		}
	}
	return out
}

// sinceFrozenNote says how the sensitivity analysis at index i departs
// from the registered plan, with the reasons the plan states ("added
// after the plan was frozen; stated reason: ..."), or "" when it is as
// registered.
func sinceFrozenNote(r *runner.Result, i int) string {
	ch := r.Registration.SensitivityChanges(i)
	if len(ch) == 0 {
		return ""
	}
	var s string
	if lock.SensitivityAdded(ch) {
		s = "Added after the plan was frozen"
	} else {
		var keys []string
		for _, c := range ch {
			if c.Moved == "" {
				keys = append(keys, mdCode(c.Path))
				continue
			}
			for _, k := range c.Keys {
				keys = append(keys, mdCode(c.Path+"."+k.Path))
			}
			keys = append(keys, "moved from "+mdCode(c.Moved))
		}
		s = "Changed after the plan was frozen (" + strings.Join(keys, ", ") + ")"
	}
	var reasons []string
	for _, c := range ch {
		if t := strings.TrimSuffix(c.ReasonText(""), "."); t != "" && !slices.Contains(reasons, t) {
			reasons = append(reasons, t)
		}
	}
	if len(reasons) == 0 {
		return s + "; no stated reason"
	}
	return s + "; stated reason: " + mdText(strings.Join(reasons, "; "))
}
