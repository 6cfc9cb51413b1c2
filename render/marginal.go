package render

import (
	"ordplan/numfmt"
	"ordplan/runner"
)

// writeMarginalEffects writes the chosen model's average marginal effects.
func writeMarginalEffects(d *doc, r *runner.Result, or *runner.OutcomeResult) {
	res := or.Chosen.Result
	level, _ := confidence(r)
	d.h(3, "Average marginal effects")
	ames, err := res.AverageMarginalEffects(or.FitData, level)
	if err != nil {
		d.p("Not computed: %s.", err)
		return
	}
	d.p("How much the probability of each category changes with each predictor, averaged over the %d rows used%s with the other predictors as observed. For a 0/1 predictor (change \"0 to 1\") the effect is the difference between the probabilities with the predictor set to 1 and set to 0; for any other predictor (change \"per unit\") it is the derivative, the change per unit of the predictor. The effects of one predictor add up to zero over the categories. Standard errors by the delta method; intervals at %s.",
		or.FitData.N(), weightedNote(or), pct(level))
	var rows [][]string
	for _, me := range ames {
		change := "per unit"
		if me.Discrete {
			change = "0 to 1"
		}
		rows = append(rows, []string{me.Predictor, change, me.Category, numfmt.Num(me.Effect), numfmt.Num(me.SE),
			numfmt.Fixed(me.Z, 2), numfmt.PValue(me.P), numfmt.Num(me.Low), numfmt.Num(me.High)})
	}
	d.table([]string{"Predictor", "Change", "Category", "Effect", "Std. error", "z", "p", pct(level) + " low", pct(level) + " high"}, rows)
}

func weightedNote(or *runner.OutcomeResult) string {
	if or.FitData.Weights != nil {
		return " (weighted by the frequency weights)"
	}
	return ""
}
