package runner

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"ordplan/internal/rscript"
)

// Per-unit marginal effects of variables whose model columns take large
// values: income in dollars (5e4) and its product with age (2.5e6), a raw
// cubic in age (6e5), dose squared times centred age (5e4). The data are
// invented, made by testdata/slopes/gen.R with fixed seeds.

const slopesBinaryPlan = `version: 1
title: satisfaction by income in dollars
data: {file: sat.csv}
outcomes: [{column: sat, categories: ["no", "yes"]}]
predictors:
  - %s
  - age
  - {interact: [%s, age]}
models: {approaches: [cumulative], effects: [parallel], links: [logit]}
tests: {parallel_lines: []}
rules:
  - choose: {by: bic}
inference:
  marginal_effects: [average, means, profile]
  profile: {%s: %s, age: 30}
`

const slopesStagePlan = `version: 1
title: self-rating by a raw cubic in age
data: {file: srh.csv}
outcomes:
  - column: srh
    categories: [poor, fair, good, verygood, excellent]
predictors:
  - {name: agep, column: age, polynomial: {degree: 3, basis: raw}}
  - female
models: {approaches: [stage], effects: [parallel], links: [logit]}
tests: {parallel_lines: []}
rules:
  - choose: {by: bic}
inference:
  marginal_effects: [average, means, profile]
  profile: {age: 70, female: 1}
`

const slopesAdjacentPlan = `version: 1
title: pain relief by dose
data: {file: pain.csv}
subset:
  - {column: age, at_least: 18}
outcomes:
  - column: relief
    categories: [none, slight, moderate, complete]
categorical:
  drug: {levels: [alpha, beta, gamma], reference: gamma}
predictors:
  - {name: ldose, column: dose, log: {shift: 1}}
  - {name: dosep, column: dose, polynomial: {degree: 2, basis: raw}}
  - {name: agec, column: age, centre: mean}
  - drug
  - sex
  - {interact: [dosep, agec]}
models: {approaches: [adjacent], effects: [nonparallel], links: [logit]}
tests: {parallel_lines: []}
rules:
  - choose: {by: bic}
inference:
  marginal_effects: [average, means, profile]
  profile: {dose: 20, age: 30, drug: beta, sex: 0}
`

// slopesData reads a file of testdata/slopes.
func slopesData(t *testing.T, name string) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("testdata", "slopes", name))
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// perUnit returns, by kind ("average", "means", "profile"), the per-unit
// marginal effects of variable name in the outcome's chosen model.
func perUnit(t *testing.T, or *OutcomeResult, name string) map[string][]slopeRow {
	t.Helper()
	out := map[string][]slopeRow{}
	for _, set := range or.Marginal {
		if set.Error != "" {
			t.Fatalf("%s effects: %s", set.Kind, set.Error)
		}
		for _, e := range set.Effects {
			if e.Predictor == name {
				if e.Discrete || e.Change != "per unit" {
					t.Fatalf("%s %s: %+v, want a per-unit effect", set.Kind, name, e)
				}
				out[set.Kind] = append(out[set.Kind], slopeRow{e.Category, e.Effect, e.SE})
			}
		}
	}
	return out
}

// slopeRow is one category's effect and standard error.
type slopeRow struct {
	Category   string
	Effect, SE float64
}

// TestPerUnitEffectsAgainstGlm checks the per-unit marginal effects
// (averaged, at the means, at a profile) and their standard errors against
// base R's glm. With two categories the cumulative logit model is logistic
// regression (P(yes) = plogis(-L)); R writes out the derivative of P(yes)
// in income and in age through the product column and its gradient in
// glm's coefficients, with glm's vcov (testdata/rcheck/slopesbinary.R).
// The forward stage logit model is one glm on the data expanded by stage
// (one row per stage reached, an intercept per stage); R writes out
// dP(y = k)/dage through the raw cubic and differentiates it in glm's
// coefficients with steps scaled to each column
// (testdata/rcheck/slopesstage.R, after slopesdelta.R, which the adjacent
// check shares). The adjacent-category nonparallel logit
// model is the baseline-category logit, which nnet::multinom fits (refined
// by Newton steps in R); R writes out dP(y = k)/ddose and dP(y = k)/dage
// through log(dose + 1), dose^2 and their products with centred age, and
// differentiates them in the coefficients as for the stage model
// (testdata/rcheck/slopesadjacent.R; skipped without nnet). Measured
// agreement is logged; the limit is 1e-6 relative.
func TestPerUnitEffectsAgainstGlm(t *testing.T) {
	rscript.Require(t)
	near, worst := agreeWithR(t, 1e-6)
	p := writePlan(t, fmt.Sprintf(slopesBinaryPlan, "income", "income", "income", "80000"), map[string]string{"sat.csv": slopesData(t, "sat.csv")})
	or := runPlan(t, p, 0).Outcomes[0]
	vals := rscript.Run(t, filepath.Dir(p.Path), "testdata/rcheck/slopesbinary.R")
	seen := 0
	for _, v := range []string{"income", "age"} {
		got := perUnit(t, or, v)
		for _, kind := range []string{"average", "means", "profile"} {
			r := vals.Get(t, kind+"_"+v)
			for _, e := range got[kind] {
				sign := 1.0
				if e.Category == "no" {
					sign = -1
				}
				near(kind+" "+v+" "+e.Category, e.Effect, sign*r[0], r[1])
				near(kind+" "+v+" "+e.Category+" se", e.SE, r[1], 0)
				seen++
			}
		}
	}
	p = writePlan(t, slopesStagePlan, map[string]string{"srh.csv": slopesData(t, "srh.csv")})
	or = runPlan(t, p, 0).Outcomes[0]
	vals = rscript.Run(t, filepath.Dir(p.Path), "testdata/rcheck/slopesdelta.R", "testdata/rcheck/slopesstage.R")
	got := perUnit(t, or, "age")
	for _, kind := range []string{"average", "means", "profile"} {
		r := vals.Get(t, kind+"_age")
		if len(r) != 10 || len(got[kind]) != 5 {
			t.Fatalf("%s: R printed %d values, the run has %d categories", kind, len(r), len(got[kind]))
		}
		for j, e := range got[kind] {
			near(kind+" age "+e.Category, e.Effect, r[j], r[5+j])
			near(kind+" age "+e.Category+" se", e.SE, r[5+j], 0)
			seen++
		}
	}
	if nnet := rscript.HasPackage(t, "nnet"); nnet {
		p = writePlan(t, slopesAdjacentPlan, map[string]string{"pain.csv": slopesData(t, "pain.csv")})
		or = runPlan(t, p, 0).Outcomes[0]
		vals = rscript.Run(t, filepath.Dir(p.Path), "testdata/rcheck/slopesdelta.R", "testdata/rcheck/slopesadjacent.R")
		for _, v := range []string{"dose", "age"} {
			got := perUnit(t, or, v)
			for _, kind := range []string{"average", "means", "profile"} {
				r := vals.Get(t, kind+"_"+v)
				if len(r) != 8 || len(got[kind]) != 4 {
					t.Fatalf("%s %s: R printed %d values, the run has %d categories", kind, v, len(r), len(got[kind]))
				}
				for j, e := range got[kind] {
					near(kind+" "+v+" "+e.Category, e.Effect, r[j], r[4+j])
					near(kind+" "+v+" "+e.Category+" se", e.SE, r[4+j], 0)
					seen++
				}
			}
		}
	} else {
		t.Log("R package nnet is not installed: the adjacent-category check is skipped")
		seen += 24
	}
	if seen != 12+15+24 {
		t.Errorf("%d effects compared, want 51", seen)
	}
	t.Logf("largest relative difference from R: %.2g", *worst)
}

// TestPerUnitEffectsUnderRescaling: income in millions instead of dollars
// is the same model, its slope multiplied by 1e6; so the per-unit effect of
// income and its standard error are multiplied by 1e6 and those of age do
// not change, averaged, at the means and at the profile (the same profile,
// 0.08 millions). Agreement to 1e-6 relative (the two fits converge
// separately).
func TestPerUnitEffectsUnderRescaling(t *testing.T) {
	dollars := slopesData(t, "sat.csv")
	lines := strings.Split(strings.TrimSpace(dollars), "\n")
	millions := []string{"sat,income_m,age"}
	for _, l := range lines[1:] {
		f := strings.Split(l, ",")
		v, err := strconv.ParseFloat(f[1], 64)
		if err != nil {
			t.Fatal(err)
		}
		millions = append(millions, f[0]+","+strconv.FormatFloat(v/1e6, 'g', -1, 64)+","+f[2])
	}
	pd := writePlan(t, fmt.Sprintf(slopesBinaryPlan, "income", "income", "income", "80000"), map[string]string{"sat.csv": dollars})
	pm := writePlan(t, fmt.Sprintf(slopesBinaryPlan, "income_m", "income_m", "income_m", "0.08"), map[string]string{"sat.csv": strings.Join(millions, "\n") + "\n"})
	d, m := runPlan(t, pd, 0).Outcomes[0], runPlan(t, pm, 0).Outcomes[0]
	worst := 0.0
	near := func(what string, got, want float64) {
		t.Helper()
		d := math.Abs(got-want) / math.Abs(want)
		worst = math.Max(worst, d)
		if !(d <= 1e-6) {
			t.Errorf("%s: %.12g, want %.12g", what, got, want)
		}
	}
	for _, v := range [][3]string{{"income", "income_m", "1e6"}, {"age", "age", "1"}} {
		f, _ := strconv.ParseFloat(v[2], 64)
		a, b := perUnit(t, d, v[0]), perUnit(t, m, v[1])
		for _, kind := range []string{"average", "means", "profile"} {
			if len(a[kind]) != 2 || len(b[kind]) != 2 {
				t.Fatalf("%s %s: %d and %d effects", kind, v[0], len(a[kind]), len(b[kind]))
			}
			for j, e := range a[kind] {
				near(kind+" "+v[0]+" "+e.Category, b[kind][j].Effect, f*e.Effect)
				near(kind+" "+v[0]+" "+e.Category+" se", b[kind][j].SE, f*e.SE)
			}
		}
	}
	t.Logf("largest relative difference between the two scales: %.2g", worst)
}

const twoValuedPlan = `version: 1
title: a binary column coded 1/2 or 0/1
data: {file: tv.csv}
outcomes: [{column: y, categories: ["no", "yes"]}]
predictors: [%s, age]
models: {approaches: [cumulative], effects: [parallel], links: [logit]}
tests: {parallel_lines: []}
rules:
  - choose: {by: bic}
inference:
  marginal_effects: [average, means, profile]
  profile: {age: 30}
`

// TestTwoValuedEffectsAgainstGlm: a numeric column that takes two values
// is read as a change from the lower to the higher, whatever the values:
// sex12, coded 1/2, has the marginal effects "1 to 2" (the difference of
// the probabilities at 2 and at 1, not a derivative) and the odds ratio
// "2 against 1"; averaged, at the means and at a profile they equal base
// R glm's (testdata/rcheck/twovalued.R: p2 - p1 with the delta-method
// error by hand, and exp(b)) to 1e-6 relative, and those of the same
// column coded 0/1 ("0 to 1", "1 against 0") to 1e-8. Invented data,
// seeded.
func TestTwoValuedEffectsAgainstGlm(t *testing.T) {
	rscript.Require(t)
	rng := rand.New(rand.NewPCG(20261205, 21))
	var b strings.Builder
	b.WriteString("y,sex12,female,age\n")
	for i := 0; i < 400; i++ {
		f := rng.IntN(2)
		age := 20 + 50*rng.Float64()
		u := rng.Float64()
		y := "no"
		if -1.5+0.9*float64(f)+0.04*age+math.Log(u/(1-u)) > 0 {
			y = "yes"
		}
		fmt.Fprintf(&b, "%s,%d,%d,%.2f\n", y, f+1, f, age)
	}
	files := map[string]string{"tv.csv": b.String()}
	near, worst := agreeWithR(t, 1e-6)
	p := writePlan(t, fmt.Sprintf(twoValuedPlan, "sex12"), files)
	or12 := runPlan(t, p, 0).Outcomes[0]
	vals := rscript.Run(t, filepath.Dir(p.Path), "testdata/rcheck/twovalued.R")
	or01 := runPlan(t, writePlan(t, fmt.Sprintf(twoValuedPlan, "female"), files), 0).Outcomes[0]
	effects := func(or *OutcomeResult, name, change string) map[string][]slopeRow {
		out := map[string][]slopeRow{}
		for _, set := range or.Marginal {
			for _, e := range set.Effects {
				if e.Predictor == name {
					if !e.Discrete || e.Change != change {
						t.Fatalf("%s %s: %+v, want the change %q", set.Kind, name, e, change)
					}
					out[set.Kind] = append(out[set.Kind], slopeRow{e.Category, e.Effect, e.SE})
				}
			}
		}
		return out
	}
	got, coded01 := effects(or12, "sex12", "1 to 2"), effects(or01, "female", "0 to 1")
	seen := 0
	for _, kind := range []string{"average", "means", "profile"} {
		r := vals.Get(t, kind)
		if len(got[kind]) != 2 || len(coded01[kind]) != 2 {
			t.Fatalf("%s: %d and %d effects", kind, len(got[kind]), len(coded01[kind]))
		}
		for j, e := range got[kind] {
			sign := 1.0
			if e.Category == "no" {
				sign = -1
			}
			near(kind+" sex12 "+e.Category, e.Effect, sign*r[0], r[1])
			near(kind+" sex12 "+e.Category+" se", e.SE, r[1], 0)
			if c := coded01[kind][j]; math.Abs(c.Effect-e.Effect) > 1e-8*r[1] || math.Abs(c.SE-e.SE) > 1e-8*r[1] {
				t.Errorf("%s %s: coded 0/1 %g (se %g), coded 1/2 %g (se %g)", kind, e.Category, c.Effect, c.SE, e.Effect, e.SE)
			}
			seen++
		}
	}
	if seen != 6 {
		t.Errorf("%d effects compared, want 6", seen)
	}
	for _, c := range []struct {
		or           *OutcomeResult
		name, change string
	}{{or12, "sex12", "2 against 1"}, {or01, "female", "1 against 0"}} {
		k := slices.Index(c.or.Chosen.Result.ParamNames, c.name)
		rd := c.or.ColumnReadings()
		if k < 0 || rd[0].Column != c.name || rd[0].Change != c.change {
			t.Fatalf("%s: reading %+v, want %q", c.name, rd, c.change)
		}
		near(c.name+" odds ratio", math.Exp(c.or.Chosen.Result.Estimates[k]), vals.Get(t, "or")[0], 0)
	}
	t.Logf("largest relative difference from R: %.2g", *worst)
}
