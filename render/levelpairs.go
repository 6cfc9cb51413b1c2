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
		if assignedByChance(r.Plan, set.Predictor) {
			d.p("The levels of %s were assigned to the units by chance (the plan's dictionary says so): under the trial's conditions these differences are what assigning one level rather than the other changed in the outcome, for units like those that took part, other predictors as observed, provided those were measured before the assignment (one the assignment could have changed would take up part of the difference).", name)
		} else {
			d.p("These are differences between groups in the fitted association, other predictors as observed: they do not say what moving a unit from one level to the other would change.")
		}
		writePairEffects(d, or, set, level)
		writePairsAtPoints(d, r, or, set, level)
		writePairOddsRatios(d, or, set, level)
	}
}

func writePairEffects(d *doc, or *runner.OutcomeResult, set runner.LevelPairSet, level float64) {
	me := set.Effects
	if me.Error != "" {
		d.p("Differences of average marginal effects not computed: %s.", mdText(me.Error))
		return
	}
	if me.Pooling != nil {
		d.p("On imputed data each difference was computed on each of the %d imputed sets (that set's fit and rows) and pooled by Rubin's rules, as the marginal effects are: p-values and intervals use t on the Barnard-Rubin degrees of freedom (df; inf when the sets agree)%s, and FMI is the fraction of missing information.", or.Imputed.M, pooledClusterDF(or.Chosen.Result))
	}
	if clusterRef(or.Chosen.Result) {
		d.p("%s", tNote(or.Chosen.Result, "difference"))
	}
	d.captioned("Differences of average marginal effects between the levels of " + mdText(set.Predictor)).table(pairTable(me, set.EffectsAdjusted, set.Multiplicity, level, refStat(or.Chosen.Result)))
}

// pairTable is the head and rows of a table of differences between pairs
// of levels, with their adjusted p-values (nil: not adjusted) by method;
// stat heads the column of a difference over its error (refStat).
func pairTable(me runner.MarginalSet, adjusted []float64, method string, level float64, stat string) ([]string, [][]string) {
	head := []string{"Change", "Category", "Difference", "Std. error", stat, "p"}
	if adjusted != nil {
		head = append(head, "p, "+pairAdjustment(method))
	}
	head = append(head, pct(level)+" low", pct(level)+" high")
	if me.Pooling != nil {
		head[4] = "t"
		head = append(head, "df", "FMI")
	}
	var rows [][]string
	for e, x := range me.Effects {
		row := []string{x.Change, x.Category, numfmt.Est(x.Effect), numfmt.Est(x.SE), numfmt.Z(x.Z), numfmt.PValue(x.P)}
		if adjusted != nil {
			row = append(row, numfmt.PValue(adjusted[e]))
		}
		row = append(row, numfmt.Est(x.Low), numfmt.Est(x.High))
		if me.Pooling != nil {
			row = append(row, pooledCells(me.Pooling[e])...)
		}
		rows = append(rows, row)
	}
	return head, rows
}

// pointWords says at what point differences between pairs of levels of
// one kind (means or profile) are taken.
func pointWords(kind string) string {
	if kind == "profile" {
		return "at the plan's profile"
	}
	return "at the means"
}

// writePairsAtPoints writes the differences between every pair of levels
// of one predictor at each point the plan's marginal effects ask for (the
// means, the profile).
func writePairsAtPoints(d *doc, r *runner.Result, or *runner.OutcomeResult, set runner.LevelPairSet, level float64) {
	name := mdText(set.Predictor)
	s := -1
	if or.Design != nil {
		s = or.Design.Source(set.Predictor)
	}
	for k, pt := range set.AtPoints {
		me := pt.Effects
		at := pointWords(me.Kind)
		if me.Error != "" {
			d.p("Differences of predicted probabilities between the levels of %s %s not computed: %s.", name, at, mdText(me.Error))
			continue
		}
		held := "every other numeric predictor at its mean over the rows used and every other categorical one at its reference level (not at its shares in the data)"
		switch {
		case me.Kind == "means" && !others(or, s, true):
			held = "every other predictor at its mean over the rows used"
		case me.Kind == "means" && !others(or, s, false):
			held = "every other predictor, all categorical, at its reference level (not at its shares in the data)"
		case me.Kind == "profile":
			held = "the other predictors at the values the plan's profile gives them, those it does not set at their means over the rows used (categorical ones at their reference level)"
		}
		overridden := ""
		if me.Kind == "profile" && r.Analysis != nil {
			overridden = profileLevels(r.Analysis.Inference.Profile, or, s)
		}
		pooled := ""
		if me.Pooling != nil {
			own := "at the same point in every set, each numeric predictor at its mean over the rows of all imputed sets"
			if me.Kind == "profile" {
				own = "at the same point in every set, the numeric predictors the profile does not set at their means over the rows of all imputed sets"
			}
			pooled = fmt.Sprintf(" On imputed data each difference was computed on each of the %d imputed sets (that set's fit, %s) and pooled by Rubin's rules, as the marginal effects %s are: p-values and intervals use t on the Barnard-Rubin degrees of freedom (df; inf when the sets agree)%s, and FMI is the fraction of missing information.", or.Imputed.M, own, at, pooledClusterDF(or.Chosen.Result))
		}
		d.p("**Pairs %s.** For the pair \"a to b\" the difference is the probability of each category predicted for one unit with %s at b less that predicted with %s at a, %s: %s. The pairs from the reference %s are the marginal effects of %s %s above; a pair of two other levels is the difference of their effects against the reference at this point. Standard errors by the delta method on the whole covariance of the model's parameters; intervals at %s, symmetric about the difference.%s%s %s",
			at, name, name, held, mdText(pointExcept(or, me.Point, s)), mdText(set.Levels[0]), name, at, pct(level), overridden, pooled,
			pairFamilyText(set, "the pairs for one category "+at))
		if me.Kind == "means" && r.Analysis != nil && r.Analysis.Errors.Sampling {
			d.p("%s", samplingMeansNote)
		}
		heldSharesNote(d, or, me, "differences")
		if me.Kind == "profile" {
			profileOutsideNote(d, or, "differences")
		}
		if k == 0 {
			change := "and it does not say what moving a unit from one level to the other would change"
			if assignedByChance(r.Plan, set.Predictor) {
				change = "and, the levels having been assigned by chance, it is what assigning one level rather than the other changed for such units under the trial's conditions"
			}
			d.p("A difference at one point compares two groups that share that one covariate profile, in the fitted association: it describes units like that point, not the rows used on average (the average differences above can differ from it in size, even in sign), %s.", change)
		}
		d.captioned("Differences of predicted probabilities " + at + " between the levels of " + name).table(pairTable(me, pt.Adjusted, set.Multiplicity, level, refStat(or.Chosen.Result)))
	}
}

// profileLevels says, for pairs of levels of source s at the plan's
// profile, that the profile's own level of s is not used, and which other
// categorical predictors the profile gives no level (held at their
// reference level); "" when neither.
func profileLevels(profile []plan.ProfileValue, or *runner.OutcomeResult, s int) string {
	if or.Design == nil || s < 0 {
		return ""
	}
	out := ""
	var unstated []string
	for k, src := range or.Design.Sources {
		i := slices.IndexFunc(profile, func(v plan.ProfileValue) bool { return v.Predictor == src.Name })
		switch {
		case k == s && i >= 0:
			name := mdText(src.Name)
			out += fmt.Sprintf(" The profile's own level of %s (%s) is not used here: each pair sets %s to its two levels.", name, mdText(profile[i].Level), name)
		case k != s && i < 0 && src.Cat != nil:
			unstated = append(unstated, mdText(src.Name))
		}
	}
	if len(unstated) > 0 {
		out += fmt.Sprintf(" The profile gives no level of %s: each is held at its reference level (as listed), and the differences can be different at its other levels.", strings.Join(unstated, ", "))
	}
	return out
}

// others reports whether the predictors read other categorical columns
// (categorical) or numeric ones than source s.
func others(or *runner.OutcomeResult, s int, categorical bool) bool {
	if or.Design == nil {
		return !categorical
	}
	for k, src := range or.Design.Sources {
		if k != s && (src.Cat != nil) == categorical {
			return true
		}
	}
	return false
}

// pointExcept writes the raw row of a point without column s (the column
// a comparison sets to each of its levels).
func pointExcept(or *runner.OutcomeResult, x []float64, s int) string {
	parts := pointParts(or, x)
	if s >= 0 && s < len(parts) {
		parts = slices.Delete(parts, s, s+1)
	}
	if len(parts) == 0 {
		return "no other predictor"
	}
	return strings.Join(parts, ", ")
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
		pooled = " Pooled over the imputed sets, t and the intervals refer to t on the smallest Barnard-Rubin degrees of freedom among the parameters involved" + pooledClusterDF(res) + ", as for the odds ratios above."
	}
	above := ""
	if s := or.Design.Source(set.Predictor); s >= 0 && !slices.Contains([]string{design.Sum, design.Successive}, or.Design.Sources[s].Cat.Coding) {
		above = fmt.Sprintf(" The pairs against %s are the odds ratios above.", mdText(set.Levels[0]))
	}
	boundaries := " at each boundary (one value at every boundary when those columns are parallel),"
	if len(res.Categories) == 2 {
		boundaries = " at the one boundary,"
	}
	d.p("The %s of one level against another (\"b against a\"): exp of the difference of the two levels' linear predictors through the columns of %s (whatever their coding),%s with %s intervals and p-values of the Wald %s of its log; the standard error of the log is the delta method's on the whole covariance.%s%s%s %s",
		kind, mdText(set.Predictor), boundaries, pct(level), refStat(res), above, at, pooled, pairFamilyText(set, "the pairs at one boundary"))
	adj := pairAdjustment(set.Multiplicity)
	head := []string{"Change", "Boundary", capitalize(kind), pct(level) + " low", pct(level) + " high", refStat(res), "p"}
	if clusterRef(res) {
		d.p("%s", tNote(res, "log of the ratio"))
	}
	if adj != "" {
		head = append(head, "p, "+adj)
	}
	var rows [][]string
	for _, o := range set.OddsRatios {
		row := append(append([]string{o.Change, boundaryCell(o.Boundary, res.Categories)}, numfmt.Ratios(o.Ratio, o.Low, o.High)...), numfmt.Z(o.Z), numfmt.PValue(o.P))
		if o.Adjusted != nil {
			row = append(row, numfmt.PValue(*o.Adjusted))
		}
		rows = append(rows, row)
	}
	d.captioned(capitalize(kind)+"s between the levels of "+mdText(set.Predictor)).table(head, rows)
}

// levelPairsCSV is the rows of table-level-pairs-OUTCOME.csv: every
// difference of average marginal effects, every difference at a point
// (means, profile) and every odds ratio of a pair of levels.
func levelPairsCSV(or *runner.OutcomeResult) [][]string {
	var rows [][]string
	pooled := or.Imputed != nil
	refDF := "" // the df of t under a cluster-robust covariance (clusterRef)
	if or.Chosen != nil && clusterRef(or.Chosen.Result) {
		refDF = csvDF(or.Chosen.Result.RefDF)
	}
	for _, set := range or.LevelPairs {
		differences := func(kind string, me runner.MarginalSet, adjusted []float64) {
			for e, x := range me.Effects {
				adj := ""
				if adjusted != nil {
					adj = csvNum(adjusted[e])
				}
				df := refDF
				if pooled && e < len(me.Pooling) {
					df = csvDFOf(me.Pooling[e].DF)
				}
				rows = append(rows, []string{set.Predictor, kind, x.Change, x.Category, "", csvNum(x.Effect), csvNum(x.SE), csvNum(x.Z), csvNum(x.P), adj, set.Multiplicity, csvNum(x.Low), csvNum(x.High), df})
			}
		}
		differences("average_marginal_effect", set.Effects, set.EffectsAdjusted)
		for _, pt := range set.AtPoints {
			differences("effect_at_"+pt.Effects.Kind, pt.Effects, pt.Adjusted)
		}
		for _, o := range set.OddsRatios {
			adj := ""
			if o.Adjusted != nil {
				adj = csvNum(*o.Adjusted)
			}
			df := refDF
			if pooled {
				df = csvDF(o.DF)
			}
			rows = append(rows, []string{set.Predictor, "odds_ratio", o.Change, "", strconv.Itoa(o.Boundary), csvNum(o.Ratio), csvNum(o.LogSE), csvNum(o.Z), csvNum(o.P), adj, set.Multiplicity, csvNum(o.Low), csvNum(o.High), df})
		}
	}
	return rows
}

// levelPairsMethods is the methods paragraph's sentence on the pairs of
// levels ("" when the plan asks for none).
func levelPairsMethods(p *plan.Plan, or *runner.OutcomeResult) string {
	var names, points, chance, other []string
	method := ""
	for _, set := range or.LevelPairs {
		if set.Note == "" {
			names = append(names, fmt.Sprintf("%s (%d pairs)", mdText(set.Predictor), set.Family))
			if assignedByChance(p, set.Predictor) {
				chance = append(chance, mdText(set.Predictor))
			} else {
				other = append(other, mdText(set.Predictor))
			}
			method = set.Multiplicity
			for _, pt := range set.AtPoints {
				if at := pointWords(pt.Effects.Kind); !slices.Contains(points, at) {
					points = append(points, at)
				}
			}
		}
	}
	if len(names) == 0 {
		return ""
	}
	s := fmt.Sprintf("Every pair of levels of %s was compared in the chosen model by the difference of the two levels' average marginal effects, each level set in every row used and the predicted probabilities averaged", strings.Join(names, ", "))
	if len(points) > 0 {
		s += fmt.Sprintf(", and by the difference of the probabilities predicted at the two levels with the other predictors held %s, where the marginal effects there are taken", strings.Join(points, " and "))
	}
	s += " (and, under the logit link, by the odds ratio of one level against the other), with delta-method standard errors on the whole covariance of the parameters"
	if or.Imputed != nil {
		s += "; on imputed data the differences were computed on each imputed set and pooled by Rubin's rules"
	}
	if method == plan.MultiplicityNone {
		s += "; their p-values were not adjusted for the number of pairs."
	} else {
		at := ""
		if len(points) > 0 {
			at = ", averaged or at one point"
		}
		s += fmt.Sprintf("; their p-values were adjusted by %s within each predictor's pairs for one category%s (odds ratios: at one boundary).", runner.MultiplicityName(method), at)
	}
	switch {
	case len(chance) == 0:
		return s + " They compare groups in the fitted association and are not effects of changing a unit's level."
	case len(other) == 0:
		return s + fmt.Sprintf(" The levels of %s were assigned to the units by chance, so under the trial's conditions these differences are effects of assigning one level rather than the other, provided the other predictors were measured before the assignment.", words.AndList(chance))
	}
	return s + fmt.Sprintf(" Those of %s, whose levels were assigned to the units by chance, are effects of assigning one level rather than the other under the trial's conditions, provided the other predictors were measured before the assignment; those of %s compare groups in the fitted association and are not effects of changing a unit's level.", words.AndList(chance), words.AndList(other))
}

// assignedByChance reports whether the plan's dictionary says that the
// values of column col were assigned to the units by chance.
func assignedByChance(p *plan.Plan, col string) bool {
	e := p.EntryOf(col)
	return e != nil && e.ByChance
}
