package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// binaryImputedData writes an invented data set of 150 rows (seed fixed):
// arm 0/1, x normal, g a, b or c, y "no"/"yes" from a logistic model in
// arm and x, a fifth of x missing.
func binaryImputedData(t *testing.T, dir string) {
	t.Helper()
	rng := rand.New(rand.NewPCG(20261205, 1))
	var b strings.Builder
	b.WriteString("y,arm,x,g\n")
	for i := 0; i < 150; i++ {
		arm := rng.IntN(2)
		x := rng.NormFloat64()
		y := "no"
		if rng.Float64() < 1/(1+math.Exp(-(-0.2+0.7*float64(arm)+0.5*x))) {
			y = "yes"
		}
		xs := fmt.Sprintf("%.3f", x)
		if rng.Float64() < 0.2 {
			xs = ""
		}
		fmt.Fprintf(&b, "%s,%d,%s,%c\n", y, arm, xs, "abc"[rng.IntN(3)])
	}
	if err := os.WriteFile(filepath.Join(dir, "data.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// binaryImputedPlan is a plan of a two-category outcome whose missing
// values are handled by missing (impute: imputed here; drop with the
// imputed sets of file), with the default parallel-lines tests.
func binaryImputedPlan(missing, imputed string) string {
	return `version: 1
title: Two categories, imputed
seed: 5
data:
  file: data.csv
  missing: ` + missing + `
` + imputed + `outcomes:
  - column: y
    categories: ["no", "yes"]
predictors: [arm, x]
dictionary:
  arm: {values: [0, 1]}
  x: {range: [-10, 10]}
models:
  approaches: [cumulative]
  effects: [parallel]
  links: [logit]
rules:
  - reject_unconverged: true
  - choose: {by: aic}
inference:
  hypotheses: ["arm = 0"]
assumptions:
  n: 120
  missing:
    x: {proportion: 0.2}
  predictors:
    arm: {proportions: [0.5, 0.5]}
    x: {mean: 0, sd: 1}
  outcomes:
    y:
      proportions: [0.6, 0.4]
      effects: {arm: 0.5, x: 0.3}
`
}

// A two-category outcome has one boundary, so the parallel-lines tests
// have nothing to test: run, rehearse and power on imputed data (imputed
// by the plan, or read as stacked imputed sets) say so, as on one data
// set, by one decision (runner.OutcomeResult.OneBoundary): run warns of
// it, the reports say it, table-tests records each test as not computed;
// and they finish: a Wald test of no restrictions (a test rule, the
// stepwise selection) is refused with a reason, never an internal error;
// no temporary folder is left.
func TestBinaryOutcomeImputed(t *testing.T) {
	dir := t.TempDir()
	tmp := t.TempDir()
	t.Setenv("TMPDIR", tmp)
	binaryImputedData(t, dir)
	write := func(name, src string) string { return writeIn(t, dir, name, src) }
	imp := write("imp.yaml", binaryImputedPlan("impute", "  imputation: {sets: 3, iterations: 3, write_sets: true}\n"))
	const warn = "the parallel-lines tests have nothing to test and are not computed"
	check := func(what string, code int, errs string, out string) {
		t.Helper()
		if code != 0 || strings.Contains(errs, "internal error") || strings.Contains(errs, "panic") {
			t.Fatalf("%s: exit %d\n%s", what, code, errs)
		}
		if strings.HasPrefix(what, "run") && !strings.Contains(errs, warn) {
			t.Errorf("%s: no warning %q in\n%s", what, warn, errs)
		}
		if out != "" {
			tests, err := os.ReadFile(filepath.Join(out, "table-tests-y.csv"))
			if err != nil {
				t.Fatal(err)
			}
			// On imputed data the table has a column df2 more (f, df, df2, p).
			const why = `"two categories, one boundary: the parallel-lines assumption has nothing to test"`
			if !strings.Contains(string(tests), `parallel_lines,cumulative,logit,all predictors,wald,,,,`+why) && !strings.Contains(string(tests), `parallel_lines,cumulative,logit,all predictors,wald,,,,,`+why) {
				t.Errorf("%s: the Wald test is not recorded as not computed:\n%s", what, tests)
			}
			report, err := os.ReadFile(filepath.Join(out, "report.md"))
			if err != nil {
				t.Fatal(err)
			}
			if !strings.Contains(string(report), "the parallel-lines assumption has nothing to test. The tests the plan asks for were not computed for this outcome.") {
				t.Errorf("%s: the report does not say the tests were not computed", what)
			}
		}
	}
	out := filepath.Join(dir, "out")
	_, errs, code := runCLI("run", imp, "--out", out, "--quiet")
	check("run, missing: impute", code, errs, out)

	// On one data set (incomplete rows dropped) the same decision.
	one := write("one.yaml", binaryImputedPlan("drop", ""))
	out1 := filepath.Join(dir, "out1")
	_, errs, code = runCLI("run", one, "--out", out1, "--quiet")
	check("run, missing: drop", code, errs, out1)

	stacked := write("stacked.yaml", binaryImputedPlan("drop", "  imputed: {file: out/imputed-sets-y.csv, column: imputed_set}\n"))
	out2 := filepath.Join(dir, "out2")
	_, errs, code = runCLI("run", stacked, "--out", out2, "--quiet")
	check("run, data.imputed", code, errs, out2)

	reh := filepath.Join(dir, "reh")
	_, errs, code = runCLI("rehearse", imp, "--out", reh, "--quiet")
	check("rehearse, missing: impute", code, errs, reh)

	pw := filepath.Join(dir, "pw")
	stdout, errs, code := runCLI("power", imp, "--n", "80", "--replicates", "3", "--out", pw, "--quiet")
	check("power, missing: impute", code, errs, "")
	if !strings.Contains(stdout, "y n=80: arm = 0: power") {
		t.Errorf("power: %s", stdout)
	}

	// The other pooled paths that read a Wald test's restrictions: the
	// stepwise selection of the partial set (which once panicked in its
	// own goroutine), a test rule, the hypotheses, the pairs of levels of
	// a categorical predictor and the term tests; with every
	// parallel-lines test.
	wide := strings.NewReplacer("predictors: [arm, x]", "predictors: [arm, x, g]\ncategorical:\n  g: {levels: [a, b, c]}",
		"  x: {range: [-10, 10]}", "  x: {range: [-10, 10]}\n  g: {label: group}",
		"  effects: [parallel]", "  effects: [parallel, partial, nonparallel]\n  partial:\n    select: {test: wald}",
		"  - choose: {by: aic}", "  - reject_if_test_rejects: {test: wald, alpha: 0.05, against: each_less_constrained}\n  - choose: {by: aic}",
		`hypotheses: ["arm = 0"]`, `hypotheses: ["arm = 0", "x = 0"]`+"\n  level_pairs: {predictors: [g]}",
		"rules:", "tests:\n  parallel_lines: [wald, lr, score, brant, wolfe_gould]\nrules:").Replace(binaryImputedPlan("impute", "  imputation: {sets: 3, iterations: 3}\n"))
	all := write("all.yaml", wide)
	out3 := filepath.Join(dir, "out3")
	_, errs, code = runCLI("run", all, "--out", out3, "--quiet")
	check("run, stepwise, test rule, level pairs", code, errs, out3)
	report, err := os.ReadFile(filepath.Join(out3, "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"Stepwise selection of the partial set, cumulative logit", "Tests of each term of cumulative/parallel/logit", "### Pairs of levels of g"} {
		if !strings.Contains(string(report), want) {
			t.Errorf("the report lacks %q", want)
		}
	}
	if entries, _ := os.ReadDir(tmp); len(entries) > 0 {
		t.Errorf("%d entries left in the temporary folder, first %s", len(entries), entries[0].Name())
	}
}
