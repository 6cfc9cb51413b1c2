package fit

import (
	"fmt"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"ordplan/internal/testsurvey"
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

// A separation the programme does not prove (kept from running, as on a
// fit too large for it) names its parameters from the null space of the
// information where the iterations stopped: on the nonparallel cumulative
// fit of testsurvey.LevelSeparated (300 rows, 30 levels, seed 21), every
// level of g other than the reference whose rows lack some category (in
// this model, whose unobserved categories may take negative
// probabilities, such a level's slopes diverge), counted here from the
// data, and no other; the same parameters as the proved separation's
// (the programme running), the same message on a second fit, and the
// same names when the iterations repair the information by its
// eigenvalues alone (the path they took before semidefiniteStep). Every
// tenth level has all its rows in category 4; the reference level L000 is
// one of them, its separation a direction spread over the third cutpoint
// and every other level's third slope, which names none of them.
func TestUnprovedSeparationNamesLevels(t *testing.T) {
	const n, L = 300, 30
	s := testsurvey.NewLevelSeparated(rand.New(rand.NewPCG(21, 21)), n, L)
	seen := make([][5]bool, L)
	for i, g := range s.G {
		seen[g][s.Y[i]] = true
	}
	var want []string
	allFour := 0
	for g := 1; g < L; g++ {
		if !(seen[g][1] && seen[g][2] && seen[g][3] && seen[g][4]) {
			want = append(want, "g."+s.Level(g))
		}
		if g%10 == 0 {
			allFour++
		}
	}
	if len(want) <= allFour {
		t.Fatalf("levels lacking a category %v: the data do not have levels other than those all in category 4", want)
	}
	d := levelSeparatedData(21, n, L)
	m := nonparallelModel(d)
	proved, err := Fit(d, m, Options{})
	if err != nil {
		t.Fatal(err)
	}
	programmeOff = true
	defer func() { programmeOff = false }()
	var msgs []string
	for i := range 3 {
		eigenRepairOnly = i == 2
		r, err := Fit(d, m, Options{})
		eigenRepairOnly = false
		if err != nil {
			t.Fatal(err)
		}
		sep := r.Separation
		if r.Status != StatusNoFiniteMaximum || sep == nil || sep.Proved {
			t.Fatalf("status %s (%s), want a separation not proved", r.Status, r.Message)
		}
		if !slices.Equal(sep.Predictors, want) {
			t.Errorf("predictors %v, want the levels lacking a category %v", sep.Predictors, want)
		}
		if ps := proved.Separation; ps == nil || !ps.Proved || !slices.Equal(sep.Parameters, ps.Parameters) || !slices.Equal(sep.NotDetermined, ps.NotDetermined) {
			t.Errorf("parameters %v, not determined %v; proved separation %+v", sep.Parameters, sep.NotDetermined, ps)
		}
		if !strings.Contains(r.Message, "(with no curvature where the iterations stopped: "+strings.Join(sep.Parameters, ", ")+"; "+notDeterminedWords) {
			t.Errorf("message %q does not list the parameters %v", r.Message, sep.Parameters)
		}
		msgs = append(msgs, r.Message)
	}
	if msgs[0] != msgs[1] || !strings.HasSuffix(msgs[2][:strings.LastIndex(msgs[2], " [")], msgs[0][strings.Index(msgs[0], "; predictors involved"):strings.LastIndex(msgs[0], " [")]) {
		t.Errorf("three fits (the last with the eigenvalue repair alone), messages:\n%s\n%s\n%s", msgs[0], msgs[1], msgs[2])
	}
	t.Log(msgs[0])
}

// A separation's message gives at most messageListMost names of a list,
// then counts the rest.
func TestSeparationMessageCapsLists(t *testing.T) {
	var names []string
	for i := range 13 {
		names = append(names, fmt.Sprintf("g.L%03d", i))
	}
	r := &Result{Separation: &Separation{Predictors: names, Parameters: names[:3]}}
	msg := separationMessage(r, newtonState{})
	if want := "predictors involved: " + strings.Join(names[:10], ", ") + ", and 3 more (along that direction: g.L000, g.L001, g.L002)"; !strings.Contains(msg, want) {
		t.Errorf("message %q, want it to say %q", msg, want)
	}
}
