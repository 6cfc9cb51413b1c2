package fit

import (
	"math"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"ordplan/internal/rscript"
)

// seed51 is a seeded tiny invented study (11 rows, frequency weights) in
// which category 2 never occurs at b = 1 while 1 and 3 do.
func seed51(t *testing.T) *Data {
	return tinyData(t, 3, [][4]float64{{3, 0.08, 1}, {3, 3.18, 1}, {1, 1.02, 0}, {2, -0.02, 0}, {1, -0.48, 1}, {3, 0.69, 1},
		{3, 1.86, 0}, {2, -0.16, 0}, {3, 2.35, 1}, {1, -1.46, 0}, {1, -1.21, 1}},
		"vwuvwuuwuww", []float64{2, 2, 2, 1, 1, 1, 2, 2, 3, 2, 2})
}

// Separation no ray of the estimates shows: the adjacent logit with b
// constrained (a group of one predictor, the same model as b free across
// equations) stopped at moderate estimates (b -13.38, phi[2] -2.457, x
// 16.5, max |score| 3e-5, log-likelihood -4.362591167) and was reported
// converged and chosen by AIC in a plan run, while its unconstrained twin
// was found separated. R's lpSolve (r-cran-lpsolve), given the
// inequalities written in R from the adjacent logit's probabilities
// (P(c) proportional to exp(sum_{m>=c} L_m): each other category's
// partial sum must not gain on the observed one), maximizes 1'M d at 6
// with d = (0, 0, 0, -1, 1, 0, 0) in (tau[1], tau[2], x, b[1], b[2], g.v,
// g.w): b's effect falling in equation 1 and rising in equation 2. The
// log-likelihood written in R rises along it from the reported estimates
// (-4.362591167 to -4.362591160 at 10 units) and never falls. Both forms
// of the model must now say no finite maximum.
func TestSeparationFoundByProgramme(t *testing.T) {
	d := seed51(t)
	for _, e := range []Effect{Constrained, Nonparallel} {
		m := Model{Comparison: Adjacent, Link: Logit, Effects: []Effect{Parallel, e, Parallel, Parallel}}
		r, err := Fit(d, m, Options{Workers: 1})
		if err != nil {
			t.Fatal(err)
		}
		if r.Status != StatusNoFiniteMaximum || r.Separation == nil || !math.IsNaN(r.LogLik) {
			t.Errorf("%s: status %s (%s), log-likelihood %v, estimates %v", m.Name(), r.Status, r.Message, r.LogLik, r.Estimates)
		}
	}
	// The programme's own direction, in the twin's coordinates.
	m := Model{Comparison: Adjacent, Link: Logit, Effects: []Effect{Parallel, Nonparallel, Parallel, Parallel}}
	ly, err := newLayout(m, d.J, d.Predictors)
	if err != nil {
		t.Fatal(err)
	}
	theta := make([]float64, len(ly.params))
	vars := lpVariables(ly, theta, m, phiHeld)
	dir := recessionLP(recessionRows(d, distinctRows(d, math.MaxInt), m, ly, vars))
	want := []float64{0, 0, 0, -1, 1, 0, 0} // R lpSolve
	if len(dir) != len(want) {
		t.Fatalf("direction %v, want a multiple of %v (R lpSolve)", dir, want)
	}
	for i := range want {
		if math.Abs(dir[i]/dir[4]-want[i]) > 1e-9 {
			t.Errorf("direction %v, want a multiple of %v (R lpSolve)", dir, want)
			break
		}
	}
}

// The programme finds no direction where none exists and one where one
// does, as R's lpSolve says (values recorded here; TestRecessionAgainstLPSolve
// runs lpSolve again when R has it) on the same models written as R glm's
// binary rows (the stage logit expanded by equation: y = m against y > m
// on the rows with y >= m, design ~ 0 + eq + x + b:eq + g, and with
// every term by equation): a tiny invented study of 14 weighted rows.
// The stage partial logit has no direction (value 0): its maximum is
// finite, though far out (R Newton: gradient 1e-15, x -24.3, errors up to
// 2.4e6). The stage nonparallel logit has one (value 14.96): category 1
// occurs only at g = u.
func TestProgrammeAgainstLPSolve(t *testing.T) {
	d := tinyData(t, 3, [][4]float64{{2, -1.24, 1}, {2, -1.36, 0}, {2, -0.66, 1}, {3, 1.38, 0}, {3, -0.33, 1}, {3, 0.01, 0}, {3, 0.81, 0},
		{2, -0.1, 1}, {3, 1.22, 1}, {2, 0.05, 0}, {1, -0.02, 0}, {1, -1.28, 1}, {2, -1.16, 1}, {3, 1.64, 1}},
		"vwvvvuuuwuuuvv", []float64{3, 3, 3, 3, 3, 2, 1, 2, 1, 3, 1, 2, 2, 1})
	for _, c := range []struct {
		effects []Effect
		found   bool
	}{
		{[]Effect{Parallel, Parallel, Parallel, Parallel}, false},
		{[]Effect{Parallel, Nonparallel, Parallel, Parallel}, false},
		{allEffects(4, Nonparallel), true},
	} {
		m := Model{Comparison: Stage, Link: Logit, Effects: c.effects}
		ly, err := newLayout(m, d.J, d.Predictors)
		if err != nil {
			t.Fatal(err)
		}
		vars := lpVariables(ly, make([]float64, len(ly.params)), m, phiHeld)
		M := recessionRows(d, distinctRows(d, math.MaxInt), m, ly, vars)
		dir := recessionLP(M)
		if (dir != nil) != c.found {
			t.Errorf("%s: direction %v, want one: %v (R lpSolve)", m.Name(), dir, c.found)
			continue
		}
		if dir == nil {
			continue
		}
		// A direction meets every inequality, some strictly.
		most := 0.0
		for i := 0; i < M.R; i++ {
			s := 0.0
			for v, a := range M.row(i) {
				s += a * dir[v] * M.scale[v]
			}
			if s < -1e-9 {
				t.Errorf("%s: row %d of the inequalities is %g < 0", m.Name(), i, s)
			}
			most = math.Max(most, s)
		}
		if !(most > 1e-6) {
			t.Errorf("%s: the direction raises no row (largest %g)", m.Name(), most)
		}
	}
}

// distinctRows stops as soon as the rows outnumber what the programme may
// take: a million rows of continuous predictors are not all hashed to be
// thrown away. Counted by hand: 6 rows, 3 distinct (two repeats, one row of
// weight 0).
func TestDistinctRowsStopsAtMost(t *testing.T) {
	d := &Data{J: 2, Y: []int{0, 1, 0, 0, 1, 1}, X: []float64{1, 2, 1, 3, 2, 4}, Predictors: []string{"x"},
		Weights: []float64{1, 1, 1, 1, 1, 0}}
	if got := distinctRows(d, math.MaxInt); !slices.Equal(got, []int{0, 1, 3}) {
		t.Errorf("distinct rows %v, want [0 1 3]", got)
	}
	if got := distinctRows(d, 3); !slices.Equal(got, []int{0, 1, 3}) {
		t.Errorf("at most 3: %v, want [0 1 3]", got)
	}
	if got := distinctRows(d, 2); got != nil {
		t.Errorf("at most 2: %v, want nil", got)
	}
}

// A sparse level: the 5 rows at h = 1 are all in the top category (R glm,
// binomial logit, of y = 3 against h and x: h's slope 12.9, 27.9, 35.9
// after 10, 25, 50 iterations, the fitted values at h = 1 reaching 1 -
// 6e-12 after 25), and z = 1
// never occurs in category 1, a fact about z that is no part of this
// separation (z's parallel slope is finite). The message says what the
// user can check in the data, for h alone.
func TestSeparationEvidenceSparseLevel(t *testing.T) {
	d := &Data{J: 3, Predictors: []string{"x", "h", "z"}}
	rows := [][4]float64{
		{1, -0.8, 0, 0}, {2, 0.3, 0, 1}, {3, 1.1, 0, 0}, {1, -1.4, 0, 0}, {2, -0.2, 0, 1}, {3, 0.9, 0, 1}, {2, 0.4, 0, 0},
		{1, 0.2, 0, 0}, {3, -0.5, 0, 1}, {2, -0.9, 0, 0}, {1, 0.6, 0, 0}, {3, 0.1, 0, 1}, {2, 1.3, 0, 1}, {1, -0.3, 0, 0},
		{3, -1.1, 1, 0}, {3, 0.5, 1, 1}, {3, -0.4, 1, 0}, {3, 0.8, 1, 1}, {3, -0.7, 1, 0},
	}
	for _, r := range rows {
		d.Y = append(d.Y, int(r[0])-1)
		d.X = append(d.X, r[1], r[2], r[3])
	}
	r, err := Fit(d, Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(3, Parallel)}, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != StatusNoFiniteMaximum {
		t.Fatalf("status %s (%s)", r.Status, r.Message)
	}
	if !strings.Contains(r.Message, `every row with h = 1 is in category "3"`) || strings.Contains(r.Message, "z =") ||
		strings.Contains(r.Message, "occurs only at h") {
		t.Errorf("message %q: want the fact about h = 1 alone", r.Message)
	}
}

// The programme finds a direction exactly where R's general-purpose
// linear-programming package lpSolve does, given inequalities written
// independently in R (testdata/rcheck/recession.R): the stage logit of
// TestProgrammeAgainstLPSolve's study as binary glm designs on the
// expanded rows (parallel, b nonparallel, all nonparallel), and the
// adjacent logit of seed51 with b free across equations from its
// probabilities' partial sums; and the flat maxima of
// TestFlatMaximumIsFinite (the stage probit as a glm design, the
// cumulative nonparallel models of both studies from their inequalities),
// whose stage log-likelihood R's glm reaches too. Skipped without R or lpSolve (Debian:
// r-cran-lpsolve).
func TestRecessionAgainstLPSolve(t *testing.T) {
	rscript.RequirePackages(t, "lpSolve")
	stage := tinyData(t, 3, [][4]float64{{2, -1.24, 1}, {2, -1.36, 0}, {2, -0.66, 1}, {3, 1.38, 0}, {3, -0.33, 1}, {3, 0.01, 0}, {3, 0.81, 0},
		{2, -0.1, 1}, {3, 1.22, 1}, {2, 0.05, 0}, {1, -0.02, 0}, {1, -1.28, 1}, {2, -1.16, 1}, {3, 1.64, 1}},
		"vwvvvuuuwuuuvv", []float64{3, 3, 3, 3, 3, 2, 1, 2, 1, 3, 1, 2, 2, 1})
	adj := seed51(t)
	dir := t.TempDir()
	for name, d := range map[string]*Data{"rows.csv": stage, "adj.csv": adj} {
		cols := make([][]float64, 6)
		for i, y := range d.Y {
			cols[0] = append(cols[0], float64(y+1))
			for k := 0; k < 4; k++ {
				cols[k+1] = append(cols[k+1], d.at(i, k))
			}
			cols[5] = append(cols[5], d.weight(i))
		}
		rscript.WriteCSV(t, filepath.Join(dir, name), []string{"y", "x", "b", "gv", "gw", "w"}, cols)
	}
	flat, flat155 := tinyStudy(42), tinyStudySpread(155, 4)
	for name, d := range map[string]*Data{"flat.csv": flat, "flat155.csv": flat155} {
		K := len(d.Predictors)
		cols := make([][]float64, K+1)
		for i, y := range d.Y {
			cols[0] = append(cols[0], float64(y+1))
			for k := 0; k < K; k++ {
				cols[k+1] = append(cols[k+1], d.at(i, k))
			}
		}
		rscript.WriteCSV(t, filepath.Join(dir, name), append([]string{"y"}, d.Predictors...), cols)
	}
	vals := rscript.Run(t, dir, filepath.Join("testdata", "rcheck", "recession.R"))
	for _, c := range []struct {
		name string
		d    *Data
		m    Model
	}{
		{"stage_parallel", stage, Model{Comparison: Stage, Link: Logit, Effects: allEffects(4, Parallel)}},
		{"stage_b_nonparallel", stage, Model{Comparison: Stage, Link: Logit, Effects: []Effect{Parallel, Nonparallel, Parallel, Parallel}}},
		{"stage_nonparallel", stage, Model{Comparison: Stage, Link: Logit, Effects: allEffects(4, Nonparallel)}},
		{"adjacent_b_nonparallel", adj, Model{Comparison: Adjacent, Link: Logit, Effects: []Effect{Parallel, Nonparallel, Parallel, Parallel}}},
		{"flat_stage_nonparallel", flat, Model{Comparison: Stage, Link: Probit, Effects: allEffects(3, Nonparallel)}},
		{"flat_cumulative_nonparallel", flat, Model{Comparison: Cumulative, Link: Probit, Effects: allEffects(3, Nonparallel)}},
		{"flat155_cumulative_nonparallel", flat155, Model{Comparison: Cumulative, Link: Probit, Effects: allEffects(2, Nonparallel)}},
	} {
		ly, err := newLayout(c.m, c.d.J, c.d.Predictors)
		if err != nil {
			t.Fatal(err)
		}
		vars := lpVariables(ly, make([]float64, len(ly.params)), c.m, phiHeld)
		found := recessionLP(recessionRows(c.d, distinctRows(c.d, math.MaxInt), c.m, ly, vars)) != nil
		value := vals.Scalar(t, c.name)
		if want := value > 1e-7; found != want {
			t.Errorf("%s: direction found %v; R lpSolve's value %g", c.m.Name(), found, value)
		}
		t.Logf("%s: R lpSolve value %g, direction found %v", c.name, value, found)
	}
	// The flat maximum of the stage probit is the maximum R's glm reaches
	// on the expanded rows.
	r, err := Fit(flat, Model{Comparison: Stage, Link: Probit, Effects: allEffects(3, Nonparallel)}, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	if want := vals.Scalar(t, "flat_stage_loglik"); r.Status != StatusFlatMaximum || math.Abs(r.LogLik-want) > 1e-6 {
		t.Errorf("stage nonparallel probit of tinyStudy(42): status %s, log-likelihood %.9f; R glm %.9f", r.Status, r.LogLik, want)
	}
}

// TestSeparationEvidenceInDataUnits: the sparse level of
// TestSeparationEvidenceSparseLevel with h coded 1000 and 1001 instead of
// 0 and 1 (the same model, h's slope and separation unchanged: the
// cutpoints take up the shift). h is far from zero for its spread, so the
// fit runs on h less its mean; the message names the value the data hold,
// 1001, not the centred one (about 0.74), which no row has.
func TestSeparationEvidenceInDataUnits(t *testing.T) {
	d := &Data{J: 3, Predictors: []string{"x", "h"}}
	rows := [][3]float64{
		{1, -0.8, 0}, {2, 0.3, 0}, {3, 1.1, 0}, {1, -1.4, 0}, {2, -0.2, 0}, {3, 0.9, 0}, {2, 0.4, 0},
		{1, 0.2, 0}, {3, -0.5, 0}, {2, -0.9, 0}, {1, 0.6, 0}, {3, 0.1, 0}, {2, 1.3, 0}, {1, -0.3, 0},
		{3, -1.1, 1}, {3, 0.5, 1}, {3, -0.4, 1}, {3, 0.8, 1}, {3, -0.7, 1},
	}
	for _, r := range rows {
		d.Y = append(d.Y, int(r[0])-1)
		d.X = append(d.X, r[1], 1000+r[2])
	}
	r, err := Fit(d, Model{Comparison: Cumulative, Link: Logit, Effects: allEffects(2, Parallel)}, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != StatusNoFiniteMaximum {
		t.Fatalf("status %s (%s)", r.Status, r.Message)
	}
	if !strings.Contains(r.Message, `every row with h = 1001 is in category "3"`) {
		t.Errorf("message %q, want the value of h in the data (1001)", r.Message)
	}
}
