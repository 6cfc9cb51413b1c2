package numfmt

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Num formats a number for tables: six significant digits, fixed where
// that reads well.
func Num(x float64) string {
	switch {
	case math.IsNaN(x):
		return "n/a"
	case math.IsInf(x, 1):
		return "inf"
	case math.IsInf(x, -1):
		return "-inf"
	case x == 0:
		return "0"
	}
	a := math.Abs(x)
	if a >= 1e-4 && a < 1e6 {
		s := fmt.Sprintf("%.6g", x)
		if !strings.ContainsAny(s, "e") {
			return s
		}
	}
	return fmt.Sprintf("%.4e", x)
}

// Count formats a count or a sum of weights: a whole number below 2^53
// in full (1000000, not 1.0000e+06), anything else as Num.
func Count(x float64) string {
	if x == 0 {
		return "0"
	}
	if x == math.Trunc(x) && math.Abs(x) < 1<<53 {
		return strconv.FormatFloat(x, 'f', 0, 64)
	}
	return Num(x)
}

// Fixed formats with d decimals.
func Fixed(x float64, d int) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return Num(x)
	}
	s := fmt.Sprintf("%.*f", d, x)
	// A negative value that rounds to zero reads as zero, not "-0.000".
	if strings.HasPrefix(s, "-") && strings.Trim(s[1:], "0.") == "" {
		return s[1:]
	}
	return s
}

// PValue formats a p-value.
func PValue(p float64) string {
	switch {
	case math.IsNaN(p):
		return "n/a"
	case p < 0.0001:
		return "<0.0001"
	}
	return fmt.Sprintf("%.4f", p)
}

// Decimals of each kind of column in the report's tables: estimates and
// their errors and bounds, test statistics, z values, p-values and
// probabilities.
const (
	EstimateDecimals    = 4
	StatisticDecimals   = 3
	ZDecimals           = 2
	PValueDecimals      = 4
	ProbabilityDecimals = 4
)

// Est formats an estimate, a standard error or an interval bound with
// EstimateDecimals decimals; a non-zero value too small to show a digit
// there, or too large to read, is written in scientific notation.
func Est(x float64) string { return fixedOrScientific(x, EstimateDecimals) }

// SummaryDecimals is the decimals of a mean or standard deviation of the
// data (the predictors by outcome category).
const SummaryDecimals = 3

// Summary formats a mean or standard deviation of the data with
// SummaryDecimals decimals, or in scientific notation as Est does: a
// column measured in units of 1e-12 reads 1.027e-12 (7.891e-13), not
// 0.000 (0.000), which looked constant.
func Summary(x float64) string { return fixedOrScientific(x, SummaryDecimals) }

// fixedOrScientific writes x with d decimals; a non-zero value too small
// to show a digit there, or of 1e9 or more, in scientific notation.
func fixedOrScientific(x float64, d int) string {
	a := math.Abs(x)
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return Num(x)
	}
	if (a > 0 && a < 0.5/math.Pow(10, float64(d))) || a >= 1e9 {
		return fmt.Sprintf("%.3e", x)
	}
	return Fixed(x, d)
}

// RatioDecimals is the fewest decimals of an odds ratio (or another ratio
// whose value of no effect is 1) and its limits.
const RatioDecimals = 4

// Ratios formats an odds ratio and its interval limits (or any ratios read
// against 1) with one number of decimals: RatioDecimals, or more while a
// value that is not 1 would not show two significant digits of its
// distance from 1 (a ratio per dollar, 1.0000065, is not written 1.0000),
// at most 12. What is not a finite number reads as in Num.
func Ratios(x ...float64) []string {
	d := RatioDecimals
	for _, v := range x {
		if a := math.Abs(v - 1); a > 0 && !math.IsInf(a, 0) && !math.IsNaN(a) {
			d = max(d, min(12, 1-int(math.Floor(math.Log10(a)))))
		}
	}
	out := make([]string, len(x))
	for i, v := range x {
		out[i] = Fixed(v, d)
	}
	return out
}

// Spaced formats evenly spaced values, a grid from the smallest to the
// largest (the values at which the report predicts), with one number of
// decimals: enough that the step between neighbours shows three
// significant digits (18.0, 29.2, 40.3 for a step of 11.17; -2.024,
// -1.172 for 0.852), at most 12. One value, values of 1e9 or more, a step
// of 0 or not finite: each as Num.
func Spaced(xs []float64) []string {
	out := make([]string, len(xs))
	step := math.Inf(1)
	big := false
	for i, x := range xs {
		if i > 0 {
			step = min(step, math.Abs(x-xs[i-1]))
		}
		big = big || !(math.Abs(x) < 1e9)
	}
	if len(xs) < 2 || big || !(step > 0) || math.IsInf(step, 0) {
		for i, x := range xs {
			out[i] = Num(x)
		}
		return out
	}
	d := min(12, max(0, 2-int(math.Floor(math.Log10(step)))))
	for i, x := range xs {
		out[i] = Fixed(x, d)
	}
	return out
}

// Stat formats a test statistic.
func Stat(x float64) string { return Fixed(x, StatisticDecimals) }

// Z formats a z value.
func Z(x float64) string { return Fixed(x, ZDecimals) }

// Prob formats a probability.
func Prob(x float64) string { return Fixed(x, ProbabilityDecimals) }

// PText writes "p = 0.0123" or "p < 0.0001" for running text, the same
// threshold and digits as PValue.
func PText(p float64) string {
	s := PValue(p)
	if strings.HasPrefix(s, "<") {
		return "p < " + s[1:]
	}
	return "p = " + s
}
