package render

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestChosenModelWithNegativeProbabilities: a plan without the rule
// reject_negative_probabilities may choose a cumulative nonparallel model
// whose cumulative probabilities cross inside the data. The summary and
// the chosen model's section say so, with the number of rows; that number
// is counted here by hand from the chosen model's estimates (a row counts
// when P(y <= a) = F(tau1 - b1 x) exceeds P(y <= b) = F(tau2 - b2 x)).
// The data are invented: y from a stage model whose slopes have opposite
// signs at the two boundaries (seeded), x on a grid over [-3, 3].
func TestChosenModelWithNegativeProbabilities(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(5, 11))
	logistic := func(z float64) float64 { return 1 / (1 + math.Exp(-z)) }
	var b strings.Builder
	b.WriteString("x,y\n")
	const n = 400
	xs := make([]float64, n)
	for i := range n {
		x := -3 + 6*float64(i)/(n-1)
		xs[i] = x
		y := "c"
		switch {
		case rng.Float64() < logistic(-0.5+1.5*x):
			y = "a"
		case rng.Float64() < logistic(0.2-1.5*x):
			y = "b"
		}
		fmt.Fprintf(&b, "%.17g,%s\n", x, y)
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	src := `version: 1
title: Crossing
data: {file: d.csv}
outcomes: [{column: y, categories: [a, b, c]}]
predictors: [x]
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
	if or.Chosen == nil || or.Chosen.ID != "cumulative/nonparallel/logit" {
		t.Fatalf("chosen %v: %s", or.Chosen, or.Choice)
	}
	fr := or.Chosen.Result
	est := map[string]float64{}
	for i, name := range fr.ParamNames {
		est[name] = fr.Estimates[i]
	}
	negative := 0
	for _, x := range xs {
		if logistic(est["tau[1]"]-est["x[1]"]*x) > logistic(est["tau[2]"]-est["x[2]"]*x) {
			negative++
		}
	}
	if negative == 0 || negative != fr.NegativeRows {
		t.Fatalf("rows with crossing probabilities: %d by hand, %d in the fit", negative, fr.NegativeRows)
	}
	md := string(outputsOf(t, res)["report.md"])
	rows := fmt.Sprintf("predicts a negative category probability for %d of %d rows used", negative, n)
	summary := md[strings.Index(md, "## Summary"):strings.Index(md, "## The plan")]
	if !strings.Contains(summary, "**This model "+rows+"**") {
		t.Errorf("the summary does not say the chosen model's probabilities are negative for %d rows:\n%s", negative, summary)
	}
	chosen := md[strings.Index(md, "### The chosen model"):]
	chosen = chosen[:strings.Index(chosen, "**Table")]
	if !strings.Contains(chosen, "**Warning:** this model "+rows) || !strings.Contains(chosen, "The plan has no reject_negative_probabilities rule") {
		t.Errorf("the chosen model's section has no warning:\n%s", chosen)
	}
}
