package fit

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"unicode"
)

// Hypothesis is a set of linear restrictions R theta = c on a fit's
// parameters, written as text.
type Hypothesis struct {
	Text string
	R    [][]float64
	C    []float64
}

// ParseHypothesis reads restrictions such as
//
//	yr89[1] = yr89[2]
//	yr89[1] = yr89[2] = yr89[3]        (a chain: two restrictions)
//	2*male[1] - male[3] = 0.5; white = 0
//
// over the parameter names of a fit. Terms are an optional number (with an
// optional '*') times a parameter name, or a number alone.
func ParseHypothesis(text string, names []string) (*Hypothesis, error) {
	index := map[string]int{}
	for i, n := range names {
		index[n] = i
	}
	return parseHypothesis(text, len(names), func(name string) (int, error) {
		k, ok := index[name]
		if !ok {
			return 0, fmt.Errorf("%q is not a parameter of this model (parameters: %s)", name, strings.Join(names, ", "))
		}
		return k, nil
	}, func(k int) string { return names[k] })
}

// CheckHypothesisText reads a hypothesis as ParseHypothesis does, taking
// every name in it for a parameter: the errors it returns are those that
// no model's parameters can mend (the syntax, numbers or coefficients that
// add up beyond the largest number, a restriction of no parameter), known
// from the plan alone.
func CheckHypothesisText(text string) error {
	_, err := HypothesisNames(text)
	return err
}

// HypothesisNames gives the parameter names a hypothesis uses, in the
// order of first use, reading it as CheckHypothesisText does.
func HypothesisNames(text string) ([]string, error) {
	var names []string
	_, err := parseHypothesis(text, -1, func(name string) (int, error) {
		if k := slices.Index(names, name); k >= 0 {
			return k, nil
		}
		names = append(names, name)
		return len(names) - 1, nil
	}, func(k int) string { return names[k] })
	return names, err
}

// WholeTermPart reads one restriction of a hypothesis (the text between
// semicolons) of the form "NAME = 0" and gives NAME: written so, a term of
// several columns (or of one parameter per boundary) is tested as a whole,
// every parameter of its columns at 0.
func WholeTermPart(part string) (string, bool) {
	lhs, rhs, ok := strings.Cut(part, "=")
	name := strings.TrimSpace(lhs)
	if !ok || strings.TrimSpace(rhs) != "0" || name == "" || strings.ContainsAny(name, " \t+-*") {
		return "", false
	}
	return name, true
}

// parseHypothesis reads text with the parameter index of each name from
// resolve, over P parameters (P < 0: as many as resolve has given, rows
// then padded to that number).
func parseHypothesis(text string, P int, resolve func(string) (int, error), name func(int) string) (*Hypothesis, error) {
	h := &Hypothesis{Text: text}
	for _, part := range strings.Split(text, ";") {
		part = strings.TrimSpace(part)
		if part == "" {
			continue
		}
		sides := strings.Split(part, "=")
		if len(sides) < 2 {
			return nil, fmt.Errorf("hypothesis %q: %q has no '='", text, part)
		}
		var exprs [][]float64
		var consts []float64
		for _, side := range sides {
			row, c, err := parseLinear(side, resolve, name)
			if err != nil {
				return nil, fmt.Errorf("hypothesis %q: %v", text, err)
			}
			exprs = append(exprs, row)
			consts = append(consts, c)
		}
		n := P
		for _, e := range exprs {
			n = max(n, len(e))
		}
		for i := 0; i+1 < len(exprs); i++ {
			row := make([]float64, n)
			nonzero := false
			for j := range row {
				row[j] = at(exprs[i], j) - at(exprs[i+1], j)
				nonzero = nonzero || row[j] != 0
			}
			if !nonzero {
				return nil, fmt.Errorf("hypothesis %q: %q restricts no parameter", text, part)
			}
			// Each side is finite, but their difference can pass the
			// largest number ("b + 1e308 = -1e308"): such a restriction
			// has no Wald test.
			c := consts[i+1] - consts[i]
			if math.IsInf(c, 0) || slices.ContainsFunc(row, func(v float64) bool { return math.IsInf(v, 0) }) {
				return nil, fmt.Errorf("hypothesis %q: in %q the numbers of the two sides differ by more than the largest number (about 1.8e308)", text, part)
			}
			h.R = append(h.R, row)
			h.C = append(h.C, c)
		}
	}
	if len(h.R) == 0 {
		return nil, fmt.Errorf("hypothesis %q is empty", text)
	}
	if P < 0 { // rows of one length: the longest, since a later row may name fewer parameters
		n := 0
		for _, row := range h.R {
			n = max(n, len(row))
		}
		for i, row := range h.R {
			h.R[i] = append(row, make([]float64, n-len(row))...)
		}
	}
	return h, nil
}

// at is row[j], 0 beyond the row's end.
func at(row []float64, j int) float64 {
	if j < len(row) {
		return row[j]
	}
	return 0
}

// parseLinear reads "a*name + b - name2 + 3" into coefficients (by the
// index resolve gives each name; the row as long as the largest index
// needs) and a constant.
func parseLinear(s string, resolve func(string) (int, error), name func(int) string) ([]float64, float64, error) {
	var row []float64
	c := 0.0
	s = strings.TrimSpace(s)
	if s == "" {
		return nil, 0, fmt.Errorf("an empty side")
	}
	i := 0
	sign := 1.0
	expectTerm := true
	for i < len(s) {
		ch := rune(s[i])
		switch {
		case unicode.IsSpace(ch):
			i++
		case ch == '+' || ch == '-':
			if !expectTerm {
				expectTerm = true
				sign = 1
			}
			if ch == '-' {
				sign = -sign
			}
			i++
		default:
			if !expectTerm {
				return nil, 0, fmt.Errorf("expected + or - before %q", s[i:])
			}
			coef := 1.0
			j := i
			for j < len(s) && (unicode.IsDigit(rune(s[j])) || s[j] == '.' || (s[j] == 'e' || s[j] == 'E') && j > i ||
				(s[j] == '+' || s[j] == '-') && j > i+1 && (s[j-1] == 'e' || s[j-1] == 'E')) {
				j++
			}
			if j > i {
				v, err := strconv.ParseFloat(s[i:j], 64)
				if err != nil {
					return nil, 0, fmt.Errorf("bad number %q", s[i:j])
				}
				coef = v
				i = j
				for i < len(s) && unicode.IsSpace(rune(s[i])) {
					i++
				}
				if i < len(s) && s[i] == '*' {
					i++
					for i < len(s) && unicode.IsSpace(rune(s[i])) {
						i++
					}
				} else if i >= len(s) || s[i] == '+' || s[i] == '-' {
					c += sign * coef
					expectTerm, sign = false, 1
					continue
				}
			}
			j = i
			for j < len(s) && !unicode.IsSpace(rune(s[j])) && s[j] != '+' && s[j] != '-' && s[j] != '*' {
				j++
			}
			k, err := resolve(s[i:j])
			if err != nil {
				return nil, 0, err
			}
			if k >= len(row) {
				row = append(row, make([]float64, k+1-len(row))...)
			}
			row[k] += sign * coef
			i = j
			expectTerm, sign = false, 1
		}
	}
	if expectTerm {
		return nil, 0, fmt.Errorf("a side ends with an operator")
	}
	// Numbers near the largest float64 can sum past it: a restriction
	// with an infinite coefficient has no Wald test.
	if math.IsInf(c, 0) {
		return nil, 0, fmt.Errorf("%q: its numbers add up beyond the largest number (about 1.8e308)", s)
	}
	for k, v := range row {
		if math.IsInf(v, 0) {
			return nil, 0, fmt.Errorf("%q: the coefficients of %s add up beyond the largest number (about 1.8e308)", s, name(k))
		}
	}
	return row, c, nil
}

// WaldLinear tests R theta = c in fit r with its covariance.
func WaldLinear(r *Result, h *Hypothesis) Test {
	if !r.OK() || r.Cov == nil {
		return failedTest(TestWald.String(), "%s has no usable estimates", r.Name)
	}
	diff := make([]float64, len(h.R))
	for i, row := range h.R {
		diff[i] = dot(row, r.Estimates) - h.C[i]
	}
	x, err := r.waldStatDiff(h.R, diff)
	if err != nil {
		return failedTest(TestWald.String(), "%v", err)
	}
	return r.waldTest(x, len(h.R))
}

// Contrast is one restriction r'theta = c of a hypothesis, estimated: the
// value of r'theta - c (left side minus right side of the restriction as
// written), its standard error sqrt(r'Vr) and its interval.
type Contrast struct {
	Text     string  `json:"contrast"`
	Estimate float64 `json:"estimate"`
	SE       float64 `json:"se"`
	Low      float64 `json:"low"`
	High     float64 `json:"high"`
	// DF are the degrees of freedom of the t interval of a contrast pooled
	// over imputed sets (nil: normal interval, or infinite).
	DF *float64 `json:"df,omitempty"`
}

// ContrastText writes restriction row of h over the parameter names as
// "a - b", "2*a + b - 0.5": r'theta - c.
func ContrastText(row []float64, c float64, names []string) string {
	var b strings.Builder
	term := func(coef float64, what string) {
		sign := "+"
		if coef < 0 {
			sign, coef = "-", -coef
		}
		switch {
		case b.Len() == 0 && sign == "-":
			b.WriteString("-")
		case b.Len() > 0:
			b.WriteString(" " + sign + " ")
		}
		if what == "" {
			b.WriteString(strconv.FormatFloat(coef, 'g', -1, 64))
			return
		}
		if coef != 1 {
			b.WriteString(strconv.FormatFloat(coef, 'g', -1, 64) + "*")
		}
		b.WriteString(what)
	}
	for j, v := range row {
		if v != 0 {
			term(v, names[j])
		}
	}
	if c != 0 {
		term(-c, "")
	}
	return b.String()
}

// Contrasts estimates each restriction of h in fit r (its covariance),
// with intervals at the given level: normal, or t on r's reference
// degrees of freedom (ReferenceDF; the interval's DF then recorded).
func Contrasts(r *Result, h *Hypothesis, level float64) []Contrast {
	if !r.OK() || r.Cov == nil {
		return nil
	}
	df := r.ReferenceDF()
	z := TQuantile(0.5+level/2, df)
	out := make([]Contrast, len(h.R))
	for i, row := range h.R {
		e := dot(row, r.Estimates) - h.C[i]
		se := math.Sqrt(r.variance(row))
		out[i] = Contrast{Text: ContrastText(row, h.C[i], r.ParamNames), Estimate: e, SE: se, Low: e - z*se, High: e + z*se}
		if !math.IsInf(df, 1) {
			out[i].DF = &df
		}
	}
	return out
}
