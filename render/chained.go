package render

import (
	"fmt"
	"strings"

	"ordplan/internal/words"
	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/impute/chained"
)

// modelWords describes an imputation model in the report.
var modelWords = map[chained.Method]string{
	chained.MeanMatching: "predictive mean matching (%d donors)",
	chained.NormalDraw:   "draw from the normal linear model",
	chained.Logistic:     "logistic regression",
	chained.Multinomial:  "multinomial logit",
	chained.Ordinal:      "cumulative logit, parallel slopes",
}

// writeChained states how this run imputed the data (data.missing:
// impute): the method, the sets, iterations and seed, each column's model,
// the notes of the fits, the convergence summary when asked, and what
// imputation assumes.
func writeChained(d *doc, ch *runner.ChainedRecord, rows int, dz *design.Design, setsFile, cluster string) {
	incomplete, kept, units := chainedRows(ch, rows)
	if units != "" {
		units = " (" + units + ")"
	}
	d.p("The imputed sets were made by this run by chained equations (fully conditional specification; van Buuren 2018): %d sets, each after %d iterations through the incomplete columns, with seed %d (set s draws from its own stream, so the sets do not depend on the number of workers). Of the %d rows, %d (%s) had a missing value in the outcome or a predictor column and were imputed rather than dropped%s. Each incomplete column was imputed from a model of it given the outcome and every other column used, as main effects of the raw columns; its parameters were drawn from their approximate posterior for every imputation, so that the sets reflect the uncertainty of the imputation model. Columns were visited in the order %s (fewest missing values first).",
		ch.Sets, ch.Iterations, ch.Seed, kept, incomplete, sharePct(incomplete, kept), units, codeList(ch.Visits))
	var tab [][]string
	for _, m := range ch.Models {
		w := modelWords[m.Method]
		if m.Method == chained.MeanMatching {
			w = fmt.Sprintf(w, ch.Donors)
		}
		tab = append(tab, []string{md(mdCode(m.Column)), m.Kind, fmt.Sprint(m.Missing), sharePct(m.Missing, rows), w, strings.Join(m.Predictors, ", ")})
	}
	// What Imputed and Share count: rows, or under frequency weights the
	// units the weights count (m.Missing and rows are units there).
	counted := "rows"
	if ch.UnitsIncomplete != nil {
		counted = "units"
	}
	d.captioned("Imputation models").table([]string{"Column", "Kind", "Imputed " + counted, "Share of " + counted, "Model", "Predictors"}, tab)
	if ch.UnitsIncomplete != nil {
		d.p("Imputed units and their share count the %d units the frequency weights count, each imputed on its own, not the %d rows.", rows, kept)
	}
	if lack := termsImputationLacks(dz); lack != "" {
		d.p("Transformations, polynomials, splines and interactions of the analysis were computed after imputation from the imputed columns (impute, then transform). The imputation models hold the columns as main effects only: the effects of %s can be attenuated, more so the more values are missing.", lack)
	}
	if len(ch.Notes) > 0 {
		d.p("What the imputation models needed:")
		d.list(words.Each(ch.Notes, mdText))
	}
	if len(ch.Unlinked) > 0 {
		d.p("**Warning:** imputed values that no observed data inform: where a column is missing in every row at a level of another, nothing in the data links the two, and the imputed sets fill that combination from the imputation models alone (each column imputed from the others in turn). The pooled estimates that involve it, with their standard errors and p-values, then restate those models, not the data, however many sets are imputed:")
		d.list(words.Each(ch.Unlinked, mdText))
	}
	if len(ch.Unheld) > 0 {
		d.p("Imputed values the data cannot hold (counted in the final sets; decisions.json gives the counts per column):")
		d.list(words.Each(ch.Unheld, mdText))
	}
	if ch.ConvergenceTable {
		var tr [][]string
		for _, t := range ch.Trace {
			tr = append(tr, []string{md(mdCode(t.Column)), fmt.Sprint(t.Iteration), numfmt.Est(t.Mean), numfmt.Est(t.SD), numfmt.Est(t.SpreadMean)})
		}
		d.p("Convergence: after every iteration, the mean and SD of each column's imputed values (averaged over the sets; categorical columns as level indexes from 0) and the SD of the set means across sets. The values should wander without a trend over the last iterations; a trend calls for more iterations.")
		d.captioned("Imputed values by iteration").table([]string{"Column", "Iteration", "Mean", "SD", "SD of set means"}, tr)
	}
	if setsFile != "" {
		d.p("The %d completed sets the fits used are in %s, one after another (the column imputed_set numbers them; data_line is the row's line in the data file), for checking the imputations or analysing the sets elsewhere.", ch.Sets, mdCode(setsFile))
	} else {
		d.p("The completed sets are not among the outputs; `data.imputation.write_sets: true` writes them, for checking the imputations or analysing the sets elsewhere.")
	}
	d.p("Multiple imputation assumes that the values are missing at random given the columns in the imputation models: whether a value is missing may depend on the outcome and the other columns observed, not on the missing value itself. That assumption cannot be checked from the data; if missingness depends on the unseen values (missing not at random), the pooled estimates can be biased, and a sensitivity analysis is needed.%s", clusterCaution(cluster))
}

// chainedRows gives the rows kept with a missing value and imputed, the
// rows kept, and under frequency weights the units these count in words
// ("" without): units is the rows of the imputed sets (ImputedRun.Rows),
// which are units under frequency weights (each imputed on its own).
func chainedRows(ch *runner.ChainedRecord, units int) (incomplete, rows int, unitWords string) {
	if ch.UnitsIncomplete == nil {
		return ch.RowsIncomplete, units, ""
	}
	return ch.RowsIncomplete, ch.Rows, fmt.Sprintf("%d of the %d units the frequency weights count, each imputed on its own", *ch.UnitsIncomplete, units)
}

// clusterCaution says, when the plan has a cluster column, that the
// imputation models leave the clusters out (or "").
func clusterCaution(cluster string) string {
	if cluster == "" {
		return ""
	}
	return fmt.Sprintf(" The imputation models leave out the clusters of %s: values were imputed as if the rows of one cluster were no more alike than rows of different clusters. Where the outcome or the predictors differ between clusters, the imputed values follow the overall pattern instead of their cluster's, which can bias the pooled estimates and make their cluster-robust standard errors too small, more so the more values are missing.", mdCode(cluster))
}

// imputationMethods is the methods paragraph's sentence on imputed data:
// how the sets were made (by this run or elsewhere) and pooled, with the
// complete-data degrees of freedom of the pooling (g: the clusters of a
// cluster-robust covariance, 0 for none; completeDFText).
func imputationMethods(im *runner.ImputedRun, mt *data.MissingTable, dz *design.Design, cluster string, g int, c *citer) string {
	pool := func() string {
		joint := ""
		if g > 0 {
			joint = "; a pooled Wald test of q restrictions was multiplied by (G-q)/(G-1) and referred to F with the small-sample denominator for G-q complete-data degrees of freedom"
		}
		return fmt.Sprintf("Every model was fitted on each of the %d imputed data sets and the results were combined by Rubin's rules %s, %s%s.", im.M, c.cite("rubin"), completeDFText(g, cluster), joint)
	}
	ch := im.Chained
	if ch == nil {
		return pool() + " " + marWords + " " + outsideImputationWords
	}
	sources := c.cite("rubin", "vanbuuren") // cited first: the text names them first
	var models []string
	seen := map[chained.Method]bool{}
	for _, m := range ch.Models {
		if seen[m.Method] {
			continue
		}
		seen[m.Method] = true
		w := modelWords[m.Method]
		if m.Method == chained.MeanMatching {
			w = fmt.Sprintf("predictive mean matching with %d donors %s", ch.Donors, c.cite("little"))
		}
		var cols []string
		for _, o := range ch.Models {
			if o.Method == m.Method {
				cols = append(cols, o.Column)
			}
		}
		models = append(models, fmt.Sprintf("%s for %s", w, words.AndList(words.Each(cols, mdText))))
	}
	fallback := ""
	for _, n := range ch.Notes {
		if strings.Contains(n, "pseudo-observations") {
			fallback = fmt.Sprintf(" Imputation models with perfect prediction were refitted with weighted pseudo-observations %s.", c.cite("augment"))
		}
	}
	kept, used, units := chainedRows(ch, im.Rows)
	var about []string
	if mt != nil {
		imputed := map[string]bool{}
		for _, m := range ch.Models {
			imputed[m.Column] = true
		}
		var by string
		kept, used, by = keptMissing(mt, imputed)
		if units != "" {
			about = append(about, units)
		}
		if by != "" {
			about = append(about, "missing by column: "+by)
		}
	}
	by := ""
	if len(about) > 0 {
		by = " (" + strings.Join(about, "; ") + ")"
	}
	return fmt.Sprintf("The %d rows (%s of %d) with a missing value in the outcome or a predictor were kept%s, and their missing values were multiply imputed by chained equations %s: %d imputed sets, each after %d iterations (seed %d), with %s, every model given the outcome and the other columns and its parameters drawn from their approximate posterior; transformations and interactions were computed from the imputed columns.%s%s The imputation assumes that values are missing at random given these columns.%s %s",
		kept, sharePct(kept, used), used, by, sources, ch.Sets, ch.Iterations, ch.Seed, strings.Join(models, "; "), fallback, mainEffectsCaution(dz), clusterCaution(cluster), pool())
}

// keptMissing counts, from the missing-value patterns of mt, the rows
// that were kept and imputed: those whose missing columns are all among
// the imputed ones (a row missing a weight, offset, cluster or a column
// only the subset reads was dropped). It gives those rows, the rows used
// (the table's rows less the dropped ones) and the imputed columns' counts
// over the kept rows in words, as missingByColumnWords writes them.
func keptMissing(mt *data.MissingTable, imputed map[string]bool) (kept, used int, byColumn string) {
	count := make([]int, len(mt.Columns))
	used = mt.Rows
	for _, p := range mt.Patterns {
		fills := true
		for j, miss := range p.Missing {
			fills = fills && (!miss || imputed[mt.Columns[j]])
		}
		if !fills {
			used -= p.Rows
			continue
		}
		kept += p.Rows
		for j, miss := range p.Missing {
			if miss {
				count[j] += p.Rows
			}
		}
	}
	var cols []string
	for j, c := range mt.Columns {
		if count[j] > 0 {
			cols = append(cols, fmt.Sprintf("%s %d (%s)", mdCode(c), count[j], sharePct(count[j], used)))
		}
	}
	return kept, used, words.AndList(cols)
}

// mainEffectsCaution warns, when the analysis has interactions or
// nonlinear terms, that the imputation models (main effects only) do not
// carry them.
func mainEffectsCaution(dz *design.Design) string {
	lack := termsImputationLacks(dz)
	if lack == "" {
		return ""
	}
	return fmt.Sprintf(" The imputation models hold main effects only (each column linear in the others), while the analysis has %s; as these terms were computed from values imputed without them, their estimates can be biased toward zero (toward no interaction and no curvature).", lack)
}

// termsImputationLacks names the terms the imputation models by chained
// equations do not hold: "the interaction a&b and the nonlinear term
// xq (polynomial)", or "" when every term is linear in the raw columns.
func termsImputationLacks(dz *design.Design) string {
	if dz == nil {
		return ""
	}
	var inter, curves []string
	for _, r := range dz.Records() {
		switch {
		case r.Kind == design.KindInteraction:
			inter = append(inter, mdText(r.Term))
		case r.Log:
			curves = append(curves, mdText(r.Term)+" (log)")
		case r.Sqrt:
			curves = append(curves, mdText(r.Term)+" (square root)")
		case r.Poly > 1:
			curves = append(curves, mdText(r.Term)+" (polynomial)")
		case len(r.Knots) > 0:
			curves = append(curves, mdText(r.Term)+" (spline)")
		}
	}
	var what []string
	if len(inter) > 0 {
		what = append(what, "the interaction"+plural(len(inter))+" "+words.AndList(inter))
	}
	if len(curves) > 0 {
		what = append(what, "the nonlinear term"+plural(len(curves))+" "+words.AndList(curves))
	}
	return words.AndList(what)
}
