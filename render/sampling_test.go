package render

import (
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"

	"ordplan/internal/testsurvey"
	"ordplan/runner"
)

// TestImputedSamplingReport: on imputed sets with sampling weights the
// report shows the likelihood-based parallel-lines tests as not computed,
// with the reason, and its methods paragraph says only the Wald tests were
// run, as on one data set.
func TestImputedSamplingReport(t *testing.T) {
	dir := t.TempDir()
	sv := testsurvey.Report.Imputed(rand.New(rand.NewPCG(31, 4)), testsurvey.ImputedOptions{Rows: 240, Sets: 3, Missing: 0.25, Digits: 5})
	weighted := func(s string) []byte { return withWeights(s, func(int) float64 { return 0.7 }) }
	os.WriteFile(filepath.Join(dir, "orig.csv"), weighted(sv.Orig), 0o644)
	os.WriteFile(filepath.Join(dir, "stacked.csv"), weighted(sv.Stacked), 0o644)
	src := `version: 1
title: imputed survey, sampling weights
data: {file: orig.csv, imputed: {file: stacked.csv, column: imp}, weights: w, weight_kind: sampling}
outcomes: [{column: y}]
predictors: [x1, x2]
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: [lr, wald, score, brant]}
rules:
  - reject_if_test_rejects: {test: wald}
  - choose: {by: tic}
`
	files := renderSource(t, dir, src, 2)
	md := string(files["report.md"])
	const why = "not computed: not valid with sampling weights: the fits maximize a pseudo-likelihood; use the Wald test"
	hasAll(t, "report.md", md,
		"| Standard errors | observed in the plan; sandwich used, as sampling weights require |",
		"| Likelihood ratio (all predictors) |  | "+why+" |",
		"| Score (all predictors) |  | "+why+" |",
		"| Brant (all predictors) |  | "+why+" |",
		"| cumulative/parallel/logit within cumulative/nonparallel/logit |  | "+why+" |",
		"The parallel-lines assumption was tested by Wald tests (alpha = 0.05), overall and for each predictor.",
		"The likelihood-ratio, score and Brant tests of the parallel-lines assumption the plan asks for were not computed: with sampling weights",
		// The Summary: the choice rests on TIC averaged over the sets
		// and on the pooled Wald tests.
		"This choice rests on the 3 imputed sets taken together: the rules compared TIC averaged over the sets (the mean of each set's value) and read Wald tests (D1) pooled over the sets, so that no one set's fit made it (see Multiple imputation).",
	)
	for _, bad := range []string{"(pooled, D3) |", "Brant (all predictors) (pooled, D1)", "Score (all predictors) (pooled, D2)"} {
		if strings.Contains(md, bad) {
			t.Errorf("report.md shows a likelihood-based test under sampling weights: %q", bad)
		}
	}
	hasAll(t, "decisions.json", string(files["decisions.json"]), "not valid with sampling weights")
}

// TestImputedSamplingReportSaysNothingPooledByLikelihood: on imputed sets
// with sampling weights no likelihood-ratio or goodness-of-fit statistic
// is a test, so no paragraph, note or methods sentence may say one was
// pooled by D3 or D2 (the tables beside them say "not a test"), and the
// candidates table and its chart say AIC and BIC are descriptive only.
func TestImputedSamplingReportSaysNothingPooledByLikelihood(t *testing.T) {
	dir := t.TempDir()
	sv := testsurvey.Report.Imputed(rand.New(rand.NewPCG(31, 4)), testsurvey.ImputedOptions{Rows: 240, Sets: 3, Missing: 0.25, Digits: 5})
	weighted := func(s string) []byte { return withWeights(s, func(i int) float64 { return 0.5 + float64(i%4)/2 }) }
	os.WriteFile(filepath.Join(dir, "orig.csv"), weighted(sv.Orig), 0o644)
	os.WriteFile(filepath.Join(dir, "stacked.csv"), weighted(sv.Stacked), 0o644)
	src := `version: 1
title: imputed survey, sampling weights
data: {file: orig.csv, imputed: {file: stacked.csv, column: imp}, weights: w, weight_kind: sampling}
outcomes: [{column: y}]
predictors: [x1, x2]
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: [wald]}
rules:
  - choose: {by: tic}
`
	files := renderSource(t, dir, src, 2)
	md := string(files["report.md"])
	if !strings.Contains(md, "| not a test |") {
		t.Fatal("the overall-fit table no longer shows the likelihood-ratio statistics as not tests; the test is out of date")
	}
	if strings.Contains(md, "the likelihood-ratio test that every slope is zero") || !strings.Contains(md, "the likelihood-ratio statistic of every slope being zero (not a test here") {
		t.Error("the overall-fit paragraph calls the statistic beside a table of 'not a test' a likelihood-ratio test")
	}
	for _, bad := range []string{"pooled by D3", "pooled by the D3", "pooled by D2", "by the D2 rule", "by a likelihood-ratio test", "checked with the Lipsitz test"} {
		if strings.Contains(md, bad) {
			t.Errorf("report.md says %q under sampling weights, where no likelihood-ratio or goodness-of-fit statistic is a test", bad)
		}
	}
	hasAll(t, "report.md", md,
		runner.SamplingCriteriaNote,
		"Under sampling weights both are descriptive only",
		"fitted by maximum pseudo-likelihood with the sampling weights of `w`",
		"Under sampling weights "+runner.SamplingPoolingText()+".",
		"Tests on imputed data under sampling weights: "+runner.SamplingPoolingText(),
		runner.SamplingTestsText(),
	)
	// The one list of the tests that ignore the design names every test
	// that is not computed or not a test here.
	for _, name := range []string{"Brant", "likelihood-ratio", "score", "Wolfe-Gould", "Lipsitz", "Pulkstenis-Robinson"} {
		if !slices.Contains(runner.SamplingIgnoredTests(), name) || !strings.Contains(runner.SamplingTestsText(), name) {
			t.Errorf("the tests that ignore a sampling design leave out %s: %v", name, runner.SamplingIgnoredTests())
		}
	}
	if slices.Contains(runner.SamplingIgnoredTests(), "Wald") {
		t.Error("the Wald test with the sandwich covariance is listed among the tests that ignore a sampling design")
	}
	dec := string(files["decisions.json"])
	hasAll(t, "decisions.json", dec, `"method": "none"`, "Rubin's rules with Barnard-Rubin degrees of freedom; "+runner.SamplingPoolingText())
	if strings.Contains(dec, "likelihood-ratio tests pooled by D3") {
		t.Error("decisions.json's imputation method says likelihood-ratio tests were pooled by D3 under sampling weights")
	}
}

// TestSamplingPatternSplitShowsNoStatistic: under sampling weights the
// Pulkstenis-Robinson statistics are not tests and carry no value; the
// report says they were not computed instead of printing a statistic of
// 0.000 beside a table whose observed and expected counts differ.
func TestSamplingPatternSplitShowsNoStatistic(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(5, 17))
	var b strings.Builder
	b.WriteString("y,x,g,w\n")
	for i := 0; i < 300; i++ {
		y, x, g := testsurvey.Grouped(rng)
		fmt.Fprintf(&b, "%d,%.6f,%s,%.3f\n", y, x, testsurvey.Levels[g], 0.5+2*rng.Float64())
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
	src := `version: 1
title: grouped survey, sampling weights
data: {file: d.csv, weights: w, weight_kind: sampling}
outcomes: [{column: y}]
categorical: {g: {levels: [` + strings.Join(testsurvey.Levels, ", ") + `]}}
predictors: [x, g]
models: {approaches: [cumulative], effects: [parallel]}
rules:
  - choose: {by: tic}
`
	md := string(renderSource(t, dir, src, 2)["report.md"])
	hasAll(t, "report.md", md, "#### Tests by covariate pattern (Pulkstenis-Robinson)",
		"Pearson: not computed, the weights are sampling weights", "Deviance: not computed, the weights are sampling weights")
	if strings.Contains(md, "statistic 0.000") {
		t.Error("report.md prints a Pulkstenis-Robinson statistic of 0.000 under sampling weights")
	}
	// The observed counts are sums of weights: written with one decimal,
	// as the expected counts beside them and the groups' sizes.
	for _, caption := range []string{"Observed and expected counts by group of predicted score", "Observed and expected counts by covariate pattern and half of predicted score"} {
		i := strings.Index(md, caption)
		if i < 0 {
			t.Fatalf("report.md has no table %q", caption)
		}
		lines := strings.Split(md[i:], "\n")
		for _, l := range lines[4:7] {
			cells := strings.Split(strings.Trim(l, "| "), " | ")
			for _, c := range cells[2:] {
				if !regexp.MustCompile(`^-?[0-9]+\.[0-9]$`).MatchString(c) {
					t.Errorf("%s: cell %q of %q is not a count with one decimal", caption, c, l)
				}
			}
		}
	}
}

// TestCountText: whole counts are written as they are; when any count of
// the table is not whole (sums of sampling weights, means over imputed
// sets) every count has one decimal.
func TestCountText(t *testing.T) {
	if f := countText([][]float64{{3, 12}, {0, 7}}, []float64{15, 7}); f(12) != "12" {
		t.Errorf("whole counts: %q", f(12))
	}
	f := countText([][]float64{{59.6968, 12}}, []float64{71.6968})
	if f(59.6968) != "59.7" || f(12) != "12.0" {
		t.Errorf("counts of weights: %q %q", f(59.6968), f(12))
	}
}

// withWeights is the CSV text s with a column w, w(i) on data line i (the
// header is line 0).
func withWeights(s string, w func(i int) float64) []byte {
	lines := strings.Split(strings.TrimRight(s, "\n"), "\n")
	for i := range lines {
		if i == 0 {
			lines[i] += ",w"
		} else {
			lines[i] += fmt.Sprintf(",%g", w(i))
		}
	}
	return []byte(strings.Join(lines, "\n") + "\n")
}
