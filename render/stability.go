package render

import (
	"fmt"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"ordplan/internal/words"
	"ordplan/plan"
	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/fit"
)

// Stability of the model choice (selection_stability): the decision
// procedure repeated on bootstrap resamples (runner.Stability). One
// section per outcome after the decision log, a CSV table, a Methods
// sentence.

// stabilityUnits says what each resample drew, for the report and the
// Methods: "1734 rows", "24 clusters of `district`", ...
func stabilityUnits(r *runner.Result, st *runner.Stability) string {
	switch st.Unit {
	case runner.UnitClusters:
		return fmt.Sprintf("%d clusters of %s, each drawn whole (all its rows), a cluster drawn twice counting as two clusters", st.Units, mdCode(r.Plan.Data.Cluster))
	case runner.UnitWeighted:
		return fmt.Sprintf("%d units, the frequency weights of %s read as that many units (a row of weight w is w units, so a resample's weights are multinomial counts)", st.Units, mdCode(r.Plan.Data.Weights))
	}
	return fmt.Sprintf("%d rows", st.Units)
}

// writeStability writes the section of one outcome's stability study.
func writeStability(d *doc, r *runner.Result, or *runner.OutcomeResult) {
	st := or.Stability
	if st == nil {
		return
	}
	d.h(3, "Stability of the model choice")
	sampling := ""
	if r.Analysis != nil && r.Analysis.Errors.Sampling {
		sampling = fmt.Sprintf(" The sampling weights of %s go with their rows and are rescaled to sum to the rows drawn; the bootstrap ignores any survey design beyond them (strata, stages, finite-population corrections).", mdCode(r.Plan.Data.Weights))
	}
	imputed := ""
	if st.Imputed {
		im := r.Plan.Data.Imputation
		imputed = fmt.Sprintf(" The rows drawn are the rows as read, the incomplete ones among them, and each resample is imputed anew by chained equations with the plan's data.imputation settings (%d sets, %d iterations, the same imputation models), its imputation seed drawn from the resample's own stream: bootstrap, then impute, so that the shares carry the uncertainty of the imputation too; the fits of a resample's imputed sets are pooled by Rubin's rules and the rules read the pooled fits, as in the primary analysis.", im.Sets, im.Iterations)
	}
	one, many, where, head := stabilityNouns(st)
	if simulatedDraw(st) && st.Primary == "" {
		d.p("The plan (selection_stability, draw: chosen_model) asks how often the rules find the model the primary analysis chose when that model holds. The primary analysis chose no model, so there was no model to draw outcomes from, and the study was not run.")
		return
	}
	if simulatedDraw(st) {
		weights := ""
		if r.Plan.Data.Weights != "" && !(r.Analysis != nil && r.Analysis.Errors.Sampling) {
			weights = fmt.Sprintf(" A row of frequency weight w (%s) is w units, each drawn apart, so it becomes one row per category drawn, weighted by how many of its units drew it.", mdCode(r.Plan.Data.Weights))
		}
		d.p("The plan (selection_stability, draw: chosen_model) asks how often the rules find the model the primary analysis chose when that model holds. At the %d rows used here, each keeping its predictors (and its weight, offset and cluster, where the data have them), new outcomes were drawn %d times from %s with its estimates in the primary analysis (seed %d), and the whole decision procedure, the same grid of candidates, the same tests and the same rules in order%s, was run on each simulated set.%s The terms' constants (centring means, scales, knots, polynomial bases) stay those of the primary analysis. Each simulated set's fits were made on this machine (not sent to queue workers), one fit at a time per set, several sets at once.",
			st.Units, st.Resamples, st.Primary, st.Seed, stepwiseWords(r), weights)
	} else {
		d.p("The plan (selection_stability) asks how stable the choice the rules made is. The whole decision procedure, the same grid of candidates, the same tests and the same rules in order%s, was run again on %d bootstrap resamples of the data used here, drawn with seed %d: each resample draws, with replacement, as many units as the data have, %s.%s%s The terms' constants (centring means, scales, knots, polynomial bases) stay those of the primary analysis. Each resample's fits were made on this machine (not sent to queue workers), one fit at a time per resample, several resamples at once.",
			stepwiseWords(r), st.Resamples, st.Seed, stabilityUnits(r, st), imputed, sampling)
	}

	var rows [][]string
	var primary *runner.StabilityModel
	top := st.Models[0]
	for i, m := range st.Models {
		mark := ""
		if m.Primary {
			mark = "chosen by the primary analysis"
			primary = &st.Models[i]
		}
		if m.Fallback > 0 {
			mark = strings.TrimPrefix(mark+fmt.Sprintf("; the plan's fallback in %d", m.Fallback), "; ")
		}
		if m.Chosen.Count > top.Chosen.Count {
			top = m
		}
		rows = append(rows, []string{m.Model, fmt.Sprintf("%d of %d", m.Chosen.Count, m.Chosen.Of), m.Chosen.Text(""), mark})
	}
	none := ""
	if or.Chosen == nil {
		none = "the primary analysis's result"
	}
	rows = append(rows, []string{"no model could be chosen", fmt.Sprintf("%d of %d", st.None.Count, st.None.Of), st.None.Text(""), none})
	if st.Failed.Count > 0 {
		rows = append(rows, []string{"the procedure failed", fmt.Sprintf("%d of %d", st.Failed.Count, st.Failed.Of), st.Failed.Text(""), ""})
	}
	d.captioned("Model chosen in the "+where+" (share with its Monte Carlo standard error)").table([]string{"Model", head, "Share (MC se)", "Note"}, rows)
	d.p("%s", stabilityReading(or, st, primary, top))
	if len(st.Failures) > 0 {
		d.p("In %d of %d %s the procedure failed as a whole (the %s's data could not be fitted at all), counted apart from those where the rules chose nothing. The reasons met first, each once (at most %d, as the %s's own fit gave them):", st.Failed.Count, st.Resamples, many, one, runner.MaxStabilityFailures, one)
		d.list(words.Each(st.Failures, mdText))
	}
	writeRedrawn(d, st)

	// Which rule rejected which model.
	rows = nil
	var quiet []string
	for i, ru := range st.Rules {
		final := i < len(or.Rules) && or.Rules[i].Rule.Final()
		hit := false
		for _, ms := range ru.Rejected {
			if ms.Share.Count == 0 {
				continue
			}
			hit = true
			what := "rejected"
			if final {
				what = "not chosen"
			}
			rows = append(rows, []string{md(fmt.Sprintf("%d, %s", ru.Number, mdCode(ru.Kind))), ms.Model, what, fmt.Sprintf("%d of %d", ms.Share.Count, ms.Share.Of), ms.Share.Text("")})
		}
		if !hit {
			quiet = append(quiet, fmt.Sprintf("%d (%s)", ru.Number, mdCode(ru.Kind)))
		}
	}
	d.p("Which rule drives the changes: how often each rule, in the %s where it was reached, rejected each model (the last rule's \"not chosen\" are the models it passed over for another). A model a rule keeps in the primary analysis but rejects in many %s is where the choice turns.", many, many)
	if len(rows) > 0 {
		d.captioned("Rejections by each rule over the "+where).table([]string{"Rule", "Model", "Verdict", head, "Share (MC se)"}, rows)
	}
	if len(quiet) > 0 {
		d.p("Rule%s %s rejected no model in any %s.", plural(len(quiet)), words.AndList(quiet), one)
	}

	if len(st.Hypotheses) > 0 {
		rows = nil
		lv := strconv.FormatFloat(100*st.Level, 'f', -1, 64)
		for _, h := range st.Hypotheses {
			iv := "(several restrictions in every chosen model that tested it)"
			switch {
			case h.Low != nil && h.Estimated < h.Tested:
				iv = fmt.Sprintf("%s to %s (over the %d %s%s where it is a single restriction)", numfmt.Est(*h.Low), numfmt.Est(*h.High), h.Estimated, one, plural(h.Estimated))
			case h.Low != nil:
				iv = numfmt.Est(*h.Low) + " to " + numfmt.Est(*h.High)
			case h.Tested == 0:
				iv = "(never tested)"
			}
			rows = append(rows, []string{md(mdCode(h.Hypothesis)), fmt.Sprintf("%d of %d", h.Tested, st.Resamples), fmt.Sprintf("%d of %d", h.Rejected.Count, h.Rejected.Of), h.Rejected.Text(""), iv})
		}
		adj := ""
		if m := r.Plan.Inference.Multiplicity; m != "" && m != "none" {
			adj = fmt.Sprintf(" on the p-value adjusted for multiplicity (%s) over the outcomes of that %s, as the run decides", m, one)
		}
		d.p("The plan's hypotheses in the model chosen in each %s: rejected when its p-value is below %s (1 minus the report's confidence level)%s; a %s whose chosen model lacks the hypothesis's parameters, in whose chosen model its test could not be computed, or that chose nothing, does not test it (column Tested in counts the others) and does not count as a rejection. The interval is the %s%% percentile interval of the estimate (left side minus right side) over the %s that tested it, for a single restriction.", one, numfmt.Num(st.Alpha), adj, one, lv, many)
		d.captioned("Hypotheses over the "+where+", each in the model chosen there").table([]string{"Hypothesis", "Tested in", "Rejected in", "Share rejected (MC se)", lv + "% percentile interval of the estimate"}, rows)
		if simulatedDraw(st) {
			d.p("These shares are how often each hypothesis is rejected, the choice of model included, when the chosen model holds with the primary analysis's estimates: for a hypothesis those estimates make false, a power at these estimates (not at a truth stated in advance, as `ordplan power` uses), and for one they make true, the rate of false rejections; not p-values, and the percentile intervals are not confidence intervals of the chosen model's parameters.")
		} else {
			d.p("These shares measure how reproducible the plan's conclusion is when the whole procedure, the choice of model included, is repeated on data like these: they are not the power of the test (which would need data drawn from a stated truth; `ordplan power`), nor p-values, and the percentile intervals are not confidence intervals of the chosen model's parameters, whose meaning changes with the model chosen.")
		}
	}
	if simulatedDraw(st) {
		clusters := ""
		if r.Plan.Data.Cluster != "" {
			clusters = fmt.Sprintf(" The outcomes of the rows of one cluster of %s are drawn independently of each other, since the chosen model states no correlation within clusters: the simulated sets have none, so the rules meet less dependence than these data may hold.", mdCode(r.Plan.Data.Cluster))
		}
		d.p("Assumptions and limits of this study: the outcomes were drawn from the chosen model with the estimates of these data, so the shares describe what the rules do if that model, with those estimates, is true; they do not test whether it is, and a model the rules recover every time can still be wrong. The estimates carry the sampling error of these data, which the shares do not show; the Monte Carlo error in brackets is from %d simulated sets. Every restriction of the chosen model holds in each simulated set, so these shares have no lean towards the less constrained models, unlike bootstrap resamples (draw: bootstrap); the predictors, weights and clusters are those of these rows, not new ones.%s", st.Resamples, clusters)
		return
	}
	d.p("Assumptions and limits of this study: it is a bootstrap of a selection procedure on the %s used, so every resample resembles these data, not a new sample from the population; the shares are estimates, with the Monte Carlo error in brackets from %d resamples and a sampling error from the data themselves that the brackets do not show. A resample repeats units, and a model that fits the data only roughly fits a resample more roughly still: a test of a restriction tends to give a larger statistic in a resample (in large samples, when the less constrained model fits, about a noncentral chi-squared on the test's degrees of freedom with the data's statistic as its noncentrality, so on average the data's statistic plus its degrees of freedom), so tests reject restrictions more often in resamples than they would in new samples where the restriction holds, and the shares lean towards the less constrained models. A small share for the model the primary analysis chose means that data slightly different would have led the same rules to another model; when a test kept the choice with a statistic close enough to its critical value that this noncentral chi-squared lies mostly beyond it, that lean alone makes the share small, and the share then tells how near the rule's margin the choice sits rather than how often a new study would repeat it. Either way the chosen model's intervals, which treat it as fixed in advance, leave that uncertainty out.", unitWord(st), st.Resamples)
}

// writeRedrawn says how many draws were set aside and drawn again because
// they lacked a category of the outcome, a level of a categorical
// predictor or a combination of levels an interaction reads that the data
// hold (runner.Stability.SetAside), what they lacked most often, and what
// that conditioning does to the shares: of bootstrap resamples, or of
// sets of outcomes simulated from the chosen model, which keep the rows
// and so can lack only a category. Nothing when no draw was set aside and
// no unit alone holds such a value.
func writeRedrawn(d *doc, st *runner.Stability) {
	if st.MaxDraws == 0 || (st.SetAside == 0 && st.AlwaysDrawn == 0) || st.AlwaysDrawn >= st.Units {
		return
	}
	one, many, _, _ := stabilityNouns(st)
	var s string
	if simulatedDraw(st) {
		s = fmt.Sprintf("A simulated set must hold every category of the outcome, as the data do, or the same models cannot be fitted to it: a set of outcomes lacking one was set aside and another drawn from the set's own stream (at most %d for one set), and a set that lacks none is kept as drawn.", st.MaxDraws)
	} else {
		s = fmt.Sprintf("A resample must hold every category of the outcome, every level of each categorical predictor and every combination of levels that an interaction of categorical predictors reads, as the data do, or the same models cannot be fitted to it: a draw lacking one was set aside and another drawn from the resample's own stream (at most %d for one resample), and a draw that lacks nothing is kept as the plain bootstrap draws it.", st.MaxDraws)
	}
	if st.SetAside == 0 {
		s += " No draw lacked one here."
	} else {
		var lacked []string
		for _, l := range st.Lacking {
			lacked = append(lacked, fmt.Sprintf("%s (%d draw%s)", l.What, l.Draws, plural(l.Draws)))
		}
		s += fmt.Sprintf(" Here %d of the %d %s needed another draw, with %d draw%s set aside in all; what they lacked most often: %s.", st.Redrawn, st.Resamples, many, st.SetAside, plural(st.SetAside), words.AndList(lacked))
	}
	if simulatedDraw(st) {
		s += fmt.Sprintf(" The shares are therefore those of the procedure on sets drawn from the chosen model conditional on every category appearing, the sets on which it can run; where a category is drawn rarely, a %s kept holds it somewhat more often than the model alone gives.", one)
		d.p("%s", mdText(s))
		return
	}
	s += " The shares are therefore those of a bootstrap conditional on all of these appearing"
	if st.AlwaysDrawn > 0 {
		verb, them := "hold", "them"
		if st.AlwaysDrawn == 1 {
			verb, them = "holds", "it"
		}
		s += fmt.Sprintf(": %d of the %d %s alone %s one of them, so every resample kept draws %s, and the effects that rest on %s vary across resamples less than they would across new samples.",
			st.AlwaysDrawn, st.Units, unitNoun(st), verb, them, them)
	} else {
		s += "."
	}
	d.p("%s", mdText(s))
}

// unitNoun names the resampled units, plural, without their number.
func unitNoun(st *runner.Stability) string {
	switch st.Unit {
	case runner.UnitClusters:
		return "clusters"
	case runner.UnitWeighted:
		return "frequency-weighted units"
	}
	return "rows"
}

// simulatedDraw says whether st's outcomes were drawn from the chosen
// model (draw: chosen_model) rather than by bootstrap resampling.
func simulatedDraw(st *runner.Stability) bool { return st.Draw == plan.StabilityChosenModel }

// stabilityNouns names one repetition, several, and where the shares were
// counted, for the section's sentences and captions.
func stabilityNouns(st *runner.Stability) (one, many, where, head string) {
	if simulatedDraw(st) {
		return "simulated set", "simulated sets", "sets simulated from the chosen model", "Simulated sets"
	}
	return "resample", "resamples", "bootstrap resamples", "Resamples"
}

// unitWord names the resampled units in a sentence.
func unitWord(st *runner.Stability) string {
	switch st.Unit {
	case runner.UnitClusters:
		return fmt.Sprintf("%d clusters", st.Units)
	case runner.UnitWeighted:
		return fmt.Sprintf("%d frequency-weighted units", st.Units)
	}
	return fmt.Sprintf("%d rows", st.Units)
}

// stepwiseWords adds the stepwise search to the procedure when the plan
// makes one.
func stepwiseWords(r *runner.Result) string {
	if r.Plan.Models.Partial.Select != nil {
		return " (the stepwise choice of partial effects included)"
	}
	return ""
}

// stabilityReading is the plain reading of the shares of the choice.
func stabilityReading(or *runner.OutcomeResult, st *runner.Stability, primary *runner.StabilityModel, top runner.StabilityModel) string {
	if primary == nil {
		s := fmt.Sprintf("The primary analysis chose no model; the procedure chose none in %d of %d resamples.", st.None.Count, st.Resamples)
		if top.Chosen.Count > 0 {
			s += fmt.Sprintf(" The model chosen most often was %s (%d of %d).", top.Model, top.Chosen.Count, st.Resamples)
		}
		return s
	}
	c := primary.Chosen
	if simulatedDraw(st) {
		return chosenModelReading(st, primary, top)
	}
	s := fmt.Sprintf("Plain reading: the primary analysis chose %s, and the same procedure chose it again in %d of %d resamples, a share of %s.", primary.Model, c.Count, c.Of, c.Text("MC se "))
	turn := stabilityTurn(or, st, primary.Model)
	switch {
	case mostlyFailed(st):
		s += failedReading(st, primary, "resamples")
	case c.Rate < 0.5 && turn != nil && turn.expected:
		rough := ""
		if st.Unit == runner.UnitClusters {
			// The approximation takes the rows as independent: a
			// resample of whole clusters whose rows are alike spreads
			// the statistic otherwise.
			rough = fmt.Sprintf(" (an approximation that takes the rows as independent: with whole clusters drawn, %d of them here, and the rows of a cluster alike, the statistic spreads otherwise across resamples, and the share rejecting can differ from it)", st.Units)
		}
		s += fmt.Sprintf(" The rule that turns it down most often is rule %d (%s), in %d of %d resamples; in the primary analysis that rule kept it: %s. A resample's statistic of a restriction is distributed, in large samples and when the less constrained model fits, about as a noncentral chi-squared on the test's degrees of freedom with the data's statistic as its noncentrality (here on %s df with noncentrality %s, mean %s), not as the central chi-squared the test refers to; that distribution puts a share of about %s of resamples beyond the critical value %s"+rough+", so a test with this p-value is expected to reject the restriction in most resamples: the bootstrap leans towards the less constrained models. The low share shows that the choice sits near this rule's margin, not how often a new study would choose the same model; the chosen model's intervals, which treat the choice as fixed in advance, leave out that the rule could have gone the other way. How often these rules would find the model if it held is another question, which `selection_stability.draw: chosen_model` answers.",
			turn.number, mdCode(turn.kind), turn.share.Count, turn.share.Of, mdText(turn.reason), numfmt.Num(turn.df), numfmt.Stat(turn.stat), numfmt.Stat(turn.stat+turn.df), numfmt.Prob(turn.rejects), numfmt.Stat(turn.critical))
	case c.Rate < 0.5:
		s += " That is less than half: the choice is fragile, and the effects reported for the chosen model carry an uncertainty of the choice that their intervals do not show."
	case c.Rate < 0.8:
		s += " The choice is repeated more often than not, but far from always: read the effects of the chosen model with the models chosen instead in mind."
	default:
		s += " The choice is stable on data like these."
	}
	return s + readingTail(st, primary, top, "resamples", "not repeating the choice")
}

// chosenModelReading is the plain reading of the shares when the outcomes
// were drawn from the chosen model: a rate of recovering it.
func chosenModelReading(st *runner.Stability, primary *runner.StabilityModel, top runner.StabilityModel) string {
	c := primary.Chosen
	s := fmt.Sprintf("Plain reading: with outcomes drawn from %s as the primary analysis estimated it, the same procedure chose it in %d of %d simulated sets, a share of %s. This is how often these rules recover the model when it holds with these estimates, at these rows; it says nothing about whether it holds.", primary.Model, c.Count, c.Of, c.Text("MC se "))
	switch {
	case mostlyFailed(st):
		s += failedReading(st, primary, "simulated sets")
	case c.Rate < 0.5:
		s += " Less than half: even if the chosen model were true, these rules would usually choose another with data like these, so the choice alone is weak evidence for it."
	case c.Rate < 0.8:
		s += " The rules find it more often than not, but far from always, even when it holds."
	default:
		s += " The rules find it reliably when it holds."
	}
	return s + readingTail(st, primary, top, "simulated sets", "not finding it")
}

// mostlyFailed says whether the procedure failed as a whole in half the
// repetitions or more, so that the share of the choice mostly counts
// failures.
func mostlyFailed(st *runner.Stability) bool {
	return st.Resamples > 0 && 2*st.Failed.Count >= st.Resamples
}

// failedReading replaces the verdict on the share when most repetitions
// (many) failed: the share then tells how often the procedure could run,
// not how stable the choice is.
func failedReading(st *runner.Stability, primary *runner.StabilityModel, many string) string {
	ran := st.Resamples - st.Failed.Count
	cause := ""
	if !simulatedDraw(st) {
		cause = fmt.Sprintf(" (a level of a categorical predictor that few rows or clusters hold can be it: a draw without them is drawn again, at most %d times, and when every cluster is a level of its own no resample can differ from the data)", runner.MaxStabilityDraws)
	}
	return fmt.Sprintf(" But the procedure failed as a whole in %d of %d %s (the reasons are below), so this share says how often it could be run on such data, not how stable the choice is: of the %d where it ran, it chose %s in %d. Remove the cause of the failures before reading the share%s.",
		st.Failed.Count, st.Resamples, many, ran, primary.Model, primary.Chosen.Count, cause)
}

// readingTail ends a plain reading: the repetitions that failed, counted
// as missing the choice (as what), and the model chosen most often when
// it is another.
func readingTail(st *runner.Stability, primary *runner.StabilityModel, top runner.StabilityModel, many, what string) string {
	s := ""
	if st.Failed.Count > 0 {
		s += fmt.Sprintf(" The share counts the %d %s where the procedure failed as %s.", st.Failed.Count, many, what)
	}
	if top.Model != primary.Model && top.Chosen.Count > primary.Chosen.Count {
		s += fmt.Sprintf(" The model chosen most often was %s (%d of %d).", top.Model, top.Chosen.Count, st.Resamples)
	}
	return s
}

// stabilityTurning is the rule that rejects the primary analysis's choice
// in the most resamples, when it is a test rule that kept the choice in
// the primary analysis.
type stabilityTurning struct {
	number int
	kind   string
	share  runner.Rate
	reason string // the primary analysis's verdict on the choice
	// stat, df and critical are those of the rule's test of the choice
	// that the bootstrap is expected to reject most often (bootstrapRejects):
	// its statistic and degrees of freedom in the data and its critical
	// value at the rule's alpha; rejects is that expected share of
	// resamples, and expected says it is at least one half.
	stat, df, critical, rejects float64
	expected                    bool
}

// stabilityTurn finds the rule (not the last, which chooses) that
// rejected model in the most resamples and reads its verdict on model in
// the primary analysis; nil when no rule rejected it in any resample or
// the rule is not a test whose chi-squared statistics the verdict records.
func stabilityTurn(or *runner.OutcomeResult, st *runner.Stability, model string) *stabilityTurning {
	var best *stabilityTurning
	for i, ru := range st.Rules {
		if i >= len(or.Rules) || or.Rules[i].Rule.Final() {
			continue
		}
		for _, ms := range ru.Rejected {
			if ms.Model == model && ms.Share.Count > 0 && (best == nil || ms.Share.Count > best.share.Count) {
				best = &stabilityTurning{number: ru.Number, kind: ru.Kind, share: ms.Share}
				for _, v := range or.Rules[i].Verdicts {
					if v.Model == model && v.Kept {
						best.reason = v.Reason
						best.stat, best.df, best.critical, best.rejects = bootstrapRejects(v.Numbers)
						best.expected = best.rejects >= 0.5
					}
				}
			}
		}
	}
	if best == nil || best.reason == "" || best.critical == 0 {
		return nil
	}
	return best
}

// bootstrapRejects reads the chi-squared tests a verdict records (chi2,
// df and alpha; F tests, with a second df, are left out) and gives, for
// the one a bootstrap resample is expected to reject most often, its
// statistic, df and critical value and that expected share of resamples.
// A nonparametric bootstrap resample is drawn from the data, in which the
// restriction is off by as much as the data's statistic says: to first
// order the resample's statistic of a test of df restrictions is then
// noncentral chi-squared on df with the data's statistic T as its
// noncentrality (mean T + df), in large samples, when the less
// constrained model fits (its scores' variance is its information). The
// share is P(chi2(df, ncp = T) > critical); a rule that rejects when any
// of its tests does rejects at least that often.
func bootstrapRejects(nums map[string]float64) (stat, df, critical, rejects float64) {
	alpha, ok := nums["alpha"]
	if !ok {
		return 0, 0, 0, 0
	}
	var keys []string
	for k := range nums {
		if strings.HasPrefix(k, "chi2_against_") {
			keys = append(keys, k)
		}
	}
	sort.Strings(keys)
	rejects = -1
	for _, k := range keys {
		target := strings.TrimPrefix(k, "chi2_against_")
		d, ok := nums["df_against_"+target]
		if _, f := nums["df2_against_"+target]; !ok || f || d <= 0 || !(nums[k] >= 0) {
			continue
		}
		crit := distuv.ChiSquared{K: d}.Quantile(1 - alpha)
		if p := fit.NoncentralChi2Survival(crit, d, nums[k]); p > rejects {
			stat, df, critical, rejects = nums[k], d, crit, p
		}
	}
	if rejects < 0 {
		return 0, 0, 0, 0
	}
	return stat, df, critical, rejects
}

// stabilityCSV is table-stability-OUTCOME.csv: one row per share.
func stabilityCSV(or *runner.OutcomeResult) (head []string, rows [][]string, ok bool) {
	st := or.Stability
	if st == nil {
		return nil, nil, false
	}
	head = []string{"what", "rule", "rule_kind", "model", "hypothesis", "count", "of", "share", "mc_se", "primary_choice", "estimate_low", "estimate_high"}
	row := func(what, rule, kind, model, hyp string, r runner.Rate, primary bool, lo, hi *float64) {
		p, l, h := "", "", ""
		if primary {
			p = "true"
		}
		if lo != nil {
			l, h = csvNum(*lo), csvNum(*hi)
		}
		rows = append(rows, []string{what, rule, kind, model, hyp, strconv.Itoa(r.Count), strconv.Itoa(r.Of), csvNum(r.Rate), csvNum(r.SE), p, l, h})
	}
	for _, m := range st.Models {
		row("chosen", "", "", m.Model, "", m.Chosen, m.Primary, nil, nil)
	}
	row("none_chosen", "", "", "", "", st.None, or.Chosen == nil, nil, nil)
	row("failed", "", "", "", "", st.Failed, false, nil, nil)
	if st.SetAside > 0 {
		row("redrawn", "", "", "", "", runner.RateOf(st.Redrawn, st.Resamples), false, nil, nil)
	}
	for _, ru := range st.Rules {
		for _, ms := range ru.Rejected {
			row("rejected_by_rule", strconv.Itoa(ru.Number), ru.Kind, ms.Model, "", ms.Share, false, nil, nil)
		}
	}
	for _, h := range st.Hypotheses {
		row("hypothesis_rejected", "", "", "", h.Hypothesis, h.Rejected, false, h.Low, h.High)
	}
	return head, rows, true
}

// stabilityMethods is the Methods sentence of the stability study.
func stabilityMethods(r *runner.Result, or *runner.OutcomeResult) string {
	st := or.Stability
	if st == nil {
		return ""
	}
	if simulatedDraw(st) && st.Primary == "" {
		return ""
	}
	if simulatedDraw(st) {
		anew := ""
		if st.SetAside > 0 {
			anew = "; a set lacking a category of the outcome that the data hold was drawn again, so the sets are conditional on each appearing"
		}
		return fmt.Sprintf("How often the decision procedure recovers the chosen model was assessed, as the plan fixed in advance, by drawing new outcomes %d times from %s with its estimates at the %d rows used (predictors, weights, offsets and clusters kept; seed %d%s), repeating the whole decision procedure (grid, tests and rules, in order) on each simulated set with the terms' constants kept from the primary analysis, and reporting how often each model was chosen (with its Monte Carlo standard error), how often each rule rejected each model and how often each hypothesis was rejected in the model chosen there.", st.Resamples, st.Primary, st.Units, st.Seed, anew)
	}
	anew := ""
	if st.SetAside > 0 {
		anew = "; a draw lacking a category of the outcome, or a level or combination of levels of the categorical predictors, that the data hold was drawn again, so the resamples are conditional on each appearing"
	}
	if st.Imputed {
		anew += "; each resample of the rows as read was imputed anew with the same settings before the procedure: bootstrap, then impute"
	}
	return fmt.Sprintf("The stability of the model choice was assessed, as the plan fixed in advance, by repeating the whole decision procedure (grid, tests and rules, in order) on %d nonparametric bootstrap resamples of the %s used (seed %d%s), the terms' constants kept from the primary analysis, and reporting how often each model was chosen (with its Monte Carlo standard error), how often each rule rejected each model and how often each hypothesis was rejected in the model chosen in the resample.", st.Resamples, unitWord(st), st.Seed, anew)
}
