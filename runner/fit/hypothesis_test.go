package fit

import (
	"math"
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
