package runner

import (
	"fmt"
	"math/rand/v2"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/internal/rscript"
)

const stagePairsPlan = `version: 1
title: pairs of arms in a stage model with an interaction
data: {file: d.csv, weights: w}
outcomes: [{column: y, categories: ["1", "2", "3", "4"]}]
categorical:
  sex: {levels: [F, M], coding: sum}
  arm: {levels: [placebo, low dose, high-dose], reference: low dose}
predictors:
  - sex
  - arm
  - {name: dosec, column: dose, centre: 30}
  - {interact: [arm, dosec]}
models: {approaches: [stage], effects: [parallel], links: [logit]}
tests: {parallel_lines: []}
rules:
  - choose: {by: bic}
inference:
  marginal_effects: [average]
  level_pairs: {predictors: [arm]}
`

// stagePairsData invents 400 rows of a four-category outcome on sex, arm
// and dose, with frequency weights 1 to 3 (seeded).
func stagePairsData() string {
	rng := rand.New(rand.NewPCG(21, 4))
	var b strings.Builder
	b.WriteString("y,sex,arm,dose,w\n")
	arms := []string{"placebo", "low dose", "high-dose"}
	for range 400 {
		sex, arm, dose := rng.IntN(2), rng.IntN(3), 10+40*rng.Float64()
		z := 0.3*float64(sex) + 0.5*float64(arm) + 0.02*(dose-30) + 0.02*(dose-30)*float64(arm) + rng.NormFloat64()
		y := 1
		for _, c := range []float64{-0.5, 0.4, 1.2} {
			if z > c {
				y++
			}
		}
		fmt.Fprintf(&b, "%d,%s,%s,%.2f,%d\n", y, []string{"F", "M"}[sex], arms[arm], dose, 1+rng.IntN(3))
	}
	return b.String()
}

// TestStageLevelPairsAgainstGlm checks the pairs of levels of a categorical
// predictor that enters an interaction with a centred column, in a forward
// stage logit model of four categories with frequency weights and another
// categorical predictor in sum-to-zero coding, against base R's glm: the
// model is one binary glm on the expanded data (an intercept per stage),
// and each pair's difference, for every category, is the weighted mean of
// the stage model's probabilities from glm's coefficients with every row's
// arm set to b less that with it set to a, its delta-method error from
// glm's vcov (testdata/rcheck/slopesdelta.R, then stagepairs.R; invented
// data, stagePairsData). The pairs from the reference are the average
// marginal effects. Measured agreement is logged; the limit is 1e-6
// relative.
func TestStageLevelPairsAgainstGlm(t *testing.T) {
	rscript.Require(t)
	p := writePlan(t, stagePairsPlan, map[string]string{"d.csv": stagePairsData()})
	or := runPlan(t, p, 0).Outcomes[0]
	vals := rscript.Run(t, filepath.Dir(p.Path), "testdata/rcheck/slopesdelta.R", "testdata/rcheck/stagepairs.R")
	near, worst := agreeWithR(t, 1e-6)
	if or.Chosen == nil || or.Chosen.Result == nil {
		t.Fatal("no chosen model")
	}
	near("log-likelihood", or.Chosen.Result.LogLik, vals.Get(t, "loglik")[0], 0)
	if len(or.LevelPairs) != 1 || or.LevelPairs[0].Effects.Error != "" {
		t.Fatalf("pairs of arm: %+v", or.LevelPairs)
	}
	code := map[string]string{"placebo": "P", "low dose": "L", "high-dose": "H"}
	seen := 0
	for _, e := range or.LevelPairs[0].Effects.Effects {
		a, b, _ := strings.Cut(e.Change, " to ")
		r := vals.Get(t, "pair_"+code[a]+"_"+code[b])
		j := int(e.Category[0] - '1')
		near(e.Change+" "+e.Category, e.Effect, r[j], r[4+j])
		near(e.Change+" "+e.Category+" se", e.SE, r[4+j], 0)
		seen++
	}
	if seen != 12 {
		t.Errorf("%d differences compared, want 3 pairs of 4 categories", seen)
	}
	for _, set := range or.Marginal {
		for _, e := range set.Effects {
			if e.Predictor != "arm" {
				continue
			}
			a, b, _ := strings.Cut(e.Change, " to ")
			r := vals.Get(t, "pair_"+code[a]+"_"+code[b])
			j := int(e.Category[0] - '1')
			near("average marginal effect "+e.Change+" "+e.Category, e.Effect, r[j], r[4+j])
			seen++
		}
	}
	if seen != 20 {
		t.Errorf("%d values compared, want 12 differences and 8 average marginal effects of arm", seen)
	}
	t.Logf("largest relative difference from R: %.2g", *worst)
}
