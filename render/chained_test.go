package render

import (
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/internal/testsurvey"
)

// TestChainedReport: a run that imputes by chained equations states the
// method, the sets, iterations and seed, each column's model, the
// convergence table it asked for and the missing-at-random assumption,
// and the methods paragraph cites the sources of the method.
func TestChainedReport(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(8, 2))
	var b strings.Builder
	b.WriteString("y,x1,x2\n")
	for i := 0; i < 200; i++ {
		y, x1, x2 := testsurvey.Report.Row(rng)
		if rng.Float64() < 0.1*float64(y) {
			fmt.Fprintf(&b, "%d,%.5f,\n", y, x1)
		} else {
			fmt.Fprintf(&b, "%d,%.5f,%.5f\n", y, x1, x2)
		}
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
	src := `version: 1
title: imputed here
seed: 5
data: {file: d.csv, missing: impute, imputation: {sets: 3, iterations: 2, convergence_table: true}}
outcomes: [{column: y}]
predictors: [x1, x2]
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: [lr]}
rules:
  - choose: {by: bic}
`
	md := string(renderSource(t, dir, src, 2)["report.md"])
	hasAll(t, "report.md", md,
		"imputed by this run from `d.csv`, as described below",
		"The imputed sets were made by this run by chained equations (fully conditional specification; van Buuren 2018): 3 sets, each after 2 iterations through the incomplete columns, with seed 5",
		"| `x2` | numeric |",
		"predictive mean matching (5 donors)",
		"Imputed values by iteration",
		"Multiple imputation assumes that the values are missing at random given the columns in the imputation models",
		"were multiply imputed by chained equations [1, 2]: 3 imputed sets, each after 2 iterations (seed 5), with predictive mean matching with 5 donors [3] for x2",
		"[3] Little, R.J.A. (1988). Missing-data adjustments in large surveys.",
	)
	if strings.Contains(md, "The imputation models hold main effects only") {
		t.Error("the caution about terms the imputation models lack is given for a plan of main effects")
	}
	// With an interaction and a curve among the terms, the methods
	// paragraph cautions that the imputation models (main effects only)
	// do not carry them.
	src = strings.Replace(src, "predictors: [x1, x2]", "predictors: [x1, {name: x2q, column: x2, polynomial: {degree: 2}}, {name: x1x2, interact: [x1, x2q]}]", 1)
	files := renderSource(t, dir, src, 2)
	want := "The imputation models hold main effects only (each column linear in the others), while the analysis has the interaction x1x2 and the nonlinear term x2q (polynomial); as these terms were computed from values imputed without them, their estimates can be biased toward zero (toward no interaction and no curvature)."
	hasAll(t, "report.md", string(files["report.md"]), want)
}
