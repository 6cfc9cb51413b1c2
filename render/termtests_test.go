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

// termData writes d.csv into dir: invented (seeded) four-category y from
// a cumulative logit in x and the levels of g (a, b, c), whose effects
// shrink across the boundaries.
func termData(t *testing.T, dir string) {
	t.Helper()
	rng := rand.New(rand.NewPCG(12, 21))
	var b strings.Builder
	b.WriteString("y,x,g\n")
	for range 400 {
		x, g, u := rng.NormFloat64(), rng.IntN(3), rng.Float64()
		eta := 0.6*x + []float64{0, 0.5, -0.4}[g]
		y := 1
		for m, c := range []float64{-1, 0, 1} {
			if math.Log(u/(1-u))+eta*(1-0.2*float64(m)) > c {
				y++
			}
		}
		fmt.Fprintf(&b, "%d,%.5f,%s\n", y, x, "abc"[g:g+1])
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

const termPlan = `version: 1
data: {file: d.csv}
outcomes: [{column: y}]
categorical: {g: {levels: [a, b, c]}}
predictors: [x, g]
models: {approaches: [cumulative], effects: [EFFECTS], partial: PARTIAL}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
`

// TestTermTestsRendered: the test of a whole constraint group is a row
// of its own, with its columns and the paragraph on its degrees of
// freedom; inference.term_tests: wald leaves the likelihood-ratio columns
// out and says so, none says the tests were switched off; a stepwise step
// says which candidate it passed over and why, and a pooling warning is
// said below the table of the test.
func TestTermTestsRendered(t *testing.T) {
	dir := t.TempDir()
	termData(t, dir)
	src := strings.NewReplacer("EFFECTS", "constrained", "PARTIAL", "{free: [x, g]}").Replace(termPlan)
	md := string(renderSource(t, dir, src, 1)["report.md"])
	hasAll(t, "report.md", md, "| the constraint group | its columns x, g.b, g.c | chi2(9) = ",
		"**Degrees of freedom of the tests of the constraint group:** x, g.b, g.c make up a whole constraint group",
		// Wald and likelihood ratio need not agree for constrained
		// effects, however large the sample: said, with the tests listed.
		"A constrained effect is a product, b_m = φ_m g, so a test of its columns is not a test of parameters set to 0 one by one",
		"**Constrained effects in cumulative/constrained/logit:** the tests of x give Wald chi2(",
		"read the likelihood-ratio tests.")
	if strings.Contains(md, "same large-sample theory and agree closely in large samples") {
		t.Error("report.md still says the Wald and likelihood-ratio tests agree closely in large samples, without the exception of constrained effects")
	}
	wald := string(renderSource(t, dir, src+"inference: {term_tests: wald}\n", 1)["report.md"])
	hasAll(t, "report.md (wald)", wald, "The plan asks for the Wald test only (`inference.term_tests: wald`)", "| Term | Tested with | Wald | p |\n")
	none := string(renderSource(t, dir, src+"inference: {term_tests: none}\n", 1)["report.md"])
	hasAll(t, "report.md (none)", none, "Not computed: the plan switches the tests of each term of the chosen model off (`inference.term_tests: none`).")

	sw := strings.NewReplacer("EFFECTS", "parallel, partial", "PARTIAL", "{select: {test: lr}}").Replace(termPlan)
	if err := os.WriteFile(filepath.Join(dir, "p.yaml"), []byte(sw), 0o644); err != nil {
		t.Fatal(err)
	}
	res := runPlan(t, filepath.Join(dir, "p.yaml"), 1)
	st := &res.Outcomes[0].Stepwise[0].Result.Steps[0]
	st.Tests[0].Warning = "a made-up warning"
	st.Skipped = append(st.Skipped, fit.SkippedCandidate{Term: "g", Reason: "its likelihood-ratio statistic is negative (-0.5): made up"})
	out := string(outputsOf(t, res)["report.md"])
	hasAll(t, "report.md (stepwise)", out, "**Warning**, step 1, test of x: a made-up warning.",
		"Step 1 passed over `g`: its likelihood-ratio statistic is negative (-0.5): made up.")
}
