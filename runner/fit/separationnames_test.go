package fit

import (
	"slices"
	"strings"
	"testing"
)

// oneRowLevel is an invented study of 4 categories: 48 rows whose
// category does not depend on x (each category at every value of x, so x
// separates nothing), and one row at h = 1 (a level of a single row) in
// category c (1-based), at x = 0.3.
func oneRowLevel(J, c int) *Data {
	d := &Data{J: J, Predictors: []string{"x", "h"}}
	for i := 0; i < 48; i++ {
		d.Y = append(d.Y, i%J)
		d.X = append(d.X, float64((i*7)%12)/4-1.5, 0)
	}
	d.Y = append(d.Y, c-1)
	d.X = append(d.X, 0.3, 1)
	return d
}

// The parameters of a separation by a level of one row, named by hand from
// the probability of that row (the only row at h = 1, so the only one
// whose likelihood reads h's slopes). Its probability reads some linear
// predictors L_m: the slopes of h in those diverge (the row's probability
// rises towards 1 as they do), the slopes of h in the others appear in no
// row's likelihood, which is constant along them: they are not
// determined, and must not be called diverging.
//   - cumulative, category 1: P = F(L_1): h[1] diverges, h[2], h[3] are
//     not determined;
//   - cumulative, category 2: P = F(L_2) - F(L_1): h[1] and h[2] diverge,
//     h[3] is not determined;
//   - stage forward, category 2: P = F(L_2) (1 - F(L_1)): as the last;
//   - stage backward, category 4: P = 1 - F(L_3): h[3] diverges, h[1] and
//     h[2] are not determined;
//   - adjacent logit with 3 categories, category 2: P(1)/P(2) reads L_1
//     alone and P(3)/P(2) L_2 alone; the row's probability reaches 1 only
//     when both ratios vanish, so h[1] and h[2] diverge, none is left
//     undetermined (the row's probabilities read every equation).
func TestSeparationNamesDivergingAndUndetermined(t *testing.T) {
	for _, c := range []struct {
		name      string
		J, cat    int
		m         Model
		diverging []string
		flat      []string
	}{
		{"cumulative, category 1", 4, 1, Model{Comparison: Cumulative, Link: Logit}, []string{"h[1]"}, []string{"h[2]", "h[3]"}},
		{"cumulative, category 2", 4, 2, Model{Comparison: Cumulative, Link: Logit}, []string{"h[1]", "h[2]"}, []string{"h[3]"}},
		{"cumulative probit, category 2", 4, 2, Model{Comparison: Cumulative, Link: Probit}, []string{"h[1]", "h[2]"}, []string{"h[3]"}},
		{"stage forward, category 2", 4, 2, Model{Comparison: Stage, Link: Logit}, []string{"h[1]", "h[2]"}, []string{"h[3]"}},
		{"stage backward, category 4", 4, 4, Model{Comparison: Stage, Backward: true, Link: Logit}, []string{"h[3]"}, []string{"h[1]", "h[2]"}},
		{"adjacent, category 2 of 3", 3, 2, Model{Comparison: Adjacent, Link: Logit}, []string{"h[1]", "h[2]"}, nil},
	} {
		m := c.m
		m.Effects = []Effect{Parallel, Nonparallel}
		checkSeparationNames(t, c.name, oneRowLevel(c.J, c.cat), m, c.diverging, c.flat)
	}
}

// checkSeparationNames fits m to d and checks that the fit is a proved
// separation whose diverging and undetermined parameters are those
// given, in its fields and its message, the two lists sharing no name.
func checkSeparationNames(t *testing.T, name string, d *Data, m Model, diverging, flat []string) {
	t.Helper()
	r, err := Fit(d, m, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	s := r.Separation
	if r.Status != StatusNoFiniteMaximum || s == nil || !s.Proved {
		t.Errorf("%s: status %s (%s), want a proved separation", name, r.Status, r.Message)
		return
	}
	if !slices.Equal(s.Parameters, diverging) || !slices.Equal(s.NotDetermined, flat) {
		t.Errorf("%s: diverging %v, not determined %v; want %v and %v", name, s.Parameters, s.NotDetermined, diverging, flat)
	}
	for _, p := range s.Parameters {
		if slices.Contains(s.NotDetermined, p) {
			t.Errorf("%s: %s both diverging and not determined", name, p)
		}
	}
	want := "(diverging: " + strings.Join(diverging, ", ")
	if flat != nil {
		want += "; " + notDeterminedWords + ": " + strings.Join(flat, ", ")
	}
	if !strings.Contains(r.Message, want+")") {
		t.Errorf("%s: message %q, want it to say %q)", name, r.Message, want)
	}
}

// sparseMiddleLevel is an invented study of 4 categories: 24 rows whose
// category does not depend on x nor on the level of k (u, v or w; each
// level in several categories), and one row at level t (a level of a
// single row) in category b (2), at x = 0.3. k is coded by indicators of
// t, v and w (reference u).
func sparseMiddleLevel() *Data {
	d := &Data{J: 4, Predictors: []string{"x", "k.t", "k.v", "k.w"}}
	for i := 0; i < 24; i++ {
		d.Y = append(d.Y, i%4)
		lv := (i/4 + i) % 3 // u, v, w
		d.X = append(d.X, float64((i*7)%12)/4-1.5, 0, b2f(lv == 1), b2f(lv == 2))
	}
	d.Y = append(d.Y, 1)
	d.X = append(d.X, 0.3, 1, 0, 0)
	return d
}

// The parameters of a separation named from every direction of recession,
// not from the one the programme happens to find first.
//   - cumulative, k nonparallel, the row at k = t in category b: its
//     probability F(L_2) - F(L_1) reaches 1 only as L_2 -> +inf and
//     L_1 -> -inf, and no other row reads k.t: k.t[1] and k.t[2] both
//     diverge (some direction moves each; with these data the first
//     direction the programme finds moves k.t[1] only), k.t[3] is read by
//     no row and is not determined;
//   - cumulative, h constrained alone in its group, the row at h = 1 in
//     category 4 (oneRowLevel): its probability 1 - F(L_3) reads only the
//     effect of h at boundary 3, phi[3]*h, which diverges; its effects at
//     boundaries 1 and 2, h (phi[1] = 1) and phi[2]*h, are read by no row
//     and are not determined. g and phi are not named apart: only their
//     products enter, and h itself (g) is not determined while phi[3]*h
//     diverges;
//   - the same under the stage model: the row's probability
//     (1 - F(L_1)) (1 - F(L_2)) (1 - F(L_3)) reads all three effects,
//     which all diverge, none undetermined.
func TestSeparationNamesEveryDirection(t *testing.T) {
	cons := []Effect{Parallel, Constrained}
	for _, c := range []struct {
		name      string
		d         *Data
		m         Model
		diverging []string
		flat      []string
	}{
		{"cumulative, level t in category b", sparseMiddleLevel(), Model{Comparison: Cumulative, Link: Logit, Effects: []Effect{Parallel, Nonparallel, Nonparallel, Nonparallel}},
			[]string{"k.t[1]", "k.t[2]"}, []string{"k.t[3]"}},
		{"cumulative, h constrained, category 4", oneRowLevel(4, 4), Model{Comparison: Cumulative, Link: Logit, Effects: cons},
			[]string{"phi[3]*h"}, []string{"h", "phi[2]*h"}},
		{"stage, h constrained, category 4", oneRowLevel(4, 4), Model{Comparison: Stage, Link: Logit, Effects: cons},
			[]string{"h", "phi[2]*h", "phi[3]*h"}, nil},
	} {
		checkSeparationNames(t, c.name, c.d, c.m, c.diverging, c.flat)
	}
}
