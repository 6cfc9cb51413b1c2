package design

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"
)

// buildNumeric freezes the constants of a numeric term from the sample.
func (d *Design) buildNumeric(t *Term, column string, v, w []float64, lines []int, fz *TermRecord) error {
	t.Kind = KindNumeric
	tr := t.Transform
	if fz != nil {
		fz.thaw(t)
		t.Columns = numericNames(t.Name, tr, len(t.Knots))
		return nil
	}
	u := make([]float64, len(v))
	for i, x := range v {
		y, msg := pre(tr, x)
		if msg != "" {
			line := 0
			if lines != nil {
				line = lines[i]
			}
			more := 0 // the other rows the transformation cannot take
			for _, z := range v[i+1:] {
				if _, m := pre(tr, z); m != "" {
					more++
				}
			}
			if more > 0 {
				msg += fmt.Sprintf("; %d more rows used have such values", more)
			}
			return &Error{Key: t.Key, Line: line, Column: column, Msg: msg}
		}
		u[i] = y
	}
	switch tr.Centre {
	case "mean":
		t.Mean, _ = meanSD(u, w)
		for i := range u {
			u[i] -= t.Mean
		}
	case "value":
		for i := range u {
			u[i] -= tr.CentreAt
		}
	}
	if tr.Scale {
		_, t.SD = meanSD(u, w) // the spread around the sample mean
		if !(t.SD > 0) {
			return &Error{Key: t.Key, Column: column, Msg: "cannot scale by the standard deviation: the column takes one value in the rows used"}
		}
		for i := range u {
			u[i] /= t.SD
		}
	}
	switch {
	case tr.Poly > 0:
		if distinct(u) <= tr.Poly {
			return &Error{Key: t.Key, Column: column, Msg: fmt.Sprintf("a polynomial of degree %d needs more than %d distinct values; the rows used have %d", tr.Poly, tr.Poly, distinct(u))}
		}
		if !tr.PolyRaw {
			t.Alpha, t.Norm2 = orthoPoly(u, w, tr.Poly)
		}
	case tr.Spline():
		t.Knots = slices.Clone(tr.Knots)
		if tr.Quantiles != nil {
			t.Knots = make([]float64, len(tr.Quantiles))
			for j, p := range tr.Quantiles {
				t.Knots[j] = quantile(u, w, p)
			}
		}
		for j := 1; j < len(t.Knots); j++ {
			if !(t.Knots[j] > t.Knots[j-1]) {
				return &Error{Key: t.Key, Column: column, Msg: fmt.Sprintf("the spline knots %s are not strictly increasing on the transformed values (too few distinct values for the quantiles asked)", numList(t.Knots))}
			}
		}
		if tr.Quantiles == nil {
			if msg := knotsOutside(t.Name, t.Knots, u, tr); msg != "" {
				return &Error{Key: t.Key, Column: column, Msg: msg}
			}
		}
	}
	t.Columns = numericNames(t.Name, tr, len(t.Knots))
	return nil
}

// knotsOutside refuses spline knots given as values that lie outside the
// range of the values u of the rows used (the values the knots apply to,
// after log, sqrt, centring and scaling): beyond the data an interior
// knot's basis column can be 0 in every row, or the basis linear there,
// and the curve bends where no row is. It names the knots, the outlying ones
// and the data's range, or returns "".
func knotsOutside(name string, knots, u []float64, tr Transform) string {
	if len(u) == 0 {
		return ""
	}
	lo, hi := slices.Min(u), slices.Max(u)
	var out []float64
	for _, k := range knots {
		if k < lo || k > hi {
			out = append(out, k)
		}
	}
	if len(out) == 0 {
		return ""
	}
	scale := ""
	if tr.Log || tr.Sqrt || tr.Centre != "" || tr.Scale {
		scale = " (on the transformed values, where the knots apply)"
	}
	which := "knot " + fmtNum(out[0]) + " lies"
	if len(out) > 1 {
		which = "knots " + strings.Trim(numList(out), "[]") + " lie"
	}
	// The range in 6 significant digits, rounded inwards so that knots
	// written as printed lie inside it.
	round := func(x float64, up bool) string {
		if x == 0 || math.IsInf(x, 0) || math.IsNaN(x) {
			return fmtNum(x)
		}
		p := math.Pow(10, math.Floor(math.Log10(math.Abs(x)))-5)
		if up {
			return fmt.Sprintf("%.6g", math.Ceil(x/p)*p)
		}
		return fmt.Sprintf("%.6g", math.Floor(x/p)*p)
	}
	from, to := round(lo, true), round(hi, false)
	return fmt.Sprintf("the knots %s of spline term %q are not all within the range of the rows used, %s to %s%s: %s outside it: a knot beyond the data puts a bend of the curve where no row is, and can leave a basis column 0 in every row or a copy of the straight line; give knots from %s to %s, or knots at quantiles of the data",
		numList(knots), name, from, to, scale, which, from, to)
}

func distinct(u []float64) int {
	s := slices.Clone(u)
	slices.Sort(s)
	return len(slices.Compact(s))
}

// pre applies log or sqrt to one raw value; the message says why it
// cannot, with the advice for a data row (undefinedAt).
func pre(tr Transform, x float64) (float64, string) {
	y, why, advice := undefinedAt(tr, x)
	if advice != "" {
		why += " (" + advice + ")"
	}
	return y, why
}

// undefinedAt applies log or sqrt to one raw value; why says why it
// cannot ("" when it can), advice what a plan may change for a data row
// ("" when nothing is to say).
func undefinedAt(tr Transform, x float64) (y float64, why, advice string) {
	switch {
	case tr.Log:
		y := x + tr.Shift
		if !(y > 0) {
			if tr.Shift != 0 {
				return 0, fmt.Sprintf("%s is undefined: the value plus the shift is not positive", Transform{Log: true, Shift: tr.Shift}.ValueText(fmtNum(x))), ""
			}
			if x < 0 {
				return 0, fmt.Sprintf("log(%s) is undefined: the value is negative, and a logarithm needs positive values", fmtNum(x)), ""
			}
			return 0, fmt.Sprintf("log(%s) is undefined: the value is not positive", fmtNum(x)), "state a shift for zeros: log: {shift: 1}"
		}
		return math.Log(y), "", ""
	case tr.Sqrt:
		if x < 0 {
			return 0, fmt.Sprintf("sqrt(%s) is undefined: the value is negative", fmtNum(x)), ""
		}
		return math.Sqrt(x), "", ""
	}
	return x, "", ""
}

// UndefinedError is a raw value that a term's transformation cannot take
// (the log of a value not positive, the square root of a negative one):
// the design row of that row cannot be made. Why says so; Advice is what
// a plan may change when the row is one of the data's.
type UndefinedError struct {
	Column, Why, Advice string
}

func (e *UndefinedError) Error() string {
	s := fmt.Sprintf("column %q: %s", e.Column, e.Why)
	if e.Advice != "" {
		s += " (" + e.Advice + ")"
	}
	return s
}

// Reason is the error without the advice: why the row's design cannot be
// made, for a row no plan change is meant for (a new row to predict).
func (e *UndefinedError) Reason() string {
	return fmt.Sprintf("column %q: %s", e.Column, e.Why)
}

// dpre is the derivative of pre at x.
func dpre(tr Transform, x float64) float64 {
	switch {
	case tr.Log:
		return 1 / (x + tr.Shift)
	case tr.Sqrt:
		if x == 0 {
			return math.Inf(1)
		}
		return 0.5 / math.Sqrt(x)
	}
	return 1
}

// numericColumns gives the columns of a numeric term at raw value x, and
// their derivatives in x when der is not nil.
func (t *Term) numericColumns(x float64, out, der []float64) error {
	tr := t.Transform
	u, why, advice := undefinedAt(tr, x)
	if why != "" {
		return &UndefinedError{Why: why, Advice: advice}
	}
	du := dpre(tr, x)
	switch tr.Centre {
	case "mean":
		u -= t.Mean
	case "value":
		u -= tr.CentreAt
	}
	if tr.Scale {
		u /= t.SD
		du /= t.SD
	}
	switch {
	case tr.Poly > 0:
		if tr.PolyRaw {
			p := 1.0
			for k := 1; k <= tr.Poly; k++ {
				if der != nil {
					der[k-1] = float64(k) * p * du
				}
				p *= u
				out[k-1] = p
			}
			return nil
		}
		orthoEval(u, t.Alpha, t.Norm2, out, der)
		if der != nil {
			for k := range der {
				der[k] *= du
			}
		}
	case t.Knots != nil:
		splineEval(u, t.Knots, out, der)
		if der != nil {
			for k := range der {
				der[k] *= du
			}
		}
	default:
		out[0] = u
		if der != nil {
			der[0] = du
		}
	}
	return nil
}

// orthoPoly computes the three-term recurrence of polynomials orthogonal
// in the weighted sample u: p_0 = 1, p_1 = u - a_0,
// p_{k+1} = (u - a_k) p_k - (n_k / n_{k-1}) p_{k-1}, with n_k the weighted
// sum of p_k^2. It returns a_0..a_{deg-1} and n_0..n_deg.
func orthoPoly(u, w []float64, deg int) ([]float64, []float64) {
	N := len(u)
	alpha := make([]float64, deg)
	norm2 := make([]float64, deg+1)
	prev := make([]float64, N)
	cur := make([]float64, N)
	for i := range cur {
		cur[i] = 1
	}
	for k := 0; k <= deg; k++ {
		s, su := 0.0, 0.0
		for i, x := range u {
			wi := weight(w, i)
			s += wi * cur[i] * cur[i]
			su += wi * x * cur[i] * cur[i]
		}
		norm2[k] = s
		if k == deg {
			break
		}
		alpha[k] = su / s
		beta := 0.0
		if k > 0 {
			beta = norm2[k] / norm2[k-1]
		}
		next := make([]float64, N)
		for i, x := range u {
			next[i] = (x-alpha[k])*cur[i] - beta*prev[i]
		}
		prev, cur = cur, next
	}
	return alpha, norm2
}

// orthoEval evaluates the normalized orthogonal polynomials 1..deg at u
// (each p_k / sqrt(n_k)) and their derivatives in u.
func orthoEval(u float64, alpha, norm2 []float64, out, der []float64) {
	deg := len(alpha)
	pPrev, p := 0.0, 1.0
	dPrev, dp := 0.0, 0.0
	for k := 0; k < deg; k++ {
		beta := 0.0
		if k > 0 {
			beta = norm2[k] / norm2[k-1]
		}
		pNext := (u-alpha[k])*p - beta*pPrev
		dNext := p + (u-alpha[k])*dp - beta*dPrev
		pPrev, p = p, pNext
		dPrev, dp = dp, dNext
		s := math.Sqrt(norm2[k+1])
		out[k] = p / s
		if der != nil {
			der[k] = dp / s
		}
	}
}

// splineEval evaluates the natural cubic spline basis with knots
// xi_1 < ... < xi_K at u: the column u, then for k = 1..K-2 the columns
// (d_k(u) - d_{K-1}(u)) / (xi_K - xi_1)^2 with
// d_k(u) = ((u - xi_k)_+^3 - (u - xi_K)_+^3) / (xi_K - xi_k).
// Each column is a cubic between knots, linear beyond the boundary knots,
// with continuous second derivative. der gets the derivatives in u.
func splineEval(u float64, knots []float64, out, der []float64) {
	K := len(knots)
	xk := knots[K-1]
	span2 := (knots[K-1] - knots[0]) * (knots[K-1] - knots[0])
	pos := func(x float64) float64 { return math.Max(x, 0) }
	dk := func(k int) (float64, float64) {
		a, b := pos(u-knots[k]), pos(u-xk)
		den := xk - knots[k]
		return (a*a*a - b*b*b) / den, 3 * (a*a - b*b) / den
	}
	out[0] = u
	if der != nil {
		der[0] = 1
	}
	last, dlast := dk(K - 2)
	for k := 0; k < K-2; k++ {
		v, dv := dk(k)
		out[k+1] = (v - last) / span2
		if der != nil {
			der[k+1] = (dv - dlast) / span2
		}
	}
}

// quantile is the weighted sample quantile at probability p: with integer
// weights, the quantile of the sample in which each row is repeated
// weight times, interpolating between order statistics at position
// p (n - 1) (n the total weight).
func quantile(u, w []float64, p float64) float64 {
	idx := make([]int, len(u))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return u[idx[a]] < u[idx[b]] })
	tot := 0.0
	for i := range u {
		tot += weight(w, i)
	}
	h := p * (tot - 1)
	lo := math.Floor(h)
	at := func(pos float64) float64 { // value of order statistic number pos (0-based)
		c := 0.0
		for _, i := range idx {
			c += weight(w, i)
			if pos < c {
				return u[i]
			}
		}
		return u[idx[len(idx)-1]]
	}
	a, b := at(lo), at(lo+1)
	return a + (h-lo)*(b-a)
}

func numList(xs []float64) string {
	s := make([]string, len(xs))
	for i, x := range xs {
		s[i] = fmtNum(x)
	}
	return "[" + strings.Join(s, ", ") + "]"
}

// ZeroAt gives the raw value of numeric term t's data column at which
// every column of the term is 0, and whether there is one. The value u
// after log/sqrt, centring and scaling is 0 for a plain term, a raw
// polynomial and a natural spline (whose first column is u); there the
// other columns of a raw polynomial are 0, and those of a spline when u =
// 0 is at or below its first knot (each truncated cube is 0 at or below
// its knot). An orthogonal polynomial's first column is 0 at u = Alpha_0
// only, where the second is not (-Norm2_1 / Norm2_0 / sqrt(Norm2_2)), so
// only one of degree 1 has such a value. u is turned back into the raw
// value: times SD, plus the centre, then exp less the shift or the square
// (no raw value when a square root would be negative).
func (t *Term) ZeroAt() (float64, bool) {
	tr := t.Transform
	u := 0.0
	switch {
	case tr.Poly > 0 && !tr.PolyRaw:
		if tr.Poly > 1 || len(t.Alpha) < 1 {
			return math.NaN(), false
		}
		u = t.Alpha[0]
	case t.Knots != nil:
		if t.Knots[0] < 0 {
			return math.NaN(), false
		}
	}
	if tr.Scale {
		u *= t.SD
	}
	switch tr.Centre {
	case "mean":
		u += t.Mean
	case "value":
		u += tr.CentreAt
	}
	switch {
	case tr.Log:
		return math.Exp(u) - tr.Shift, true
	case tr.Sqrt:
		if u < 0 {
			return math.NaN(), false
		}
		return u * u, true
	}
	return u, true
}
