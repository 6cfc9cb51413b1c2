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
		r, err := Fit(oneRowLevel(c.J, c.cat), m, Options{Workers: 1})
		if err != nil {
			t.Fatal(err)
		}
		s := r.Separation
		if r.Status != StatusNoFiniteMaximum || s == nil || !s.Proved {
			t.Errorf("%s: status %s (%s), want a proved separation", c.name, r.Status, r.Message)
			continue
		}
		if !slices.Equal(s.Parameters, c.diverging) || !slices.Equal(s.NotDetermined, c.flat) {
			t.Errorf("%s: diverging %v, not determined %v; want %v and %v", c.name, s.Parameters, s.NotDetermined, c.diverging, c.flat)
		}
		want := "(diverging: " + strings.Join(c.diverging, ", ")
		if c.flat != nil {
			want += "; " + notDeterminedWords + ": " + strings.Join(c.flat, ", ")
		}
		if !strings.Contains(r.Message, want+")") {
			t.Errorf("%s: message %q, want it to say %q)", c.name, r.Message, want)
		}
	}
}
