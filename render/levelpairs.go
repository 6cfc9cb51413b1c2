package render

import (
	"fmt"
	"slices"
	"strconv"
	"strings"

	"ordplan/plan"
	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/design"
)

// pairAdjustment names a correction of inference.level_pairs in a table
// head ("" for none).
func pairAdjustment(method string) string {
	return map[string]string{plan.MultiplicityHolm: "Holm", plan.MultiplicityBH: "Benjamini-Hochberg"}[method]
}

// pairFamilyText says how the p-values of one predictor's pairs were
// adjusted, or that they were not.
func pairFamilyText(set runner.LevelPairSet, of string) string {
	if set.Multiplicity == plan.MultiplicityNone {
		return fmt.Sprintf("The p-values are not adjusted for the %d pairs (the plan's inference.level_pairs.multiplicity is none): with many pairs some fall below any threshold by chance.", set.Family)
	}
	return fmt.Sprintf("The p-values are also given adjusted for the %d pairs by %s, within %s; the raw p-values are beside.", set.Family, runner.MultiplicityName(set.Multiplicity), of)
}

// writeLevelPairs writes the comparisons between every pair of levels of
// the categorical predictors of the plan's inference.level_pairs.
func writeLevelPairs(d *doc, r *runner.Result, or *runner.OutcomeResult) {
	level, _ := confidence(r)
	sampling := r.Analysis != nil && r.Analysis.Errors.Sampling
	for _, set := range or.LevelPairs {
		name := mdText(set.Predictor)
		d.h(3, "Pairs of levels of "+name)
		if set.Note != "" {
			d.p("Not compared: %s.", mdText(set.Note))
			continue
		}
		shown := ""
		if slices.ContainsFunc(or.Marginal, func(m runner.MarginalSet) bool { return m.Kind == "average" }) {
			shown = fmt.Sprintf(" The first %d pairs, from the reference, are the average marginal effects of %s above.", len(set.Levels)-1, name)
		}
		d.p("Every pair of the %d levels of %s (%d pairs), in the chosen model. For the pair \"a to b\" the effect is the probability of each category with %s set to b in every row used, less the probability with it set to a, averaged over the %d rows used%s with the other predictors as observed: the difference of the two levels' average marginal effects against the reference level %s, computed on the same rows.%s Standard errors by the delta method on the whole covariance of the model's parameters (the two levels' effects are estimated together and are not independent, so the error of their difference is not that of independent estimates); intervals at %s, symmetric about the effect. %s",
			len(set.Levels), name, set.Family, name, or.FitData.N(), weightedNote(or, sampling), mdText(set.Levels[0]), shown, pct(level),
			pairFamilyText(set, "the pairs for one category"))
		if sampling {
			d.p("%s", samplingAverageNote)
		}
		d.p("These are differences between groups in the fitted association, other predictors as observed: they do not say what moving a unit from one level to the other would change.")
		writePairEffects(d, or, set, level)
		writePairOddsRatios(d, or, set, level)
	}
}

func writePairEffects(d *doc, or *runner.OutcomeResult, set runner.LevelPairSet, level float64) {
	me := set.Effects
	if me.Error != "" {
		d.p("Differences of average marginal effects not computed: %s.", mdText(me.Error))
		return
	}
	adj := pairAdjustment(set.Multiplicity)
	head := []string{"Change", "Category", "Difference", "Std. error", "z", "p"}
	if set.EffectsAdjusted != nil {
		head = append(head, "p, "+adj)
	}
	head = append(head, pct(level)+" low", pct(level)+" high")
	if me.Pooling != nil {
		d.p("On imputed data each difference was computed on each of the %d imputed sets (that set's fit and rows) and pooled by Rubin's rules, as the marginal effects are: p-values and intervals use t on the Barnard-Rubin degrees of freedom (df; inf when the sets agree), and FMI is the fraction of missing information.", or.Imputed.M)
		head[4] = "t"
		head = append(head, "df", "FMI")
	}
	var rows [][]string
	for e, x := range me.Effects {
		row := []string{x.Change, x.Category, numfmt.Est(x.Effect), numfmt.Est(x.SE), numfmt.Z(x.Z), numfmt.PValue(x.P)}
		if set.EffectsAdjusted != nil {
			row = append(row, numfmt.PValue(set.EffectsAdjusted[e]))
		}
		row = append(row, numfmt.Est(x.Low), numfmt.Est(x.High))
		if me.Pooling != nil {
			row = append(row, pooledCells(me.Pooling[e])...)
		}
		rows = append(rows, row)
	}
	d.captioned("Differences of average marginal effects between the levels of "+mdText(set.Predictor)).table(head, rows)
}

func writePairOddsRatios(d *doc, or *runner.OutcomeResult, set runner.LevelPairSet, level float64) {
	if set.OddsRatioNote != "" {
		d.p("Odds ratios between the levels not computed: %s.", mdText(set.OddsRatioNote))
		return
	}
	if len(set.OddsRatios) == 0 {
		return
	}
	res := or.Chosen.Result
	kind := set.OddsRatios[0].Kind
	where := set.OddsRatios[0].HoldsAt
	at := ""
	if where != "" {
		at = fmt.Sprintf(" They hold where the terms %s interacts with have their columns at 0 (%s).", mdText(set.Predictor), mdText(where))
	}
	pooled := ""
	if res.DF != nil {
		pooled = " Pooled over the imputed sets, z and the intervals refer to t on the smallest Barnard-Rubin degrees of freedom among the parameters involved, as for the odds ratios above."
	}
	above := ""
	if s := or.Design.Source(set.Predictor); s >= 0 && !slices.Contains([]string{design.Sum, design.Successive}, or.Design.Sources[s].Cat.Coding) {
		above = fmt.Sprintf(" The pairs against %s are the odds ratios above.", mdText(set.Levels[0]))
	}
	d.p("The %s of one level against another (\"b against a\"): exp of the difference of the two levels' linear predictors through the columns of %s (whatever their coding), at each boundary (one value at every boundary when those columns are parallel), with %s intervals and p-values of the Wald z of its log; the standard error of the log is the delta method's on the whole covariance.%s%s%s %s",
		kind, mdText(set.Predictor), pct(level), above, at, pooled, pairFamilyText(set, "the pairs at one boundary"))
	adj := pairAdjustment(set.Multiplicity)
	head := []string{"Change", "Boundary", capitalize(kind), pct(level) + " low", pct(level) + " high", "z", "p"}
	if adj != "" {
		head = append(head, "p, "+adj)
	}
	var rows [][]string
	for _, o := range set.OddsRatios {
		b := "every boundary"
		if o.Boundary > 0 {
			b = fmt.Sprintf("%d (%s/%s)", o.Boundary, res.Categories[o.Boundary-1], res.Categories[o.Boundary])
		}
		row := []string{o.Change, b, numfmt.Fixed(o.Ratio, 4), numfmt.Fixed(o.Low, 4), numfmt.Fixed(o.High, 4), numfmt.Z(o.Z), numfmt.PValue(o.P)}
		if o.Adjusted != nil {
			row = append(row, numfmt.PValue(*o.Adjusted))
		}
		rows = append(rows, row)
	}
	d.captioned(capitalize(kind)+"s between the levels of "+mdText(set.Predictor)).table(head, rows)
}

// levelPairsCSV is the rows of table-level-pairs-OUTCOME.csv: every
// difference of average marginal effects and every odds ratio of a pair of
// levels.
func levelPairsCSV(or *runner.OutcomeResult) [][]string {
	var rows [][]string
	pooled := or.Imputed != nil
	for _, set := range or.LevelPairs {
		for e, x := range set.Effects.Effects {
			adj := ""
			if set.EffectsAdjusted != nil {
				adj = csvNum(set.EffectsAdjusted[e])
			}
			df := ""
			if pooled && e < len(set.Effects.Pooling) && set.Effects.Pooling[e].DF != nil {
				df = csvNum(*set.Effects.Pooling[e].DF)
			}
			rows = append(rows, []string{set.Predictor, "average_marginal_effect", x.Change, x.Category, "", csvNum(x.Effect), csvNum(x.SE), csvNum(x.Z), csvNum(x.P), adj, set.Multiplicity, csvNum(x.Low), csvNum(x.High), df})
		}
		for _, o := range set.OddsRatios {
			adj := ""
			if o.Adjusted != nil {
				adj = csvNum(*o.Adjusted)
			}
			rows = append(rows, []string{set.Predictor, "odds_ratio", o.Change, "", strconv.Itoa(o.Boundary), csvNum(o.Ratio), csvNum(o.LogSE), csvNum(o.Z), csvNum(o.P), adj, set.Multiplicity, csvNum(o.Low), csvNum(o.High), ""})
		}
	}
	return rows
}

// levelPairsMethods is the methods paragraph's sentence on the pairs of
// levels ("" when the plan asks for none).
func levelPairsMethods(or *runner.OutcomeResult) string {
	var names []string
	method := ""
	for _, set := range or.LevelPairs {
		if set.Note == "" {
			names = append(names, fmt.Sprintf("%s (%d pairs)", mdText(set.Predictor), set.Family))
			method = set.Multiplicity
		}
	}
	if len(names) == 0 {
		return ""
	}
	s := fmt.Sprintf("Every pair of levels of %s was compared in the chosen model by the difference of the two levels' average marginal effects, each level set in every row used and the predicted probabilities averaged (and, under the logit link, by the odds ratio of one level against the other), with delta-method standard errors on the whole covariance of the parameters", strings.Join(names, ", "))
	if or.Imputed != nil {
		s += "; on imputed data the differences were computed on each imputed set and pooled by Rubin's rules"
	}
	if method == plan.MultiplicityNone {
		s += "; their p-values were not adjusted for the number of pairs."
	} else {
		s += fmt.Sprintf("; their p-values were adjusted by %s within each predictor's pairs for one category (odds ratios: at one boundary).", runner.MultiplicityName(method))
	}
	return s + " They compare groups in the fitted association and are not effects of changing a unit's level."
}
