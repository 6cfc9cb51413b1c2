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

// TestSummaryNamesFailedChecks: the Summary names the chosen model's own
// checks that reject it at the report's alpha (a nested likelihood-ratio
// test in which it is the restricted model, the Lipsitz test), and says
// that the plan's test rule tested it against the least constrained model
// only; nothing is said when every check passes. The p-values are set
// here, so that the test does not depend on what the data give.
func TestSummaryNamesFailedChecks(t *testing.T) {
	dir := t.TempDir()
	termData(t, dir)
	src := strings.NewReplacer("EFFECTS", "parallel, partial, nonparallel", "PARTIAL", "{free: [x]}",
		"  - choose: {by: aic}", "  - reject_if_test_rejects: {test: lr, alpha: 0.001}\n  - choose: {by: bic}").Replace(termPlan)
	if err := os.WriteFile(filepath.Join(dir, "p.yaml"), []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	summary := func(md string) string {
		return md[strings.Index(md, "## Summary"):strings.Index(md, "## The plan")]
	}
	res := runPlan(t, filepath.Join(dir, "p.yaml"), 1)
	or := res.Outcomes[0]
	if or.Chosen == nil || or.Lipsitz == nil {
		t.Fatalf("chosen %v, Lipsitz %v", or.Chosen, or.Lipsitz)
	}
	id := or.Chosen.ID
	// Every check passes: the Summary says nothing of them.
	or.Lipsitz.Test.P = 0.5
	nested := -1
	for i, nt := range or.Tests[0].Nested {
		if nt.Restricted == id {
			or.Tests[0].Nested[i].Test.P = 0.5
			nested = i
		}
	}
	if nested < 0 {
		t.Fatalf("no nested test with %s restricted: %+v", id, or.Tests[0].Nested)
	}
	if ps := or.PatternSplit; ps != nil && ps.PatternSplit != nil {
		ps.Pearson.P, ps.Deviance.P = 0.5, 0.5
	}
	if s := summary(string(outputsOf(t, res)["report.md"])); strings.Contains(s, "Checks of this model") {
		t.Errorf("the Summary names checks that pass:\n%s", s)
	}
	or.Lipsitz.Test.P = 0.0074
	nt := &or.Tests[0].Nested[nested]
	nt.Test.P = 0.0011
	s := summary(string(outputsOf(t, res)["report.md"]))
	// The rule (lr, alpha 0.001, against the least constrained model)
	// made the comparison with nt.Full itself: it is not among the checks
	// the choice did not use, but said to be the rule's, at its alpha.
	hasAll(t, "Summary", s,
		"**Checks of this model shown in the report reject it at the report's alpha 0.05; the test rule used 0.001:** the Lipsitz goodness-of-fit test (chi2(",
		"p = 0.0074). The choice did not use them: the plan's test rule `reject_if_test_rejects` (plan line ",
		") tests a model against the least constrained model of its approach and link only, as the rule says, at its alpha 0.001, and kept it: ",
		"At the report's alpha 0.05 the nested likelihood-ratio test against "+nt.Full+" (chi2(",
		"p = 0.0011) also rejects it; the test rule made that comparison itself, at its own alpha 0.001.")
	if strings.Contains(s, "reject it at the report's alpha 0.05; the test rule used 0.001:** the nested") {
		t.Errorf("the Summary counts the rule's own comparison among the checks the choice did not use:\n%s", s)
	}
	// Under clustered errors the likelihood-ratio check is qualified.
	res.Analysis.Errors.Covariance = fit.Clustered
	s = summary(string(outputsOf(t, res)["report.md"]))
	hasAll(t, "Summary (clustered)", s, "The likelihood-ratio tests take the rows as independent: with clustered errors or sampling weights they reject too often")
}

// TestTermTestsRobustReading: under sandwich or clustered errors, or
// sampling weights, the paragraph after the tests of each term says to
// read the Wald test with the robust covariance, and no longer that the
// two tests agree closely in large samples or that the likelihood ratio is
// to be preferred; under observed information it still says so.
func TestTermTestsRobustReading(t *testing.T) {
	dir := t.TempDir()
	termData(t, dir)
	base := strings.NewReplacer("EFFECTS", "parallel", "PARTIAL", "{}").Replace(termPlan)
	const prefer, agree = "Where the two differ, prefer the likelihood ratio", "they agree closely in large samples"
	plain := string(renderSource(t, dir, base, 1)["report.md"])
	hasAll(t, "report.md (observed)", plain, prefer, agree)
	raw, err := os.ReadFile(filepath.Join(dir, "d.csv"))
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), withWeights(string(raw), func(i int) float64 { return float64(1 + i%7) }), 0o644); err != nil {
		t.Fatal(err)
	}
	for name, src := range map[string]string{
		"sandwich":  base + "covariance: sandwich\n",
		"clustered": strings.Replace(base, "data: {file: d.csv}", "data: {file: d.csv, cluster: w}", 1) + "covariance: clustered\n",
		"sampling":  strings.NewReplacer("data: {file: d.csv}", "data: {file: d.csv, weights: w, weight_kind: sampling}", "by: aic", "by: tic").Replace(base),
	} {
		md := string(renderSource(t, dir, src, 1)["report.md"])
		hasAll(t, "report.md ("+name+")", md, "the Wald test with this robust covariance is the one to read")
		for _, bad := range []string{prefer, agree} {
			if strings.Contains(md, bad) {
				t.Errorf("report.md (%s) says %q", name, bad)
			}
		}
	}
}
