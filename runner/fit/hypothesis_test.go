package fit

import (
	"math"
	"slices"
	"strings"
	"testing"
)

// Linear hypotheses as text: on the General Social Survey extract (Long
// 1997), "yr89[1] = yr89[2] = yr89[3]" in the nonparallel cumulative logit
// is the per-variable Wald test of the reference tests (chi2(2) = 12.2606).
func TestWaldLinearHypotheses(t *testing.T) {
	d := gssData(t)
	np := fitOK(t, d, Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(6, Nonparallel)})
	h, err := ParseHypothesis("yr89[1] = yr89[2] = yr89[3]", np.ParamNames)
	if err != nil {
		t.Fatal(err)
	}
	w := WaldLinear(np, h)
	if w.DF != 2 || math.Abs(w.Chi2-12.2606264804328) > 1e-4 {
		t.Errorf("got %+v", w)
	}
	// One coefficient against a constant: the squared z statistic.
	par := fitOK(t, d, Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(6, Parallel)})
	h, err = ParseHypothesis("2*white - 0.5 = -0.3 + white", par.ParamNames)
	if err != nil {
		t.Fatal(err)
	}
	w = WaldLinear(par, h)
	i := indexOf(par.ParamNames, "white")
	z := (par.Estimates[i] - 0.2) / par.StdErrors[i]
	if w.DF != 1 || math.Abs(w.Chi2-z*z) > 1e-9 {
		t.Errorf("got %v want %v", w.Chi2, z*z)
	}
	for _, bad := range []struct{ text, want string }{
		{"height = 0", `"height" is not a parameter`},
		{"white", "has no '='"},
		{"white = white", "restricts no parameter"},
		{"white + = 0", "ends with an operator"},
		{"", "empty"},
	} {
		if _, err := ParseHypothesis(bad.text, par.ParamNames); err == nil || !strings.Contains(err.Error(), bad.want) {
			t.Errorf("%q: %v", bad.text, err)
		}
	}
}

// Numbers with a signed exponent are read (they were cut at the sign and
// refused as "1e"), and coefficients or constants that add up beyond the
// largest float64 are refused rather than giving an infinite restriction
// (found by FuzzHypothesis). Expected rows by hand.
func TestHypothesisNumbers(t *testing.T) {
	names := []string{"tau[1]", "a", "b"}
	for _, c := range []struct {
		text string
		row  []float64
		c    float64
	}{
		{"a = 1e-3", []float64{0, 1, 0}, 1e-3},
		{"2.5E+1*a - b = -4e-1", []float64{0, 25, -1}, -0.4},
		{"1e-2 * a + 3 = 0", []float64{0, 0.01, 0}, -3},
	} {
		h, err := ParseHypothesis(c.text, names)
		if err != nil {
			t.Errorf("%q: %v", c.text, err)
			continue
		}
		if len(h.R) != 1 || !slices.Equal(h.R[0], c.row) || h.C[0] != c.c {
			t.Errorf("%q: R %v C %v, want %v %v", c.text, h.R, h.C, c.row, c.c)
		}
	}
	for _, text := range []string{"1e308*a + 1e308*a = 0", "a = 1e308 + 1e308", "a - b = 1.5e-",
		"b + 1e308 = -1e308", "1e308*a = -1e308*a"} {
		if _, err := ParseHypothesis(text, names); err == nil {
			t.Errorf("%q accepted", text)
		}
	}
}
