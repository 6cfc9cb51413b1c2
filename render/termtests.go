package render

import (
	"fmt"
	"slices"
	"strconv"
	"strings"

	"ordplan/internal/words"
	"ordplan/plan"
	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// writeTermTests writes the tests of each term of the chosen model.
func writeTermTests(d *doc, r *runner.Result, or *runner.OutcomeResult) {
	inf := plan.Inference{}
	if r.Analysis != nil {
		inf = r.Analysis.Inference
	}
	if len(or.TermTests) == 0 {
		if inf.TermTests == plan.TermTestsNone && or.Chosen != nil {
			d.h(4, "Tests of each term")
			d.p("Not computed: the plan switches the tests of each term of the chosen model off (`inference.term_tests: none`). Whether each term is associated with the outcome at all, given the other terms, is not tested here; the estimates and their intervals are shown above.")
		}
		return
	}
	d.h(4, "Tests of each term")
	d.p("Is each term associated with the outcome at all, given the other terms? For each term two tests of the hypothesis that all its slopes in the chosen model, %s, are 0%s: the Wald test, from the estimates and the model's standard errors, and the likelihood-ratio test, which compares the chosen model with the same model (comparison, link, effect structure of every other column) fitted without the term on the same rows. A term inside an interaction is tested together with every interaction containing it (column Tested with): its own slopes alone would measure its effect only where the other terms of the interaction are 0, which depends on their coding and centring; the interaction itself is tested alone. A constrained column that is the only column of its constraint group is tested by its effects at every boundary (the group's common factor goes with it). Each constraint group of several columns is also tested as a whole (its columns, named in column Tested with), unless a term's test already drops exactly its columns.%s", or.Chosen.ID, everyBoundary(or), columnTestsText(or))
	wald, lr := inf.WantsTermWald(), inf.WantsTermLR()
	switch {
	case !lr:
		d.p("The plan asks for the Wald test only (`inference.term_tests: %s`): the likelihood-ratio tests, which refit the model once per term, were not computed.", inf.TermTests)
	case !wald:
		d.p("The plan asks for the likelihood-ratio test only (`inference.term_tests: %s`): the Wald tests were not computed.", inf.TermTests)
	}
	head := []string{"Term", "Tested with"}
	if wald {
		head = append(head, "Wald", "p")
	}
	if lr {
		head = append(head, "Likelihood ratio", "p")
	}
	pooled := false
	var rows [][]string
	var warned poolingWarnings
	for _, tt := range or.TermTests {
		warned.add("Wald test of "+tt.Term, tt.Wald)
		warned.add("likelihood-ratio test of "+tt.Term, tt.LR)
		with := "(alone)"
		switch {
		case tt.Group != nil:
			with = "its columns " + strings.Join(tt.Columns, ", ")
		case tt.Column != nil:
			with = "every term reading it: " + strings.Join(tt.With, ", ")
		case len(tt.With) > 0:
			with = strings.Join(tt.With, ", ")
		}
		row := []string{tt.Term, with}
		if wald {
			pooled = pooled || tt.Wald.Pooled != ""
			row = append(row, termStatistic(tt.Wald)...)
		}
		if lr {
			pooled = pooled || tt.LR.Pooled != ""
			row = append(row, termStatistic(tt.LR)...)
		}
		if wald && lr && !tt.Wald.OK && !tt.LR.OK && tt.Wald.Reason == tt.LR.Reason {
			row[4] = "not computed (the same reason)"
		}
		rows = append(rows, row)
	}
	d.captioned("Tests of each term of "+or.Chosen.ID).table(head, rows)
	warned.write(d)
	for _, tt := range or.TermTests {
		if tt.Bound != "" {
			d.p("**Degrees of freedom of the tests of %s:** %s.", mdText(tt.Term), mdText(tt.Bound))
		}
	}
	chance := chanceTermsText(r, or)
	if chance != "" {
		d.p("%s", chance)
	}
	switch a := r.Analysis; {
	case a != nil && a.Errors.Covariance == fit.Clustered && !a.Errors.Sampling && wald && lr:
		g := runner.ClusterCount(or.Data)
		d.p("The two tests compare different things. The Wald test of a term asks whether its slopes are 0 in %s, measured against the standard errors of the %s: they allow for correlation within the %d clusters, but the covariance is estimated from only %d cluster sums, so a test of q slopes is referred to F(q, %d-q), whose power falls as q nears %d. The likelihood-ratio test compares the likelihoods of the model with and without the term, which take every row as independent: it holds its level if the clusters do not matter and rejects too often if observations of a cluster are alike. Where the two disagree, either may be the one that errs: a Wald p-value far above the likelihood ratio's can come from observations of a cluster being alike, which the likelihood ignores, or from the Wald test's low power with q near the clusters; one far below it from cluster-robust errors that are too small with few clusters.", or.Chosen.ID, a.Errors.Phrase(mdCode(r.Plan.Data.Cluster), g), g, g, g, g)
	case a != nil && a.Errors.Covariance.IsSandwich() && !a.Errors.Sampling:
		d.p("The Wald tests use the standard errors of the %s, which do not rest on the model's variance being right; the likelihood-ratio tests rest on it (and treat the rows as independent), so where the two disagree this may be why.", a.Errors.Phrase("", 0))
	}
	if pooled {
		switch {
		case wald && lr:
			d.p("On imputed data the Wald test is pooled over the sets by D1 and the likelihood-ratio test by D3 (each set's statistic at its own estimates and at the pooled ones); both are F statistics on the degrees of freedom shown.")
		case wald:
			d.p("On imputed data the Wald test is pooled over the sets by D1, an F statistic on the degrees of freedom shown.")
		default:
			d.p("On imputed data the likelihood-ratio test is pooled over the sets by D3 (each set's statistic at its own estimates and at the pooled ones), an F statistic on the degrees of freedom shown.")
		}
	}
	constrained := ""
	if slices.Contains(or.Chosen.Result.Model.Effects, fit.Constrained) {
		constrained = " A constrained effect is a product, b_m = φ_m g, so a test of its columns is not a test of parameters set to 0 one by one: its Wald statistic depends on how the model is parameterized (through φ and g), and it can differ from the likelihood ratio however many observations there are."
	}
	robustRead := "; read the likelihood-ratio tests"
	associated := "A small p-value says the term is associated with the outcome given the other terms, not that it causes it."
	if chance != "" {
		associated = "For every other term (the interactions with a term assigned by chance read as above) a small p-value says the term is associated with the outcome given the other terms, not that it causes it."
	}
	tail := "With many observations the tests reject for effects too small to matter: read them with the estimates. " + associated + " The p-values are not corrected for the number of terms tested (the plan's `inference.multiplicity` applies to its hypotheses only)."
	if a := r.Analysis; a != nil && a.Errors.Covariance.IsSandwich() {
		// Clustered or sandwich errors, or sampling weights (which imply a
		// sandwich): the likelihood ratio takes the rows as independent and
		// the model's variance as right, so it is not the test to prefer.
		why := "the likelihood-ratio test takes the rows as independent and the model's variance as right, which these standard errors do not assume"
		if a.Errors.Sampling {
			why = "under sampling weights the fits maximize a pseudo-likelihood, and the likelihood-ratio test is not computed"
		}
		errs := "the " + a.Errors.Covariance.Phrase()
		if a.Errors.Jackknife() {
			errs = "the delete-one-cluster jackknife"
		}
		d.p("With standard errors from %s, the Wald test with this robust covariance is the one to read: %s.%s %s", errs, why, constrained, tail)
		robustRead = " and the likelihood-ratio tests rest on the model's variance and on independent rows: read neither alone"
	} else {
		d.p("The two tests rest on the same large-sample theory. For slopes that are parameters of the model, as parallel and nonparallel effects are, they agree closely in large samples; in small samples, or when an effect is large, they can differ.%s Where the two differ, prefer the likelihood ratio, which does not depend on the parameterization (the Wald test does). %s", constrained, tail)
	}
	if s := constrainedTermTests(or); s != "" {
		d.p("**Constrained effects in %s:** %s. Their Wald statistics depend on the parameterization of the constraint%s.", or.Chosen.ID, s, robustRead)
	}
}

// columnTestsText says, after the tests' description, why a data column
// that makes several terms is tested as a whole; "" when none does.
func columnTestsText(or *runner.OutcomeResult) string {
	var cols, rows []string
	for _, tt := range or.TermTests {
		if tt.Column != nil {
			cols, rows = append(cols, mdText(*tt.Column)), append(rows, mdText(tt.Term))
		}
	}
	if len(cols) == 0 {
		return ""
	}
	row := "the row " + rows[0] + " tests"
	if len(rows) > 1 {
		row = "the rows " + words.AndList(rows) + " test"
	}
	return fmt.Sprintf(" Terms made of the same data column (%s) cannot change one with the others held fixed, so the test of each asks only what it adds to the others, not whether the column matters: %s every term reading the column, with every interaction containing one, together; read it for the association of the column with the outcome.", words.AndList(cols), row)
}

// chanceTermsText says how the tests of the chosen model's terms read
// whose column the plan's dictionary says was assigned to the units by
// chance (assigned_by_chance), one sentence group per such term; "" when
// there is none. Only such a term's own effect has a causal reading: its
// slopes estimate the effect of the assignment given the other terms,
// which holds if those were measured before the assignment; where it
// enters an interaction its test (with the interactions) asks whether the
// assignment changed the outcome at all within the model (not where), the
// interaction's own test whether that effect differs with the other terms
// within the model (a large p-value not showing it the same everywhere),
// its own slopes give the effect
// where the other terms of the interaction have their columns at 0 (their
// reference), and the other terms' own effects stay associations.
func chanceTermsText(r *runner.Result, or *runner.OutcomeResult) string {
	if r.Plan == nil {
		return ""
	}
	chance := r.Plan.ByChanceColumns()
	if len(chance) == 0 {
		return ""
	}
	specs := map[string]design.TermSpec{}
	for _, t := range r.Plan.DesignSpec(or.Outcome).Terms {
		specs[t.Name] = t
	}
	where := map[string]string{}
	for _, c := range or.ColumnReadings() {
		if c.Where != "" && where[c.Term] == "" {
			where[c.Term] = c.Where
		}
	}
	var out []string
	for _, tt := range or.TermTests {
		spec, ok := specs[tt.Term]
		if tt.Group != nil || !ok || len(spec.Interact) > 0 || !slices.Contains(chance, spec.Source) {
			continue
		}
		s := fmt.Sprintf("The values of %s were assigned to the units by chance (the plan's dictionary says so, with assigned_by_chance), so its test and its slopes have a causal reading under the trial's conditions: if the assignment was made and kept as planned and the outcome recorded alike in every group, its slopes (on the model's scale) are estimates of the effect of the assignment given the other terms, which holds only if those terms were measured before the assignment (a term the assignment could have changed would take up part of its effect).", mdCode(spec.Source))
		var partners, partnersAt []string
		for _, w := range tt.With {
			for _, c := range specs[w].Interact {
				if c != tt.Term && !slices.Contains(partners, mdText(c)) {
					partners = append(partners, mdText(c))
				}
			}
		}
		if len(partners) == 0 {
			out = append(out, s+" Its test asks whether the assignment changed the outcome, and it is most sensitive to a change of the form the model gives the assignment (with one slope at every boundary, a shift of the whole distribution towards higher or lower categories): a change of another shape, such as a move towards the middle categories from both ends, can go undetected.")
			continue
		}
		var with []string
		for _, w := range tt.With {
			with = append(with, mdText(w))
		}
		at := "where the other terms of the interaction have their columns at 0"
		if w := where[tt.Term]; w != "" {
			at = fmt.Sprintf("where %s (the other terms of the interaction at their reference, their columns at 0)", mdText(w))
		}
		for _, c := range partners {
			if w := where[c]; w != "" {
				partnersAt = append(partnersAt, mdText(w))
			}
		}
		own := ""
		if len(partnersAt) > 0 {
			own = " (where " + words.AndList(partnersAt) + ")"
		}
		p := words.AndList(partners)
		s += fmt.Sprintf(" Tested together with %s, its test asks whether the assignment changed the outcome at all, within the model: its hypothesis is that its slopes and those of %s are all 0, no effect of the assignment at any value of %s among the effects the model allows (one that changes with %s only as the columns of %s let it), and a small p-value does not say at which values of %s the assignment changed the outcome. The test of %s on its own asks whether the effect of the assignment differs with %s, within the model and on the model's scale: a large p-value does not show that the effect is the same at every value of %s, only that these data show no difference of the form the model gives. Its own slopes estimate the effect of the assignment only %s, and those of %s how that effect differs with %s: for whom the assignment changed the outcome more or less, not what %s causes. The own slopes of %s%s describe an association, not an effect of %s, and its test, made with the same interaction, is not a test of an effect of %s.",
			words.AndList(with), words.AndList(with), p, p, words.AndList(with), p, words.AndList(with), p, p, at, words.AndList(with), p, p, p, own, p, p)
		out = append(out, s)
	}
	return strings.Join(out, " ")
}

// constrainedTermTests lists the term tests of the chosen model that
// test columns with constrained effects, each with its Wald and
// likelihood-ratio statistics ("" when there are none, or when one of
// the two was not computed for every such test).
func constrainedTermTests(or *runner.OutcomeResult) string {
	res := or.Chosen.Result
	constrained := map[string]bool{}
	for k, e := range res.Model.Effects {
		if e == fit.Constrained && k < len(res.Predictors) {
			constrained[res.Predictors[k]] = true
		}
	}
	var parts []string
	for _, tt := range or.TermTests {
		if !slices.ContainsFunc(tt.Columns, func(c string) bool { return constrained[c] }) || !tt.Wald.OK || !tt.LR.OK {
			continue
		}
		parts = append(parts, fmt.Sprintf("the tests of %s give Wald %s and likelihood ratio %s", mdText(tt.Term), runner.TestStatistic(tt.Wald), runner.TestStatistic(tt.LR)))
	}
	return strings.Join(parts, "; ")
}

// termStatistic is a term test's statistic and p-value for the table, or
// why it was not computed.
func termStatistic(t fit.Test) []string {
	if !t.OK {
		return []string{"not computed: " + t.Reason, ""}
	}
	return []string{runner.TestStatistic(t), numfmt.PValue(t.P)}
}

// termTestHead is the header of table-term-tests: on imputed data the
// statistic is the pooled F (column f), else the chi-square.
func termTestHead(imputed bool) []string {
	stat := "chi2"
	if imputed {
		stat = "f"
	}
	return []string{"model", "term", "tested_with", "columns", "test", stat, "df", "df2", "p", "pooled", "restricted_model", "note"}
}

// termTestRows are the rows of table-term-tests: one per term and test.
// On imputed data the statistic is F and p comes from F(df, df2) (df2
// inf: infinite).
func termTestRows(or *runner.OutcomeResult) [][]string {
	var rows [][]string
	for _, tt := range or.TermTests {
		for _, t := range []fit.Test{tt.Wald, tt.LR} {
			row := []string{or.Chosen.ID, tt.Term, strings.Join(tt.With, " "), strings.Join(tt.Columns, " "), t.Name}
			if !t.OK {
				rows = append(rows, append(row, "", "", "", "", "", "", t.Reason))
				continue
			}
			restricted := ""
			if t.Name == fit.TestLR.String() {
				restricted = tt.Without
			}
			var note []string
			for _, n := range []string{t.Warning, tt.Bound, fRefNote(t)} {
				if n != "" {
					note = append(note, n)
				}
			}
			rows = append(rows, append(row, csvStat(t, or.Imputed != nil), strconv.Itoa(t.DF), csvDF2(t), csvNum(t.P), t.Pooled, restricted, strings.Join(note, "; ")))
		}
	}
	return rows
}

// everyBoundary is " at every boundary" for an outcome of more than two
// categories; nothing for two (one boundary).
func everyBoundary(or *runner.OutcomeResult) string {
	if binary(or) {
		return ""
	}
	return " at every boundary"
}
