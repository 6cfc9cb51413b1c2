package render

import (
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/internal/testsurvey"
)

// TestImputedSamplingReport: on imputed sets with sampling weights the
// report shows the likelihood-based parallel-lines tests as not computed,
// with the reason, and its methods paragraph says only the Wald tests were
// run, as on one data set.
func TestImputedSamplingReport(t *testing.T) {
	dir := t.TempDir()
	sv := testsurvey.Report.Imputed(rand.New(rand.NewPCG(31, 4)), testsurvey.ImputedOptions{Rows: 240, Sets: 3, Missing: 0.25, Digits: 5})
	weighted := func(s string) []byte {
		lines := strings.Split(strings.TrimRight(s, "\n"), "\n")
		for i := range lines {
			if i == 0 {
				lines[i] += ",w"
			} else {
				lines[i] += ",0.7"
			}
		}
		return []byte(strings.Join(lines, "\n") + "\n")
	}
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
		"| Likelihood ratio (all predictors) |  |  | "+why+" |",
		"| Score (all predictors) |  |  | "+why+" |",
		"| Brant (all predictors) |  |  | "+why+" |",
		"| cumulative/parallel/logit within cumulative/nonparallel/logit |  |  | "+why+" |",
		"The parallel-lines assumption was tested by Wald tests (alpha = 0.05), overall and for each predictor.",
		"The likelihood-ratio, score and Brant tests of the parallel-lines assumption the plan asks for were not computed: with sampling weights",
	)
	for _, bad := range []string{"(pooled, D3) |", "Brant (all predictors) (pooled, D1)", "Score (all predictors) (pooled, D2)"} {
		if strings.Contains(md, bad) {
			t.Errorf("report.md shows a likelihood-based test under sampling weights: %q", bad)
		}
	}
	hasAll(t, "decisions.json", string(files["decisions.json"]), "not valid with sampling weights")
}
