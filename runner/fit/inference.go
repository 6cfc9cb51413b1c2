package fit

import (
	"math"

	"gonum.org/v1/gonum/mathext"
	"gonum.org/v1/gonum/stat/distuv"
)

// Inference is the Wald inference on one parameter at a confidence level:
// the estimate over its standard error, the two-sided p-value and the
// interval estimate -/+ q se. The reference is the normal for a fit of
// one data set and t on the parameter's degrees of freedom (DF) for a fit
// pooled over imputed sets, the reference of Rubin's rules, so that the
// estimates, the odds ratios and a hypothesis on one parameter agree.
type Inference struct {
	Stat, P, Low, High float64
	DF                 float64 // +Inf for the normal reference
}

// Reference names the distribution the p-value and the interval refer
// to: "normal" when DF is infinite, else "t" (on DF degrees of freedom).
func (in Inference) Reference() string {
	if math.IsInf(in.DF, 1) {
		return "normal"
	}
	return "t"
}

// ParamInference is the inference on parameter i (see Inference).
func (r *Result) ParamInference(i int, level float64) Inference {
	g := make([]float64, len(r.Estimates))
	g[i] = 1
	est, se := r.Estimates[i], r.StdErrors[i]
	df := r.referenceDF(g)
	q := TQuantile(0.5+level/2, df)
	stat := est / se
	return Inference{Stat: stat, P: TSurvival2(stat, df), Low: est - q*se, High: est + q*se, DF: df}
}

// referenceDF is the degrees of freedom of the reference of the
// combination g'theta: on a fit of one data set RefDF (G-1 under the
// delete-one-cluster jackknife) for any g, or +Inf (normal); on a pooled
// fit the DF of the parameter g names alone, and for a combination of
// several (the delta-method slope phi_m g_k of a constrained predictor)
// the smallest DF among them, which errs towards wider intervals.
func (r *Result) referenceDF(g []float64) float64 {
	df := math.Inf(1)
	if r.DF == nil {
		if r.RefDF > 0 {
			return r.RefDF
		}
		return df
	}
	for i, v := range g {
		if v != 0 && i < len(r.DF) {
			df = math.Min(df, r.DF[i])
		}
	}
	return df
}

// ReferenceDF is the degrees of freedom of the reference of any quantity
// made from the covariance of a fit of one data set (a contrast, a
// marginal effect, a prediction): RefDF, or +Inf for the normal.
func (r *Result) ReferenceDF() float64 { return r.referenceDF(nil) }

// ReferenceQuantile is the quantile at probability pr of the reference of
// the combination g'theta (see referenceDF).
func (r *Result) ReferenceQuantile(pr float64, g []float64) float64 {
	return TQuantile(pr, r.referenceDF(g))
}

// TSurvival2 is the two-sided p-value of a estimate over its standard error on df degrees of freedom (normal when df is
// +Inf).
func TSurvival2(z, df float64) float64 {
	if math.IsInf(df, 1) || df > 1e7 {
		// erfc, not 1 - Phi: the p-value of z = 9.2 is 3.6e-20, not 0
		// (1 - Phi loses every digit beyond z of about 8).
		return math.Erfc(math.Abs(z) / math.Sqrt2)
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

// FSurvival is P(F(k, df2) > f); with df2 = +Inf, P(chi2(k) > k f): the
// p-value of a Wald test referred to F (pooled over imputed sets, or on a
// delete-one-cluster jackknife covariance).
func FSurvival(f float64, k int, df2 float64) float64 {
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

// NoncentralChi2Survival is P(X > x) for X noncentral chi-squared on k
// degrees of freedom with noncentrality ncp: the Poisson(ncp/2) mixture of
// central chi-squared tails on k + 2j degrees of freedom, summed outward
// from the Poisson mode until the weights left cannot change the sum.
func NoncentralChi2Survival(x, k, ncp float64) float64 {
	switch {
	case math.IsNaN(x) || math.IsNaN(k) || math.IsNaN(ncp) || k <= 0 || ncp < 0:
		return math.NaN()
	case x <= 0:
		return 1
	case ncp == 0:
		return distuv.ChiSquared{K: k}.Survival(x)
	}
	mu := ncp / 2
	mode := math.Floor(mu)
	logw := func(j float64) float64 {
		lg, _ := math.Lgamma(j + 1)
		return -mu + j*math.Log(mu) - lg
	}
	term := func(j float64) (w, t float64) {
		w = math.Exp(logw(j))
		return w, w * distuv.ChiSquared{K: k + 2*j}.Survival(x)
	}
	_, sum := term(mode)
	// Upward: each tail is at most 1 and the weights past j fall at least
	// as fast as the ratio r = mu/(j+2) < 1, so w r/(1-r) bounds the rest.
	for j := mode + 1; ; j++ {
		w, t := term(j)
		sum += t
		r := mu / (j + 2)
		if w*r/(1-r) < 1e-17*sum || j > mode+1e7 {
			break
		}
	}
	// Downward: the tails shrink as j falls and so do the weights, so
	// the terms below one under 1e-17 of the sum add at most j times it.
	for j := mode - 1; j >= 0; j-- {
		_, t := term(j)
		sum += t
		if t*(j+1) < 1e-17*sum {
			break
		}
	}
	return math.Min(1, sum)
}
