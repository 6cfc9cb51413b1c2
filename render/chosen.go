package render

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"

	"ordplan/render/numfmt"
	"ordplan/runner"
)

// writeChosen writes the estimates of the chosen model.
func writeChosen(d *doc, r *runner.Result, or *runner.OutcomeResult) {
	res := or.Chosen.Result
	level, z := confidence(r)
	d.h(3, "The chosen model: "+or.Chosen.ID)
	d.p("Log-likelihood %s, %d parameters, AIC %s, BIC %s, %s observations. Linear predictor of boundary m: L_m = cut_m - x'b_m; a positive slope moves the outcome towards higher categories.",
		numfmt.Fixed(res.LogLik, 4), res.NParams, numfmt.Fixed(res.AIC, 3), numfmt.Fixed(res.BIC, 3), numfmt.Num(res.NObs))
	var rows [][]string
	for i, n := range res.ParamNames {
		est, se := res.Estimates[i], res.StdErrors[i]
		zz := est / se
		rows = append(rows, []string{ParamLabel(res, n), numfmt.Est(est), numfmt.Est(se), numfmt.Z(zz),
			numfmt.PValue(2 * distuv.UnitNormal.Survival(math.Abs(zz))), numfmt.Est(est - z*se), numfmt.Est(est + z*se)})
	}
	d.captioned("Estimates of the chosen model, "+or.Chosen.ID).table([]string{"Parameter", "Estimate", "Std. error", "z", "p", pct(level) + " low", pct(level) + " high"}, rows)
}

// pct writes a confidence level as a percentage: "95%".
func pct(level float64) string { return fmt.Sprintf("%g%%", 100*level) }
