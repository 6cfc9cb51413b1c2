package impute

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// fSurvival is P(F(k, df2) > f); with df2 = +Inf, P(chi2(k) > k f).
func fSurvival(f float64, k int, df2 float64) float64 {
	if math.IsNaN(f) {
		return math.NaN()
	}
	if f <= 0 {
		return 1
	}
	if math.IsInf(df2, 1) || df2 > 1e7 {
		return distuv.ChiSquared{K: float64(k)}.Survival(float64(k) * f)
	}
	return distuv.F{D1: float64(k), D2: df2}.Survival(f)
}
