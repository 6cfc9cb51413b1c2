package render

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/runner/fit"
)

// TestBinaryOutcomeReport: with two categories every effect structure and
// every comparison of one link is the same binary regression (checked
// here: equal log-likelihoods), so the report says the parallel-lines
// assumption has nothing to test instead of tables of tests not computed,
// has no section of effects across boundaries (one boundary), does not
// claim in its methods that the parallel-lines assumption was tested, and
// leaves out the limits about parallel-lines tests and crossing
// probabilities. The data are invented (x, g on a fixed pattern).
func TestBinaryOutcomeReport(t *testing.T) {
	dir := binaryData(t)
	src := `version: 1
data: {file: d.csv}
outcomes: [{column: y, categories: ["no", "yes"]}]
predictors: [x, g]
models: {approaches: [cumulative, stage, adjacent], effects: [parallel, nonparallel], links: [logit, cloglog]}
tests: {parallel_lines: [lr, wald, score]}
rules:
  - reject_unconverged: true
  - reject_if_test_rejects: {test: lr}
  - choose: {by: aic}
`
	if err := os.WriteFile(filepath.Join(dir, "p.yaml"), []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	res := runPlan(t, filepath.Join(dir, "p.yaml"), 1)
	or := res.Outcomes[0]
	for _, l := range []fit.Link{fit.Logit, fit.Cloglog} {
		ref := or.Cell(fit.Cumulative, fit.ParallelEffects, l).Result.LogLik
		for _, a := range []fit.Comparison{fit.Cumulative, fit.Stage, fit.Adjacent} {
			for _, e := range []fit.Structure{fit.ParallelEffects, fit.NonparallelEffects} {
				if ll := or.Cell(a, e, l).Result.LogLik; math.Abs(ll-ref) > 1e-8*math.Abs(ref) {
					t.Errorf("%s/%s/%s: log-likelihood %v, cumulative/parallel %v: not the same binary regression", a, e, l, ll, ref)
				}
			}
		}
	}
	md := string(outputsOf(t, res)["report.md"])
	tests := md[strings.Index(md, "### Tests of the parallel-lines assumption"):strings.Index(md, "### Decision log")]
	if !strings.Contains(tests, oneBoundary) || strings.Contains(tests, "**Table") {
		t.Errorf("tests section:\n%s", tests)
	}
	if strings.Contains(md, "Effects across boundaries") {
		t.Errorf("a section of effects across boundaries for one boundary")
	}
	methods := md[strings.Index(md, "## Methods"):strings.Index(md, "## Reproducibility")]
	if strings.Contains(methods, "The parallel-lines assumption was tested") || !strings.Contains(methods, "no parallel-lines test was computed") {
		t.Errorf("methods:\n%s", methods)
	}
	// The grid is one binary regression under each link, fitted once per
	// comparison and effect structure: the methods say so instead of
	// naming ordinal comparisons and effects across boundaries, and name
	// no source of an ordinal model; without interactions, no sentence on
	// them; the odds ratios have one boundary, no "other boundaries".
	hasAll(t, "methods", methods,
		"was analysed with binary regression models (with two ordered categories the plan's ordinal models reduce to them)",
		"With two categories rule (2) had no restriction to test (the models it compares are the same model) and rejected none.",
		"were binary regressions of yes against no with each of the logit and cloglog links: with two categories the outcome has a single category boundary, so the plan's cumulative, stage and adjacent comparisons with parallel and nonparallel effects are all that one model, fitted 6 times under each link, and the candidates differ only in their link.")
	for _, bad := range []string{"ordinal regression models", "cumulative logits", "cumulative probabilities", "continuation-ratio", "adjacent-category", "McCullagh", "Fienberg", "Agresti", "interaction"} {
		if strings.Contains(methods, bad) {
			t.Errorf("methods hold %q:\n%s", bad, methods)
		}
	}
	// Logit and cloglog links (outcomes of three or more categories): the
	// cumulative comparisons are not called logits, and the proportional
	// odds model is the logit link's.
	if w := cumulativeWords([]fit.Link{fit.Logit, fit.Cloglog}); w != "cumulative probabilities through each link (under the logit link with parallel effects, the proportional odds model)" {
		t.Errorf("logit and cloglog: %q", w)
	}
	if w := cumulativeWords([]fit.Link{fit.Probit}); w != "cumulative probabilities through the link" {
		t.Errorf("probit alone: %q", w)
	}
	limits := md[strings.Index(md, "## Assumptions and limits"):strings.Index(md, "## Methods")]
	if strings.Contains(limits, "Tests of the parallel-lines assumption reject easily") || strings.Contains(limits, "negative category probabilities") {
		t.Errorf("limits:\n%s", limits)
	}
	models := md[strings.Index(md, "### The models"):strings.Index(md, "### Overall fit")]
	if !strings.Contains(models, "The cumulative, stage and adjacent comparisons are the same model too") {
		t.Errorf("models:\n%s", models)
	}
}

// With two categories, the methods of a stepwise selection and of partial
// models say what one boundary makes of them: nothing to select, the same
// model as parallel effects; not that effects differ across boundaries.
func TestBinaryStepwiseMethods(t *testing.T) {
	dir := binaryData(t)
	src := `version: 1
data: {file: d.csv}
outcomes: [{column: y, categories: ["no", "yes"]}]
predictors: [x, g]
models:
  approaches: [cumulative]
  effects: [parallel, partial]
  links: [logit]
  partial: {select: {method: stepwise, alpha: 0.05, test: wald}}
rules:
  - choose: {by: aic}
`
	md := string(renderSource(t, dir, src, 1)["report.md"])
	methods := md[strings.Index(md, "## Methods"):strings.Index(md, "## Reproducibility")]
	hasAll(t, "methods", methods,
		"were binary regressions of yes against no with the logit link: with two categories the outcome has a single category boundary, so the plan's grid holds that one model.",
		"had nothing to test: with one category boundary each predictor has a single slope, so no parallel constraint could be tested or imposed.")
	for _, bad := range []string{"free to differ across category boundaries", "it left", "constrained", "Peterson"} {
		if strings.Contains(methods, bad) {
			t.Errorf("methods hold %q:\n%s", bad, methods)
		}
	}
	// The odds ratios of the chosen logit model have one boundary, named
	// in their table, and the tests of each term do not speak of every
	// boundary.
	if !strings.Contains(md, "| x | per unit of x | no/yes |") || strings.Contains(md, "are 0 at every boundary") {
		t.Errorf("odds ratios table or term tests of one boundary:\n%s", md)
	}
	if strings.Contains(md, "likewise at the other boundaries") || !strings.Contains(md, "the factor by which it multiplies the odds of yes against no (with two categories, one boundary, the cumulative odds ratio is this plain odds ratio); above 1 the outcome moves towards yes.") {
		t.Errorf("odds ratios of one boundary:\n%s", md)
	}
}

// binaryData writes d.csv, 160 invented rows of x, g (a fixed pattern)
// and a two-category y, into a new folder, and returns the folder.
func binaryData(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("x,g,y\n")
	for i := range 160 {
		fmt.Fprintf(&b, "%d,%d,%s\n", i%9, i%2, []string{"no", "yes"}[(i*7+i%9+i%2)%5/3])
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return dir
}

// With two categories the pairs of levels name the one boundary, not
// "every boundary", in their table and paragraph.
func TestBinaryLevelPairsOneBoundary(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("x,g,y\n")
	for i := range 180 {
		fmt.Fprintf(&b, "%d,%s,%s\n", i%9, []string{"a", "b", "c"}[i%3], []string{"no", "yes"}[(i*7+i%9+i%3)%5/3])
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	src := `version: 1
data: {file: d.csv}
outcomes: [{column: y, categories: ["no", "yes"]}]
categorical:
  g: {levels: [a, b, c]}
predictors: [x, g]
models: {approaches: [cumulative], effects: [parallel], links: [logit]}
rules:
  - choose: {by: aic}
inference:
  level_pairs: {predictors: [g]}
`
	md := string(renderSource(t, dir, src, 1)["report.md"])
	hasAll(t, "report.md", md, "| c against b | no/yes |", "(whatever their coding), at the one boundary, with")
	if strings.Contains(md, "one value at every boundary when those columns are parallel") || strings.Contains(md, "| every boundary |") {
		t.Errorf("pairs of levels of one boundary speak of every boundary:\n%s", md)
	}
}
