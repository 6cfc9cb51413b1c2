package render

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/runner/fit"
)

// A likelihood-ratio statistic clearly below zero is shown with its value
// and why it has no p-value, in the report's nested tests and overall fit
// and in decisions.json (p null, negative true), never as p = 1. The case
// is constructed: the run's tests are made again from its fits with the
// larger model's log-likelihood lowered by hand below the smaller one's,
// as a fit that stopped short of its maximum would leave it.
func TestNegativeLikelihoodRatioShown(t *testing.T) {
	dir := t.TempDir()
	// Invented data: y from a cumulative logit in x1 and x2, seeded.
	rng := rand.New(rand.NewPCG(3, 17))
	var b strings.Builder
	b.WriteString("y,x1,x2\n")
	for range 300 {
		x1, x2 := rng.NormFloat64(), rng.NormFloat64()
		u := rng.Float64()
		z := math.Log(u/(1-u)) + 0.8*x1 - 0.5*x2
		y := 1
		if z > -0.5 {
			y = 2
		}
		if z > 0.8 {
			y = 3
		}
		fmt.Fprintf(&b, "%d,%.6f,%.6f\n", y, x1, x2)
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	src := `version: 1
title: Negative statistic
data: {file: d.csv}
outcomes: [{column: y, categories: ["1", "2", "3"]}]
predictors: [x1, x2]
models: {approaches: [cumulative], effects: [parallel, nonparallel], links: [logit]}
tests: {parallel_lines: [lr]}
rules:
  - reject_unconverged: true
  - choose: {by: aic}
`
	if err := os.WriteFile(filepath.Join(dir, "p.yaml"), []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	res := runPlan(t, filepath.Join(dir, "p.yaml"), 1)
	or := res.Outcomes[0]
	var small, large *fit.Result
	for _, f := range or.Fits {
		switch f.ID {
		case "cumulative/parallel/logit":
			small = f.Result
		case "cumulative/nonparallel/logit":
			large = f.Result
		}
	}
	if small == nil || large == nil || len(or.Tests) != 1 || len(or.Tests[0].Nested) != 1 || len(or.Overall) == 0 {
		t.Fatalf("the run lacks its fits or tests: %+v", or.Tests)
	}
	lowered := *large
	lowered.LogLik = small.LogLik - 2
	or.Tests[0].Nested[0].Test = fit.LRTest(small, &lowered)
	null := &fit.Result{Name: "thresholds only", Status: fit.StatusOK, NParams: 2, LogLik: or.Overall[0].NullLogLik}
	worse := *small
	worse.LogLik = null.LogLik - 1
	or.Overall[0].LR = fit.LRTest(null, &worse)
	or.Overall[0].LR.Name = "lr_vs_null"
	files := outputsOf(t, res)
	md, dec := string(files["report.md"]), string(files["decisions.json"])
	hasAll(t, "report.md", md,
		"| cumulative/parallel/logit within cumulative/nonparallel/logit | -4.000 | 2 | the statistic is negative (-4): the log-likelihood of cumulative/nonparallel/logit (",
		"so a fit did not reach its maximum or the models are not nested; no p-value |",
		"| -2.000 | 2 | none (below the table) |",
		"cumulative/parallel/logit against its thresholds-only model: the statistic is negative (-2): the log-likelihood of cumulative/parallel/logit (")
	hasAll(t, "decisions.json", dec, `"negative": true`, `"p": null`)
	if strings.Contains(md, "| -4.000 | 2 | 1.0000") || strings.Contains(md, "| -2.000 | 2 | 1.0000") {
		t.Error("a negative statistic shown with p = 1")
	}
}
