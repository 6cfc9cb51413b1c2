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

// TSurvival2 is the two-sided p-value of a pooled estimate over its
// pooled standard error on df degrees of freedom (normal when df is
// +Inf).
func TSurvival2(z, df float64) float64 {
	if math.IsInf(df, 1) || df > 1e7 {
		return 2 * distuv.UnitNormal.Survival(math.Abs(z))
	}
	return 2 * distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Survival(math.Abs(z))
}

// TQuantile is the quantile at probability pr of t on df degrees of
// freedom (the normal's when df is +Inf).
func TQuantile(pr, df float64) float64 {
	if math.IsInf(df, 1) || df > 1e7 {
		return distuv.UnitNormal.Quantile(pr)
	}
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Quantile(pr)
}
