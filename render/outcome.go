package render

import (
	"fmt"
	"math"
	"strings"

	"ordplan/internal/words"
	"ordplan/plan"
	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// writeOutcome writes everything about one outcome, in the order a
// reviewer checks it: data, candidates, tests, decisions, then the
// effects across boundaries for the chosen approach and what the chosen
// model says.
func writeOutcome(d *doc, r *runner.Result, or *runner.OutcomeResult) {
	d.h(2, "Outcome: "+mdText(or.Outcome.Label))
	sampling := r.Analysis != nil && r.Analysis.Errors.Sampling
	writeData(d, or, sampling, r.Plan.Data.Cluster, r.DataParts)
	writeFreeSets(d, r.Plan.Models, or)
	writeModelTable(d, or, sampling)
	writeOverallFit(d, or)
	writeTests(d, r.Plan.Models.Backward(), or)
	writeDecisionLog(d, r.Registration, or)
	writeStability(d, r, or)
	writeBoundaryEffects(d, r, or)
	if or.Chosen == nil {
		writeHypotheses(d, r, or)
		d.p("No model was chosen, so the report shows no estimates, predicted probabilities or marginal effects for this outcome.")
		return
	}
	writeChosen(d, r, or)
	writeTermTests(d, r, or)
	writeOddsRatios(d, r, or)
	writeGoodnessOfFit(d, or)
	writeHypotheses(d, r, or)
	writePredictions(d, r, or)
	writeMarginalEffects(d, r, or)
	writeLevelPairs(d, r, or)
	writeNewRows(d, r, or)
}

func writeData(d *doc, or *runner.OutcomeResult, sampling bool, cluster string, parts []runner.DataRef) {
	ds := or.AsRead()
	d.h(3, "Data")
	obs := ""
	switch {
	case ds.Weights != nil && !sampling:
		obs = fmt.Sprintf("Observations (the frequency weights' sum): %s.", numfmt.Count(ds.NObs()))
	case sampling && ds.Weights != nil:
		// Read rescaled (data.Options.Sampling): the weights' own scale
		// means nothing, so no number here depends on it.
		obs = fmt.Sprintf("The sampling weights were rescaled to sum to the %d rows used (their scale carries no information); the counts below are weighted by them.", ds.N)
	}
	if obs != "" {
		obs = " " + obs
	}
	if s := ds.Sheet; s != nil {
		obs += " The rows were read from the workbook's " + mdText(s.Where()) + "."
		if n := s.HiddenNote(); n != "" {
			obs += " " + mdText(capitalize(n)) + "."
		}
	}
	names := make([]string, len(parts))
	for i, p := range parts {
		names[i] = p.File
	}
	if ps := data.PartSheets(ds.Parts, names); ps != "" {
		obs += " The rows of the workbook parts were read from " + mdText(ps) + "."
	}
	d.p("Outcome column %s, %d categories in this order: %s. %d rows read, %d used; %s.%s",
		mdCode(or.Outcome.Column), len(ds.Categories), mdText(strings.Join(ds.Categories, " < ")), ds.RowsRead, ds.N, mdText(ds.DropSummary()), obs)
	var rows [][]string
	if ob := or.Observed; ob != nil {
		// On imputed data: the observed values of the original file, not
		// one imputed set's.
		total, missing := 0.0, 0.0
		for i, y := range ob.Y {
			w := 1.0
			if ob.Weights != nil {
				w = ob.Weights[i]
			}
			if y < 0 {
				missing += w
			} else {
				total += w
			}
		}
		d.p("The counts below, and the predictors by outcome category, describe the observed values of the original data %s (%s observations with the outcome observed, %s with it missing), not an imputed set; the outcome's shares are of the observed outcomes, and each predictor is summarized over the rows where it is observed too.",
			mdCode(ob.File), numfmt.Count(total), numfmt.Count(missing))
		count := countText([][]float64{ob.Counts, {missing}}, nil)
		for j, l := range ob.Categories {
			share := "0.0%"
			if total > 0 {
				share = numfmt.Fixed(100*ob.Counts[j]/total, 1) + "%"
			}
			rows = append(rows, []string{l, count(ob.Counts[j]), share})
		}
		if missing > 0 {
			rows = append(rows, []string{"(missing, imputed)", count(missing), ""})
		}
		d.captioned("Outcome categories, observed values of the original data").table([]string{"Category", "Count", "Share"}, rows)
	} else {
		count := countText([][]float64{ds.Counts}, nil)
		for j, l := range ds.Categories {
			rows = append(rows, []string{l, count(ds.Counts[j]), numfmt.Fixed(100*ds.Counts[j]/ds.NObs(), 1) + "%"})
		}
		d.captioned("Outcome categories").table([]string{"Category", "Count", "Share"}, rows)
	}
	if terms := or.TermDescriptions(); len(terms) > 0 {
		onSets := ""
		if or.Imputed != nil {
			onSets = " On imputed data they are computed on the first imputed set and used for every set, so that each parameter means the same in every set, as pooling by Rubin's rules needs."
		}
		d.p("Predictor terms: how each term of the plan became columns of the models. Constants computed from the rows used (means, standard deviations, quantile knots, orthogonal-polynomial coefficients) are frozen and reused for predictions on new rows; decisions.json records them." + onSets + " A term's columns share one effect structure (parallel, nonparallel or constrained) and are tested together.")
		var rows [][]string
		for _, t := range terms {
			rows = append(rows, []string{t[0], t[1], t[2]})
		}
		d.captioned("Predictor terms").table([]string{"Term", "What it is", "Columns"}, rows)
	}
	writeDescriptives(d, or, sampling)
	writeImputation(d, or, sampling, cluster)
}

// writeFreeSets writes the partial set of each approach and how a
// stepwise selection chose it. A plan whose models read no partial set
// (neither partial nor constrained effects) has no such section: a table
// of sets "(none)" that no model uses read as if something were missing.
func writeFreeSets(d *doc, m plan.Models, or *runner.OutcomeResult) {
	if !m.HasEffects(fit.PartialEffects) && !m.HasEffects(fit.ConstrainedEffects) && len(or.Stepwise) == 0 {
		return
	}
	d.h(3, "Partial sets")
	var rows [][]string
	for _, fs := range or.FreeSets {
		set := strings.Join(fs.Predictors, ", ")
		if set == "" {
			set = "(none)"
		}
		rows = append(rows, []string{fs.Approach.String(), set, fs.Source})
	}
	d.table([]string{"Approach", "Predictors allowed to vary", "Source"}, rows)
	for _, s := range or.Stepwise {
		d.p("**Stepwise selection, %s %s** (start: every predictor nonparallel; at each step the free predictor with the largest p-value at or above %g is made parallel):", s.Approach, s.Link, s.Result.Alpha)
		if !s.Result.OK {
			d.p("Not computed: %s.", mdText(s.Result.Reason))
			continue
		}
		if or.Imputed != nil {
			d.p("On imputed data every model of the selection was fitted on each of the %d imputed sets and pooled by Rubin's rules, and each step reads pooled tests (Wald tests by D1, likelihood-ratio tests by D3; F tests shown with their F p-values); the log-likelihood is the mean over the sets. One partial set is selected for all imputed sets.", or.Imputed.M)
		}
		var rows [][]string
		var warned poolingWarnings
		for _, st := range s.Result.Steps {
			var parts []string
			for _, t := range st.Tests {
				warned.add(fmt.Sprintf("step %d, test of %s", st.Step, t.Name), t)
				if !t.OK {
					// Never read as a statistic: the step passed over it.
					parts = append(parts, fmt.Sprintf("%s not computed (%s)", t.Name, mdText(t.Reason)))
					continue
				}
				parts = append(parts, fmt.Sprintf("%s %s, %s", t.Name, runner.TestStatistic(t), numfmt.PText(t.P)))
			}
			imposed := st.Imposed
			if imposed == "" {
				imposed = "(stop)"
			}
			rows = append(rows, []string{fmt.Sprint(st.Step), numfmt.Fixed(st.LogLik, 3), strings.Join(parts, "; "), imposed})
		}
		d.captioned(fmt.Sprintf("Stepwise selection of the partial set, %s %s", s.Approach, s.Link)).table([]string{"Step", "Log-likelihood", "Tests of equal slopes", "Made parallel"}, rows)
		warned.write(d)
		var flags []collinearFlags
		for _, st := range s.Result.Steps {
			for _, sk := range st.Skipped {
				d.p("Step %d passed over %s: %s.", st.Step, mdCode(sk.Term), mdText(sk.Reason))
			}
			flags = append(flags, collinearFlags{fmt.Sprint(st.Step), st.Collinear})
		}
		if n := collinearWarning(flags, "the model of step", "the models of steps"); n != "" {
			d.p("%s", n)
		}
		if t := s.Result.FinalTest; t.OK {
			d.p("Joint test that every predictor made parallel has equal slopes: %s, %s.", runner.TestStatistic(t), numfmt.PText(t.P))
		}
	}
}

func writeModelTable(d *doc, or *runner.OutcomeResult, sampling bool) {
	d.h(3, "The models")
	var rows [][]string
	for _, f := range or.Fits {
		if f.Auxiliary {
			continue
		}
		rows = append(rows, modelRow(f))
	}
	d.captioned("The candidate models").table([]string{"Model", "Status", "Log-likelihood", "Parameters", "AIC", "BIC", "Rows with P<0", "Verdict"}, rows)
	if binary(or) {
		d.p("%s The cumulative, stage and adjacent comparisons are the same model too: a binary regression with the model's link. Candidates that differ only in these are the same fit, with the same criteria; the rules' ties between them are broken by the order of the plan's grid.", oneBoundary)
	}
	if s := auxiliaryNote(or); s != "" {
		d.p("%s", s)
	}
	if sampling {
		d.p("%s", runner.SamplingCriteriaNote)
	}
	for _, n := range or.Notes {
		d.p("%s.", mdText(strings.TrimSuffix(n, ".")))
	}
	if n := collinearNote(or); n != "" {
		d.p("%s", n)
	}
	if n := nearZeroScaleNote(or); n != "" {
		d.p("%s", n)
	}
	if c := criteriaChart(d, or, sampling); c != nil {
		d.charts("Chart in report.html: AIC and BIC of every candidate model.", c)
	}
}

// collinearNote warns of near-collinearity among the candidate models in
// one paragraph (collinearWarning); "" when no candidate flags a term.
func collinearNote(or *runner.OutcomeResult) string {
	var flags []collinearFlags
	for _, f := range or.Fits {
		if f.Auxiliary || f.Result == nil {
			continue
		}
		flags = append(flags, collinearFlags{mdText(f.ID), f.Result.Collinear})
	}
	return collinearWarning(flags, "model", "models")
}

// collinearFlags are the terms one model flags as nearly collinear, with
// the model's name (Markdown).
type collinearFlags struct {
	model string
	terms []fit.Inflation
}

// collinearWarning warns of near-collinearity in one paragraph: one
// clause per flagged term (in the order first met) naming the models
// whose fits flag it (after one, or many when several: "model",
// "models") and the range of its variance inflation over them, term
// names escaped, then what the measure means, once; "" when no model
// flags a term.
func collinearWarning(flags []collinearFlags, one, many string) string {
	type flagged struct {
		models   []string
		low, top float64
	}
	var order []string
	by := map[string]*flagged{}
	for _, f := range flags {
		for _, v := range f.terms {
			t := by[v.Term]
			if t == nil {
				t = &flagged{low: v.Factor, top: v.Factor}
				by[v.Term] = t
				order = append(order, v.Term)
			}
			t.models = append(t.models, f.model)
			t.low, t.top = math.Min(t.low, v.Factor), math.Max(t.top, v.Factor)
		}
	}
	if len(order) == 0 {
		return ""
	}
	out := make([]string, len(order))
	for i, term := range order {
		t := by[term]
		factor := fmt.Sprintf("%.3g", t.low)
		if t.top != t.low {
			factor = fmt.Sprintf("%.3g to %.3g", t.low, t.top)
		}
		which := one + " " + t.models[0]
		if len(t.models) > 1 {
			which = many + " " + words.AndList(t.models)
		}
		out[i] = fmt.Sprintf("the slopes of %s have variance inflation %s in %s", mdCode(term), factor, which)
	}
	return fmt.Sprintf("**Warning**, near-collinearity: %s; %s.", strings.Join(out, "; "), fit.CollinearMeaning)
}

// nearZeroScaleNote warns, in one paragraph, of the candidate models in
// which a constraint group's g is near zero (fit.Result.NearZeroScale):
// one clause per model and group, in grid order, then what it means,
// once; "" when none is.
func nearZeroScaleNote(or *runner.OutcomeResult) string {
	var out []string
	for _, f := range or.Fits {
		if f.Auxiliary || f.Result == nil {
			continue
		}
		for _, nz := range f.Result.NearZeroScale {
			out = append(out, fmt.Sprintf("in %s, %s", mdText(f.ID), mdText(nz.Clause())))
		}
	}
	if len(out) == 0 {
		return ""
	}
	return fmt.Sprintf("**Warning**, phi near non-identification: %s. %s.", strings.Join(out, "; "), mdText(capitalize(fit.ScaleNearZeroMeaning)))
}

func modelRow(f *runner.FitEntry) []string {
	id := f.ID
	if f.Verdict == "chosen" {
		id = md("**" + mdText(id) + "** (chosen)")
	}
	verdict := f.Verdict
	switch {
	case f.RejectedRule > 0 && f.Verdict == "chosen":
		// The plan's fallback, every candidate rejected.
		verdict = fmt.Sprintf("chosen as the fallback (rejected by rule %d)", f.RejectedRule)
	case f.RejectedRule > 0:
		// Which rule, as the decision log numbers them: its table says why.
		verdict += fmt.Sprintf(" (rule %d)", f.RejectedRule)
	}
	if f.Result == nil {
		return []string{id, "not fitted: " + f.Err, "", "", "", "", "", verdict}
	}
	res := f.Result
	if !res.MaximumKnown() {
		return []string{id, string(res.Status), "no finite value", fmt.Sprint(res.NParams), "", "", "", verdict}
	}
	return []string{id, string(res.Status), numfmt.Fixed(res.LogLik, 3), fmt.Sprint(res.NParams), numfmt.Fixed(res.AIC, 2), numfmt.Fixed(res.BIC, 2), fmt.Sprint(res.NegativeRows), verdict}
}

// auxiliaryNote explains the fits the plan's tests need besides the
// candidates: they are fitted, used by the tests, and never chosen.
func auxiliaryNote(or *runner.OutcomeResult) string {
	var grid, per []string
	perTerms := map[string]bool{}
	for _, f := range or.Fits {
		if !f.Auxiliary {
			continue
		}
		if f.OnlyParallel != "" {
			per = append(per, f.ID)
			perTerms[f.OnlyParallel] = true
		} else {
			grid = append(grid, f.ID)
		}
	}
	if len(grid)+len(per) == 0 {
		return ""
	}
	s := fmt.Sprintf("Besides these candidates the plan caused %d auxiliary fits, made only for its tests and never candidates for the choice:", len(grid)+len(per))
	if len(grid) > 0 {
		s += fmt.Sprintf(" %d parallel or nonparallel model%s that the plan's effect structures do not include (%s), which the overall parallel-lines tests compare;", len(grid), plural(len(grid)), strings.Join(grid, ", "))
	}
	if len(per) > 0 {
		s += fmt.Sprintf(" %d models in which one predictor term is parallel and every other one nonparallel (named approach/only-TERM-parallel/link, one per term of each approach and link: %d terms), which the per-predictor likelihood-ratio tests (lr in tests.parallel_lines) compare with the nonparallel model;", len(per), len(perTerms))
	}
	return strings.TrimSuffix(s, ";") + ". Their estimates are in decisions.json (auxiliary: true)."
}
