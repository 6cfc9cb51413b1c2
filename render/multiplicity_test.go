package render

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestLimitsSayHypothesesUnadjusted: a plan whose hypotheses make several
// tests in the chosen models (one hypothesis, two outcomes: 2 tests,
// counted by hand) without inference.multiplicity says in its assumptions
// and limits that the p-values are not adjusted; with holm, or with one
// test, it does not. The data are invented (x, g on a fixed pattern).
func TestLimitsSayHypothesesUnadjusted(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("x,g,y,z\n")
	for i := range 150 {
		fmt.Fprintf(&b, "%d,%d,%d,%d\n", i%11, i%2, 1+(i*7+i%11)%3, 1+(i*5+i%7)%4)
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	plan := func(outcomes, multiplicity string) string {
		return `version: 1
data: {file: d.csv}
outcomes: [` + outcomes + `]
predictors: [x, g]
models: {approaches: [cumulative], effects: [parallel], links: [logit]}
tests: {parallel_lines: [wald]}
rules:
  - reject_unconverged: true
  - choose: {by: aic}
inference: {hypotheses: ["g = 0"], multiplicity: ` + multiplicity + `}
`
	}
	const sentence = "The plan's hypotheses make 2 tests in the chosen models of 2 outcomes, whose p-values are not adjusted for multiplicity (inference.multiplicity: none)"
	for _, tc := range []struct {
		outcomes, multiplicity string
		want                   bool
	}{
		{"{column: y}, {column: z}", "none", true},
		{"{column: y}, {column: z}", "holm", false},
		{"{column: y}", "none", false},
	} {
		md := string(renderSource(t, dir, plan(tc.outcomes, tc.multiplicity), 1)["report.md"])
		limits := md[strings.Index(md, "## Assumptions and limits"):strings.Index(md, "## Methods")]
		if got := strings.Contains(limits, sentence); got != tc.want {
			t.Errorf("outcomes %s, multiplicity %s: sentence present %v, want %v:\n%s", tc.outcomes, tc.multiplicity, got, tc.want, limits)
		}
		if tc.want && !strings.Contains(limits, "can be larger than that level, up to 2 times it") {
			t.Errorf("outcomes %s: the sentence does not bound the chance of a false rejection by the number of tests", tc.outcomes)
		}
		if !tc.want && strings.Contains(limits, "not adjusted for multiplicity") {
			t.Errorf("outcomes %s, multiplicity %s: says the p-values are not adjusted", tc.outcomes, tc.multiplicity)
		}
	}
}
