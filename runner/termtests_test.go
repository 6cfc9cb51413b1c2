package runner

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"ordplan/internal/refdata"
	"ordplan/internal/rscript"
	"ordplan/runner/fit"
)

// housingTwo writes the Copenhagen housing table (Madsen 1976;
// testdata/reference/housing_factors.csv) with satisfaction collapsed to
// two categories (low against medium or high: y 0 and 1) into dir as
// housing2.csv, and a plan that fits the cumulative logit model with
// parallel effects of infl, type, cont and infl x cont to it, with the
// frequency weights.
func housingTwo(t *testing.T, dir string) string {
	t.Helper()
	raw, err := os.ReadFile(refdata.Path("housing_factors.csv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(raw)), "\n")
	var b strings.Builder
	b.WriteString("y,infl,type,cont,freq\n")
	for _, l := range lines[1:] {
		f := strings.Split(l, ",")
		y := "1"
		if f[0] == "1" {
			y = "0"
		}
		fmt.Fprintf(&b, "%s,%s,%s,%s,%s\n", y, f[1], f[2], f[3], f[4])
	}
	if err := os.WriteFile(filepath.Join(dir, "housing2.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return `version: 1
title: housing, two categories
data: {file: housing2.csv, weights: freq}
outcomes: [{column: y}]
categorical:
  infl: {levels: [low, medium, high]}
  type: {levels: [tower, apartment, atrium, terrace]}
  cont: {levels: [low, high]}
predictors: [infl, type, cont, {interact: [infl, cont]}]
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
`
}

// TestTermTestsAgainstGlm: with two categories the cumulative logit model
// is logistic regression, so each term test of the chosen model must be
// base R's: the likelihood-ratio statistic is the difference of the
// deviances of glm's fits with and without the term (and the interaction
// containing it), and the Wald statistic b' V^-1 b from glm's coef() and
// vcov() (for the logit link the observed information is glm's expected
// one). Data: the Copenhagen housing table (Madsen 1976), published, in
// testdata/reference; script runner/testdata/rcheck/termtests.R.
func TestTermTestsAgainstGlm(t *testing.T) {
	rscript.Require(t)
	dir := t.TempDir()
	p := planIn(t, dir, housingTwo(t, dir))
	or := runPlan(t, p, 0).Outcomes[0]
	vals := rscript.Run(t, dir, "testdata/rcheck/termtests.R")
	want := map[string]string{"infl": "infl", "type": "type", "cont": "cont", "infl&cont": "infl_cont"}
	if len(or.TermTests) != 4 {
		t.Fatalf("%d term tests: %+v", len(or.TermTests), or.TermTests)
	}
	for _, tt := range or.TermTests {
		name := want[tt.Term]
		agreesWithGlm(t, tt, name, vals)
	}
	// The rule for a term inside an interaction: tested with it.
	if got := or.TermTests[0]; strings.Join(got.With, ",") != "infl&cont" || len(got.Columns) != 4 {
		t.Errorf("infl is tested as %+v", got)
	}
}

// TestGroupTestAgainstGlm: the joint test of a whole constraint group
// (type and cont, no term's columns alone) on the housing table collapsed
// to two categories. With one boundary there is no common factor: the
// constrained model is the cumulative logit model with parallel effects,
// which with two categories is logistic regression, so the group's tests
// must be base R's glm: the difference of the deviances of y ~ infl and
// y ~ infl + type + cont, and b' V^-1 b over the type and cont
// coefficients from coef() and vcov() (script
// runner/testdata/rcheck/termtests.R). Data: the Copenhagen housing
// table (Madsen 1976), published, in testdata/reference.
func TestGroupTestAgainstGlm(t *testing.T) {
	rscript.Require(t)
	dir := t.TempDir()
	src := strings.Replace(housingTwo(t, dir), "predictors: [infl, type, cont, {interact: [infl, cont]}]", "predictors: [infl, type, cont]", 1)
	src = strings.Replace(src, "effects: [parallel]}", "effects: [constrained], partial: {free: [type, cont]}}", 1)
	or := runPlan(t, planIn(t, dir, src), 0).Outcomes[0]
	if len(or.TermTests) != 4 {
		t.Fatalf("%d tests: %+v", len(or.TermTests), or.TermTests)
	}
	g := or.TermTests[3]
	if g.Group == nil || *g.Group != "" || g.Term != "the constraint group" || g.Bound != "" || len(g.Columns) != 4 {
		t.Fatalf("the group's test: %+v", g)
	}
	vals := rscript.Run(t, dir, "testdata/rcheck/termtests.R")
	for _, c := range []struct {
		kind string
		got  fit.Test
	}{{"lr", g.LR}, {"wald", g.Wald}} {
		r := vals.Get(t, c.kind+"_group")
		if !c.got.OK || math.Abs(c.got.Chi2-r[0]) > 1e-6*math.Max(1, r[0]) || c.got.DF != int(r[1]) {
			t.Errorf("group %s: %+v; glm chi2(%g) = %.10g", c.kind, c.got, r[1], r[0])
		}
		t.Logf("group %s: chi2(%d) = %.8f, glm %.8f", c.kind, c.got.DF, c.got.Chi2, r[0])
	}
}

// TestTermTestsLargeSample: on a large invented sample (seeded, with
// small effects) the Wald and likelihood-ratio statistics of each term
// agree closely, as their common asymptotic theory says (they differ by
// terms of order n^-1/2 relative); the partial and nonparallel fits of
// the grid are fitted too, and the chosen model's tests follow its
// structure (a nonparallel term has J-1 parameters per column).
func TestTermTestsLargeSample(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(2026, 12))
	var b strings.Builder
	b.WriteString("y,x,g\n")
	const n = 20000
	for i := 0; i < n; i++ {
		x := rng.NormFloat64()
		g := rng.IntN(3)
		eta := 0.04*x + []float64{0, 0.05, -0.04}[g]
		u := rng.Float64()
		z := math.Log(u / (1 - u)) // standard logistic
		y := 1
		for _, cut := range []float64{-0.8, 0.3, 1.2} {
			if z+eta > cut {
				y++
			}
		}
		fmt.Fprintf(&b, "%d,%.5f,%s\n", y, x, []string{"a", "b", "c"}[g])
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
	for _, effects := range []string{"parallel", "nonparallel"} {
		p := planIn(t, dir, xgPlan("{file: d.csv}", effects, "aic"))
		or := runPlan(t, p, 0).Outcomes[0]
		per := map[string]int{"parallel": 1, "nonparallel": 3}[effects]
		for _, tt := range or.TermTests {
			if !tt.Wald.OK || !tt.LR.OK || tt.Wald.DF != tt.LR.DF || tt.Wald.DF != per*len(tt.Columns) {
				t.Fatalf("%s %s: %+v", effects, tt.Term, tt)
			}
			rel := math.Abs(tt.LR.Chi2-tt.Wald.Chi2) / tt.Wald.Chi2
			t.Logf("%s %s: Wald chi2(%d) = %.4f, LR %.4f, relative difference %.2g", effects, tt.Term, tt.Wald.DF, tt.Wald.Chi2, tt.LR.Chi2, rel)
			if rel > 0.01 {
				t.Errorf("%s %s: Wald %.4f and LR %.4f differ by %.2g relative", effects, tt.Term, tt.Wald.Chi2, tt.LR.Chi2, rel)
			}
		}
	}
}

// TestTermTestsConstrained: a constrained column that is the only column
// of its constraint group is, in likelihood, the same column with free
// slopes (b_m = phi_m g is a reparameterization of b_1 .. b_J-1), so its
// term tests equal those of the partial model in which it is nonparallel:
// the likelihood-ratio test exactly (the same two likelihoods), the Wald
// test too (its delta-method covariance of phi_m g is the inverse
// information of the free slopes). Columns that make up a whole group of
// several are tested by their g, referred to the degrees of freedom of
// the same columns nonparallel (a bound); a column whose group keeps
// others is tested by its g.
func TestTermTestsConstrained(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(7, 70))
	var b strings.Builder
	b.WriteString("y,x,w,g\n")
	for i := 0; i < 800; i++ {
		x, w := rng.NormFloat64(), rng.NormFloat64()
		g := rng.IntN(3)
		eta := 0.5*x - 0.3*w + []float64{0, 0.4, -0.3}[g]
		u := rng.Float64()
		z := math.Log(u / (1 - u))
		y := 1
		for m, cut := range []float64{-1, 0, 1} {
			if z+eta*(1-0.2*float64(m)) > cut {
				y++
			}
		}
		fmt.Fprintf(&b, "%d,%.5f,%.5f,%s\n", y, x, w, []string{"a", "b", "c"}[g])
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
	run := func(effects, partial string) *OutcomeResult {
		return runPlan(t, planIn(t, dir, `version: 1
data: {file: d.csv}
outcomes: [{column: y}]
categorical: {g: {levels: [a, b, c]}}
predictors: [x, w, g]
models: {approaches: [cumulative], effects: [`+effects+`], partial: `+partial+`}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
`), 0).Outcomes[0]
	}
	byTerm := func(or *OutcomeResult, term string) TermTest {
		for _, tt := range or.TermTests {
			if tt.Term == term {
				return tt
			}
		}
		t.Fatalf("no test of %s in %s", term, or.Chosen.ID)
		return TermTest{}
	}
	cons, part := run("constrained", "{free: [x]}"), run("partial", "{free: [x]}")
	c, p := byTerm(cons, "x"), byTerm(part, "x")
	for _, pair := range [][2]fit.Test{{c.Wald, p.Wald}, {c.LR, p.LR}} {
		if !pair[0].OK || !pair[1].OK || pair[0].DF != 3 || pair[1].DF != 3 || math.Abs(pair[0].Chi2-pair[1].Chi2) > 1e-6*pair[1].Chi2 {
			t.Errorf("x alone in its group: %+v; nonparallel in the partial model: %+v", pair[0], pair[1])
		}
	}
	t.Logf("x: Wald %.8f / %.8f, LR %.8f / %.8f (constrained / partial)", c.Wald.Chi2, p.Wald.Chi2, c.LR.Chi2, p.LR.Chi2)
	if !strings.Contains(c.Tested[1], "phi[2]*x") {
		t.Errorf("tested %v", c.Tested)
	}
	// g's two columns make up their group: without them phi has no
	// meaning. Both tests are referred to chi-square on 6 = 2 x 3 degrees
	// of freedom, those of g nonparallel in the partial model; the
	// constrained model is nested in that one with the same model without
	// g, so its likelihood-ratio statistic is at most the partial model's
	// (exactly: the two restricted fits are the same model) and its
	// p-value at least.
	g := byTerm(run("constrained", "{free: [g]}"), "g")
	gp := byTerm(run("partial", "{free: [g]}"), "g")
	if !g.Wald.OK || !g.LR.OK || g.Wald.DF != 6 || g.LR.DF != 6 || gp.LR.DF != 6 || !strings.Contains(g.Bound, "g.b, g.c make up a whole constraint group") ||
		strings.Join(g.Tested, " ") != "g.b g.c" {
		t.Errorf("g alone in its group: %+v", g)
	}
	if !(g.LR.Chi2 <= gp.LR.Chi2+1e-9) || !(g.LR.P >= gp.LR.P) || math.Abs(g.LR.LLRestricted-gp.LR.LLRestricted) > 1e-8 {
		t.Errorf("g: constrained LR %+v, partial %+v", g.LR, gp.LR)
	}
	t.Logf("g, whole group: Wald %.6f, LR %.6f (p %.4g); nonparallel in the partial model: LR %.6f (p %.4g)", g.Wald.Chi2, g.LR.Chi2, g.LR.P, gp.LR.Chi2, gp.LR.P)
	shared := run("constrained", "{free: [x, w]}")
	if x := byTerm(shared, "x"); !x.Wald.OK || !x.LR.OK || x.Wald.DF != 1 || x.LR.DF != 1 || x.Bound != "" {
		t.Errorf("x with w in its group: %+v", x)
	}
	// On imputed sets that are all the data itself the between-imputation
	// variance is 0, so D1 and D3 are the tests of one data set, and the
	// group's pooled tests must be g's above, on the same bound.
	src, _ := os.ReadFile(filepath.Join(dir, "d.csv"))
	os.WriteFile(filepath.Join(dir, "d2.csv"), src, 0o644)
	pooled := runPlan(t, planIn(t, dir, `version: 1
data: {file: d.csv, imputed: {files: [d.csv, d2.csv]}}
outcomes: [{column: y}]
categorical: {g: {levels: [a, b, c]}}
predictors: [x, w, g]
models: {approaches: [cumulative], effects: [constrained], partial: {free: [g]}}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
`), 0).Outcomes[0]
	pg := byTerm(pooled, "g")
	for _, pair := range [][2]fit.Test{{pg.Wald, g.Wald}, {pg.LR, g.LR}} {
		p, one := pair[0], pair[1]
		// D3 over identical sets: the chi-square (DF2 infinite); D1: F on
		// the complete-data denominator (identicalSetsP).
		if !p.OK || p.Pooled == "" || p.DF != 6 || (p.Pooled == "D3") != (p.DF2 == 0) || math.Abs(p.Chi2-one.Chi2) > 1e-6*one.Chi2 || math.Abs(p.P-identicalSetsP(p, one)) > 1e-6 {
			t.Errorf("g pooled over identical sets: %+v; on the data: %+v", p, one)
		}
	}

	// The group of x and w, no term's columns: tested as a whole, after
	// the terms, on 2 x 3 degrees of freedom.
	both := shared.TermTests[len(shared.TermTests)-1]
	if both.Group == nil || both.Term != "the constraint group" || len(shared.TermTests) != 4 || !both.LR.OK || !both.Wald.OK || both.LR.DF != 6 || both.Wald.DF != 6 ||
		strings.Join(both.Columns, " ") != "x w" || !strings.Contains(both.Bound, "x, w make up a whole constraint group") {
		t.Errorf("the group of x and w: %+v", both)
	}
}

// TestPooledTermTestsAgainstMitml: on imputed data the Wald test of a
// term is pooled by D1 and the likelihood-ratio test by D3. The D1 test of
// a three-level factor is checked against the general-purpose
// multiple-imputation package mitml (testModels, method D1, of the glm
// fits of y ~ x + g against y ~ x on each set): the program's fits are the
// two-category cumulative logit models, glm's. Data: invented (seeded):
// y from a logistic model in x and g, g missing in about a quarter of the
// rows, each imputed set drawing a missing g at random from the three
// levels (any completed sets serve to check the pooling).
func TestPooledTermTestsAgainstMitml(t *testing.T) {
	rscript.RequirePackages(t, "mitml")
	const m, n = 5, 200
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(5, 55))
	levels := []string{"a", "b", "c"}
	var orig, stacked strings.Builder
	orig.WriteString("y,x,g\n")
	stacked.WriteString("imp,y,x,g\n")
	sets := make([]strings.Builder, m)
	type row struct {
		y, g int
		x    float64
		miss bool
	}
	rows := make([]row, n)
	for i := range rows {
		x, g := rng.NormFloat64(), rng.IntN(3)
		y := 0
		if rng.Float64() < 1/(1+math.Exp(-(0.3+0.8*x+[]float64{0, 0.9, -0.6}[g]))) {
			y = 1
		}
		rows[i] = row{y, g, x, rng.Float64() < 0.25}
		gs := levels[g]
		if rows[i].miss {
			gs = ""
		}
		fmt.Fprintf(&orig, "%d,%.6f,%s\n", y, x, gs)
	}
	for k := range sets {
		sets[k].WriteString("y,x,g\n")
		for _, r := range rows {
			g := r.g
			if r.miss {
				g = rng.IntN(3)
			}
			fmt.Fprintf(&sets[k], "%d,%.6f,%s\n", r.y, r.x, levels[g])
			fmt.Fprintf(&stacked, "%d,%d,%.6f,%s\n", k+1, r.y, r.x, levels[g])
		}
		os.WriteFile(filepath.Join(dir, fmt.Sprintf("imp%d.csv", k+1)), []byte(sets[k].String()), 0o644)
	}
	os.WriteFile(filepath.Join(dir, "orig.csv"), []byte(orig.String()), 0o644)
	os.WriteFile(filepath.Join(dir, "stacked.csv"), []byte(stacked.String()), 0o644)
	os.WriteFile(filepath.Join(dir, "m.txt"), []byte(fmt.Sprintln(m)), 0o644)
	or := runPlan(t, planIn(t, dir, xgPlan("{file: orig.csv, imputed: {file: stacked.csv, column: imp}}", "parallel", "aic")), 0).Outcomes[0]
	if or.Imputed == nil || len(or.TermTests) != 2 {
		t.Fatalf("term tests on imputed data: %+v", or.TermTests)
	}
	g := or.TermTests[1]
	if g.Term != "g" || g.Wald.Pooled != "D1" || g.LR.Pooled != "D3" || !g.LR.OK || g.LR.DF != 2 {
		t.Fatalf("g: %+v", g)
	}
	want := rscript.Run(t, dir, "testdata/rcheck/termpool.R").Get(t, "d1")
	F := g.Wald.Chi2 / float64(g.Wald.DF)
	for _, c := range []struct {
		what      string
		got, want float64
	}{{"F", F, want[0]}, {"df1", float64(g.Wald.DF), want[1]}, {"df2", g.Wald.DF2, want[2]}, {"p", g.Wald.P, want[3]}} {
		if d := math.Abs(c.got - c.want); !(d <= 1e-6*math.Max(1e-3, math.Abs(c.want))) {
			t.Errorf("g, pooled Wald %s: %.10g, mitml %.10g", c.what, c.got, c.want)
		}
	}
	t.Logf("g: D1 F(%d, %.2f) = %.6f, p %.6g; mitml F(%g, %.2f) = %.6f, p %.6g (RIV %.3f); D3 F(%d, %.2f) = %.6f", g.Wald.DF, g.Wald.DF2, F, g.Wald.P, want[1], want[2], want[0], want[3], want[4], g.LR.DF, g.LR.DF2, g.LR.Chi2/2)
}

// TestTermTestsSamplingWeights: under sampling weights the fits maximize
// a pseudo-likelihood, so each term has its Wald test (with the sandwich
// errors) and a likelihood-ratio test shown as not computed, with no
// refit made.
func TestTermTestsSamplingWeights(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(8, 80))
	var b strings.Builder
	b.WriteString("y,x,g,w\n")
	for i := 0; i < 300; i++ {
		x, g := rng.NormFloat64(), rng.IntN(3)
		u := rng.Float64()
		z := math.Log(u/(1-u)) + 0.6*x + []float64{0, 0.5, -0.4}[g]
		y := 1
		for _, cut := range []float64{-0.7, 0.7} {
			if z > cut {
				y++
			}
		}
		fmt.Fprintf(&b, "%d,%.5f,%s,%.3f\n", y, x, []string{"a", "b", "c"}[g], 0.5+rng.Float64())
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
	or := runPlan(t, planIn(t, dir, xgPlan("{file: d.csv, weights: w, weight_kind: sampling}", "parallel", "tic")), 0).Outcomes[0]
	if len(or.TermTests) != 2 {
		t.Fatalf("%+v", or.TermTests)
	}
	for _, tt := range or.TermTests {
		if !tt.Wald.OK || tt.LR.OK || tt.LR.Reason != pseudoReason || tt.Without != "" {
			t.Errorf("%s: %+v", tt.Term, tt)
		}
	}
}

// xgPlan is the plan of the invented data of these tests: outcome y,
// predictors x and g (levels a, b, c), the cumulative logit model with
// the effect structure effects, chosen by the criterion by.
func xgPlan(data, effects, by string) string {
	return `version: 1
data: ` + data + `
outcomes: [{column: y}]
categorical: {g: {levels: [a, b, c]}}
predictors: [x, g]
models: {approaches: [cumulative], effects: [` + effects + `]}
tests: {parallel_lines: []}
rules:
  - choose: {by: ` + by + `}
`
}

// TestTermTestOfOnlyTerm: when the model has one term, the model without
// it is the thresholds-only model, so the term's likelihood-ratio test is
// the model's test against the thresholds-only model (fitted apart, by
// fit.FitNull), on the housing table collapsed to two categories.
func TestTermTestOfOnlyTerm(t *testing.T) {
	dir := t.TempDir()
	src := strings.Replace(housingTwo(t, dir), "predictors: [infl, type, cont, {interact: [infl, cont]}]", "predictors: [type]", 1)
	or := runPlan(t, planIn(t, dir, src), 0).Outcomes[0]
	if len(or.TermTests) != 1 || len(or.Overall) != 1 {
		t.Fatalf("%+v %+v", or.TermTests, or.Overall)
	}
	lr, all := or.TermTests[0].LR, or.Overall[0].LR
	if !lr.OK || lr.DF != all.DF || math.Abs(lr.Chi2-all.Chi2) > 1e-9*all.Chi2 {
		t.Errorf("type: %+v; against the thresholds-only model: %+v", lr, all)
	}
}

// TestTermTestsChosenByPlan: inference.term_tests leaves out what the
// plan does not ask for. wald: the Wald tests are those of the default
// (both) and no model is refitted; lr: the likelihood-ratio tests are the
// default's; none: no test, and decisions.json says why. On the housing
// table collapsed to two categories (whose default tests
// TestTermTestsAgainstGlm checks against glm).
func TestTermTestsChosenByPlan(t *testing.T) {
	dir := t.TempDir()
	src := housingTwo(t, dir)
	both := runPlan(t, planIn(t, dir, src), 0).Outcomes[0]
	for _, word := range []string{"wald", "lr", "none"} {
		r := runPlan(t, planIn(t, dir, src+"inference: {term_tests: "+word+"}\n"), 0)
		or := r.Outcomes[0]
		off := BuildDecisions(r).Outcomes[0].TermTestsOff
		if word == "none" {
			if len(or.TermTests) != 0 || !strings.Contains(off, "inference.term_tests: none") {
				t.Errorf("none: %+v; decisions say %q", or.TermTests, off)
			}
			continue
		}
		if len(or.TermTests) != len(both.TermTests) || off != "" {
			t.Fatalf("%s: %d tests, %d by default; off %q", word, len(or.TermTests), len(both.TermTests), off)
		}
		for i, tt := range or.TermTests {
			kept, left, ref := tt.Wald, tt.LR, both.TermTests[i].Wald
			if word == "lr" {
				kept, left, ref = tt.LR, tt.Wald, both.TermTests[i].LR
			}
			if !reflect.DeepEqual(kept, ref) {
				t.Errorf("%s, %s: %+v, by default %+v", word, tt.Term, kept, ref)
			}
			if left.OK || left.Reason != "left out by the plan (inference.term_tests: "+word+")" {
				t.Errorf("%s, %s: the test left out is %+v", word, tt.Term, left)
			}
			if (word == "wald") != (tt.Without == "") {
				t.Errorf("%s, %s: refit %q", word, tt.Term, tt.Without)
			}
		}
	}
}

// TestColumnTestAgainstGlm: a data column that makes two terms (exposure
// and its logarithm) is also tested as a whole, both terms together, and
// with two categories the cumulative logit model is logistic regression,
// so that test must be base R's: the difference of the deviances of glm's
// y ~ 1 and y ~ exposure + log(exposure), and b' V^-1 b over both slopes;
// each term's own test stays the test of it alone. Data: pneumoconiosis in
// coal miners (Ashford 1959; testdata/reference/pneumo.csv), normal
// against mild or severe; script runner/testdata/rcheck/columntest.R.
func TestColumnTestAgainstGlm(t *testing.T) {
	rscript.Require(t)
	dir := t.TempDir()
	raw, err := os.ReadFile(refdata.Path("pneumo.csv"))
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	b.WriteString("y,exposure,count\n")
	for _, l := range strings.Split(strings.TrimSpace(string(raw)), "\n")[1:] {
		f := strings.Split(l, ",")
		y := "1"
		if f[3] == "1" {
			y = "0"
		}
		fmt.Fprintf(&b, "%s,%s,%s\n", y, f[1], f[4])
	}
	if err := os.WriteFile(filepath.Join(dir, "pneumo2.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	p := planIn(t, dir, `version: 1
title: pneumoconiosis, two categories
data: {file: pneumo2.csv, weights: count}
outcomes: [{column: y}]
predictors: [exposure, {name: lexp, column: exposure, log: {}}]
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
inference:
  hypotheses: ["exposure = 0", "exposure = 0; lexp = 0"]
rules:
  - choose: {by: aic}
`)
	or := runPlan(t, p, 0).Outcomes[0]
	// A hypothesis restricting one of the terms the column makes says
	// so (the report points to the column's test); one restricting both
	// is the column's test, whose Wald statistic glm's b' V^-1 b gives.
	if len(or.Hypotheses) != 2 {
		t.Fatalf("hypotheses: %+v", or.Hypotheses)
	}
	if pc := or.Hypotheses[0].PartOfColumn; len(pc) != 1 || pc[0].Column != "exposure" || strings.Join(pc[0].Terms, ",") != "exposure,lexp" || strings.Join(pc[0].Named, ",") != "exposure" {
		t.Errorf("exposure = 0 beside lexp: part of column %+v", pc)
	}
	if pc := or.Hypotheses[1].PartOfColumn; pc != nil {
		t.Errorf("both terms of the column restricted: part of column %+v", pc)
	}
	vals := rscript.Run(t, dir, "testdata/rcheck/columntest.R")
	want := map[string]string{"exposure": "exposure", "lexp": "lexp", "column exposure": "column"}
	if len(or.TermTests) != 3 {
		t.Fatalf("%d term tests: %+v", len(or.TermTests), or.TermTests)
	}
	for _, tt := range or.TermTests {
		name, ok := want[tt.Term]
		if !ok {
			t.Fatalf("a test of %q", tt.Term)
		}
		agreesWithGlm(t, tt, name, vals)
	}
	col := or.TermTests[2]
	if h := or.Hypotheses[1].Test; math.Abs(h.Chi2-col.Wald.Chi2) > 1e-9*col.Wald.Chi2 || h.DF != col.Wald.DF {
		t.Errorf("hypothesis exposure = 0; lexp = 0: chi2(%d) = %g, the column's Wald test chi2(%d) = %g", h.DF, h.Chi2, col.Wald.DF, col.Wald.Chi2)
	}
	if col.Column == nil || *col.Column != "exposure" || strings.Join(col.With, ",") != "exposure,lexp" || strings.Join(col.Columns, ",") != "exposure,lexp" {
		t.Errorf("the column's test is %+v", col)
	}
	if or.TermTests[0].Column != nil || len(or.TermTests[0].With) != 0 {
		t.Errorf("the term exposure is tested as %+v", or.TermTests[0])
	}
}

// agreesWithGlm checks a term test's likelihood-ratio and Wald statistics
// and degrees of freedom against those of base R's glm (vals: the R
// script's lr_NAME and wald_NAME, each chi2 and df), to 1e-6 relative.
func agreesWithGlm(t *testing.T, tt TermTest, name string, vals rscript.Values) {
	t.Helper()
	for _, c := range []struct {
		kind string
		got  fit.Test
	}{{"lr", tt.LR}, {"wald", tt.Wald}} {
		r := vals.Get(t, c.kind+"_"+name)
		if !c.got.OK {
			t.Errorf("%s %s: not computed: %s", tt.Term, c.kind, c.got.Reason)
			continue
		}
		if d := math.Abs(c.got.Chi2 - r[0]); !(d <= 1e-6*math.Max(1, r[0])) || c.got.DF != int(r[1]) {
			t.Errorf("%s %s: chi2(%d) = %.10g, glm chi2(%g) = %.10g", tt.Term, c.kind, c.got.DF, c.got.Chi2, r[1], r[0])
		}
		t.Logf("%s %s: chi2(%d) = %.8f, glm %.8f", tt.Term, c.kind, c.got.DF, c.got.Chi2, r[0])
	}
}
