package impute

import (
	"math"

	"gonum.org/v1/gonum/mathext"
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
	// The regularized incomplete beta of the upper tail itself, not 1 -
	// the CDF, which loses the digits of a small p-value.
	d1 := float64(k)
	return mathext.RegIncBeta(df2/2, d1/2, df2/(df2+d1*f))
}
