package render

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"ordplan/internal/words"
	"ordplan/render/numfmt"
	"ordplan/runner"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// writeMarginalEffects writes the chosen model's marginal effects of each
// kind the plan asks for (average, at the means, at the plan's profile).
func writeMarginalEffects(d *doc, r *runner.Result, or *runner.OutcomeResult) {
	level, _ := confidence(r)
	sampling := r.Analysis != nil && r.Analysis.Errors.Sampling
	categorical := ""
	if terms := or.TermDescriptions(); len(terms) > 0 {
		categorical = " Effects are per column of the data, not per column of the model: for a categorical predictor (change \"reference to level\") the effect is the difference between the probabilities with the predictor at that level and at its reference level; for a numeric predictor that enters a transformation, polynomial, spline or interaction the derivative goes through every model column it enters."
	}
	for _, set := range or.Marginal {
		switch set.Kind {
		case "average":
			d.h(3, "Average marginal effects")
			d.p("How much the probability of each category changes with each predictor, averaged over the %d rows used%s with the other predictors as observed. For a numeric predictor that takes two values (change %s) the effect is the difference between the probabilities with the predictor set to the higher value and set to the lower; for any other numeric predictor (change %s) it is the derivative, the change per unit of the predictor. The effects of one predictor add up to zero over the categories. Standard errors by the delta method; intervals at %s, symmetric about the effect (the effect plus and minus a quantile times its standard error, since an effect, a change of a probability, can be negative).",
				or.FitData.N(), weightedNote(or, sampling), changeWords(or, set, true), changeWords(or, set, false), pct(level))
			if sampling {
				d.p("%s", samplingAverageNote)
			}
			if categorical != "" {
				d.p("%s", strings.TrimSpace(categorical))
			}
		case "means":
			d.h(3, "Marginal effects at the means")
			at := "every predictor at its mean"
			if or.Design != nil && slices.ContainsFunc(or.Design.Terms, func(t design.Term) bool { return t.Kind == design.KindCategorical }) {
				at = "every numeric predictor at its mean and every categorical one at its reference level, not at its shares in the data"
			}
			d.p("The same effects at one point: %s (%s), a numeric predictor that takes two values changed from the lower to the higher with the others at that point. Standard errors by the delta method; intervals at %s, symmetric about the effect (the effect plus and minus a quantile times its standard error, since an effect, a change of a probability, can be negative).%s", at, mdText(pointList(or, set.Point)), pct(level), categorical)
			heldSharesNote(d, or, set, "effects")
			if sampling {
				d.p("%s", samplingMeansNote)
			}
		case "profile":
			d.h(3, "Marginal effects at the plan's profile")
			d.p("The effects at the point %s (predictors the plan's profile does not set are at their means, categorical ones at their reference level; a numeric predictor that takes two values is changed from the lower to the higher, any other numeric predictor differentiated, at that point). Standard errors by the delta method; intervals at %s, symmetric about the effect (the effect plus and minus a quantile times its standard error, since an effect, a change of a probability, can be negative).%s", mdText(pointList(or, set.Point)), pct(level), categorical)
			heldSharesNote(d, or, set, "effects")
			profileOutsideNote(d, or, "effects")
		}
		if set.Error != "" {
			d.p("Not computed: %s.", mdText(set.Error))
			continue
		}
		for _, n := range set.Notes {
			d.p("%s", mdText(n))
		}
		head := []string{"Predictor", "Change", "Category", "Effect", "Std. error", refStat(or.Chosen.Result), "p", pct(level) + " low", pct(level) + " high"}
		if clusterRef(or.Chosen.Result) {
			d.p("%s", tNote(or.Chosen.Result, "effect"))
		}
		if set.Pooling != nil {
			d.p("On imputed data these effects were computed on each of the %d imputed sets (with that set's fit, and for averages that set's rows) and pooled by Rubin's rules: the effect is the mean over the sets, its standard error the square root of the mean squared delta-method error plus (1 + 1/%d) times the variance between the sets; p-values and intervals use t on the Barnard-Rubin degrees of freedom (df; inf when the sets agree)%s, and FMI is the fraction of missing information.%s",
				or.Imputed.M, or.Imputed.M, pooledClusterDF(or.Chosen.Result), pooledPoint(set))
			head[5] = "t"
			head = append(head, "df", "FMI")
		}
		notEstimableEffects(d, or, set)
		var rows [][]string
		for e, me := range set.Effects {
			change := effectChange(me)
			row := []string{me.Predictor, change, me.Category, numfmt.Est(me.Effect), numfmt.Est(me.SE),
				numfmt.Z(me.Z), numfmt.PValue(me.P), numfmt.Est(me.Low), numfmt.Est(me.High)}
			if set.Pooling != nil {
				row = append(row, pooledCells(set.Pooling[e])...)
			}
			rows = append(rows, row)
		}
		d.table(head, rows)
	}
}

// effectChange is the change a marginal effect's row names: its own
// (runner.sourceEffects: "0 to 1", "1 to 2", "per unit (years)", "north
// to east"), or, from a record without one, "0 to 1" or "per unit".
func effectChange(me fit.MarginalEffect) string {
	switch {
	case me.Change != "":
		return me.Change
	case me.Discrete:
		return "0 to 1"
	}
	return "per unit"
}

// changeWords quotes, for the paragraph above the effects, the changes
// the rows of set name for numeric predictors that take two values
// (discrete) or for the others (per unit), as the rows write them
// (effectChange), each once: "\"0 to 1\"", "\"per unit\" or \"per
// unit (years)\"" (a unit from the data dictionary); the usual words
// when no row has such a change.
func changeWords(or *runner.OutcomeResult, set runner.MarginalSet, discrete bool) string {
	var seen []string
	for _, me := range set.Effects {
		if c := effectChange(me); me.Discrete == discrete && !slices.Contains(seen, c) && !categoricalSource(or, me.Predictor) {
			seen = append(seen, c)
		}
	}
	if len(seen) == 0 {
		seen = []string{"per unit"}
		if discrete {
			seen = []string{"0 to 1"}
		}
	}
	return mdText(words.OrList(words.Each(seen, func(c string) string { return `"` + c + `"` })))
}

// categoricalSource reports whether the outcome's design reads column
// name as a categorical predictor.
func categoricalSource(or *runner.OutcomeResult, name string) bool {
	if or.Design == nil {
		return false
	}
	s := or.Design.Source(name)
	return s >= 0 && or.Design.Sources[s].Cat != nil
}

// notEstimableEffects says, above a table of marginal effects some of
// whose errors are not available because the chosen model's cluster-robust
// covariance cannot estimate some of its parameters (fit.NotEstimable), why
// those cells are n/a: an average runs over every row used, the rows of a
// level met in one cluster or of a cluster's own effect among them, so it
// rests on those parameters even for a predictor whose own estimate has a
// standard error.
func notEstimableEffects(d *doc, or *runner.OutcomeResult, set runner.MarginalSet) {
	res := or.Chosen.Result
	if res == nil || res.NotEstimable == nil || !slices.ContainsFunc(set.Effects, func(me fit.MarginalEffect) bool { return math.IsNaN(me.SE) }) {
		return
	}
	if set.Kind == "average" {
		d.p("The effects marked n/a have no standard error, test or interval because they depend on parameters of %s whose clustered standard errors are not estimable (see the warning under the chosen model): an average runs over every row used, the rows those parameters describe (a level met in one cluster, a cluster's own effect) among them, so it rests on those parameters even for a predictor whose own estimate has a standard error. The effects themselves stand.", or.Chosen.ID)
		return
	}
	d.p("The effects marked n/a have no standard error, test or interval because at this point they depend on parameters of %s whose clustered standard errors are not estimable (see the warning under the chosen model). The effects themselves stand.", or.Chosen.ID)
}

// pooledCells are the df and FMI cells of an effect pooled over imputed
// sets.
func pooledCells(pp runner.PoolingParam) []string {
	df := math.Inf(1)
	if pp.DF != nil {
		df = *pp.DF
	}
	return []string{dfCell(df), numfmt.Fixed(pp.FMI, 3)}
}

// pointList writes the raw row of marginal effects at one point: each
// column the predictors read, categorical ones at a level.
func pointList(or *runner.OutcomeResult, x []float64) string {
	return strings.Join(pointParts(or, x), ", ")
}

// pointParts is pointList's "column = value" for each column in order.
func pointParts(or *runner.OutcomeResult, x []float64) []string {
	var parts []string
	names := or.FitData.Predictors
	var cat []bool
	if or.Design != nil {
		names = nil
		for _, s := range or.Design.Sources {
			names = append(names, s.Name)
			cat = append(cat, s.Cat != nil)
		}
	}
	for k, p := range names {
		if k >= len(x) {
			continue
		}
		if k < len(cat) && cat[k] {
			parts = append(parts, fmt.Sprintf("%s = %s", p, words.Level(or.Design.Sources[k].Cat.Levels[int(x[k])])))
			continue
		}
		parts = append(parts, fmt.Sprintf("%s = %s", p, numfmt.Num(x[k])))
	}
	return parts
}

func weightedNote(or *runner.OutcomeResult, sampling bool) string {
	switch {
	case or.FitData.Weights == nil:
		return ""
	case sampling:
		return " (weighted by the sampling weights)"
	}
	return " (weighted by the frequency weights)"
}

// samplingAverageNote and samplingMeansNote say what the standard errors
// of effects averaged over, or taken at the means of, the rows leave out
// under sampling weights.
const (
	samplingAverageNote = "Under sampling weights these standard errors carry only the uncertainty of the estimated parameters (through their sandwich covariance): the average is taken over this sample's rows as if they were the population, so the sampling variation of the average itself is left out and the errors understate the uncertainty of a population average."
	samplingMeansNote   = "Under sampling weights these standard errors carry only the uncertainty of the estimated parameters (through their sandwich covariance): the weighted means are taken as fixed, so their sampling variation is left out."
)

// pooledPoint says where the point of pooled effects at one point comes
// from.
func pooledPoint(set runner.MarginalSet) string {
	if set.Point == nil {
		return ""
	}
	return " The point is the same in every set: each numeric predictor the plan's profile does not set is at its mean over the rows of all imputed sets."
}

// profileOutsideNote warns, beside the tables at the plan's profile,
// that the profile lies outside the population the model was fitted to
// (runner.OutcomeResult.ProfileOutside, the reasons new rows get); what
// names what the table holds. Nothing when it lies inside.
func profileOutsideNote(d *doc, or *runner.OutcomeResult, what string) {
	if len(or.ProfileOutside) == 0 {
		return
	}
	d.p("**Outside the population fitted:** the plan's profile lies outside the population the model was fitted to: %s. The %s at it rest there on the model's form alone, and their intervals do not show that; read them with care.",
		mdText(strings.Join(or.ProfileOutside, "; ")), what)
}

// heldSharesNote says, beside effects (what: "effects", "differences")
// taken at the one point of set (at the means, at the plan's profile),
// which columns taking two values that point holds at their mean, for a
// 0/1 column the share of rows at 1 (runner.OutcomeResult.SharesAt): a value no row has,
// so the effects there are of no one who exists and, the model not being
// linear, not the mix of those at 0 and at 1 either. It names the average
// marginal effects as the reading to prefer, and how to ask for them when
// the plan does not. Nothing when the point holds no such column.
func heldSharesNote(d *doc, or *runner.OutcomeResult, set runner.MarginalSet, what string) {
	names, held := or.SharesAt(set.Point)
	if len(names) == 0 {
		return
	}
	cols, it, at, zeroOne := heldColumns(or, names)
	average := "The average marginal effects above"
	switch i := slices.IndexFunc(or.Marginal, func(m runner.MarginalSet) bool { return m.Kind == "average" }); {
	case what == "differences":
		average = "The average differences above"
	case i < 0:
		average = "Average marginal effects (" + mdCode("inference.marginal_effects: [average]") + ", the default, which this plan leaves out)"
	case i > slices.IndexFunc(or.Marginal, func(m runner.MarginalSet) bool { return m.Kind == set.Kind }):
		average = "The average marginal effects below"
	}
	own, each, kind := " (the effect of such a column itself sets it to 0 and to 1 at this point)", "effect", "0/1 predictor and wherever 0/1 columns would otherwise be held at a share"
	if !zeroOne {
		own, kind = " (the effect of such a column itself sets it to its lower and its higher value at this point)", "predictor taking two values and wherever such columns would otherwise be held at their mean"
	}
	if what == "differences" {
		own, each = "", "difference"
	}
	d.p("At this point the %s held at %s (%s): no row of the data has such a value, so these %s are those of no one who exists and, the model not being linear, not the mix of the %s %s in those shares either%s. %s, each row's own %s at its own values averaged over the rows used, are the reading to prefer for a %s.",
		cols, it, mdText(strings.Join(held, ", ")), what, what, at, own, average, each, kind)
}
