package render

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/render/numfmt"
)

// TestSummaryGivesHypotheses: the Summary gives the plan's hypotheses as
// tested in the chosen model, with the numbers of the table Hypotheses of
// the plan. The data are invented (x = i mod 11, g = i mod 2, y = 1 + [(7i
// + i mod 11) mod 5 > 1 + g], i = 0..149); with two categories the
// cumulative logit is the logistic regression of P(y = 1) with b = -c, so
// the estimate of g, its interval and the Wald test are base R's glm:
//
//	m <- glm(I(y == 1) ~ x + g, family = binomial, control = glm.control(epsilon = 1e-14))
//	b <- -coef(m)["g"]; se <- sqrt(vcov(m)["g", "g"])
//	b, b -/+ qnorm(0.975) se, (b/se)^2, pchisq((b/se)^2, 1, lower.tail = FALSE)
//
// which printed -0.75558977375501324, -1.4073175883284637,
// -0.10386195918156294, 5.1634004994441565 and 0.023067690141240046
// (base R, by hand).
func TestSummaryGivesHypotheses(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("x,g,y\n")
	for i := range 150 {
		y := 1
		if (i*7+i%11)%5 > 1+i%2 {
			y = 2
		}
		fmt.Fprintf(&b, "%d,%d,%d\n", i%11, i%2, y)
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	src := `version: 1
data: {file: d.csv}
outcomes: [{column: y}]
predictors: [x, g]
models: {approaches: [cumulative], effects: [parallel], links: [logit]}
tests: {parallel_lines: []}
rules:
  - reject_unconverged: true
  - choose: {by: aic}
inference: {hypotheses: ["g = 0", "x = g = 0"], multiplicity: holm}
`
	md := string(renderSource(t, dir, src, 1)["report.md"])
	summary := md[strings.Index(md, "## Summary"):strings.Index(md, "## The plan")]
	const est, low, high, chi2, p = -0.75558977375501324, -1.4073175883284637, -0.10386195918156294, 5.1634004994441565, 0.023067690141240046
	want := fmt.Sprintf("The plan's hypotheses in this model (Wald tests, estimates on the model's scale, p-values that do not allow for the choice of the model; see Hypotheses of the plan): `g = 0`: estimate %s (95%% interval %s to %s), chi2(1) = %s, %s (adjusted, Holm: ",
		numfmt.Est(est), numfmt.Est(low), numfmt.Est(high), numfmt.Stat(chi2), numfmt.PText(p))
	if !strings.Contains(summary, want) {
		t.Errorf("the Summary lacks %q:\n%s", want, summary)
	}
	if !strings.Contains(summary, "; `x = g = 0`: chi2(2) = ") {
		t.Errorf("the Summary lacks the joint hypothesis:\n%s", summary)
	}
	// The same numbers as the table of the hypotheses.
	row := fmt.Sprintf("| `g = 0` | 10 | cumulative/parallel/logit | %s | ", numfmt.Est(est))
	if !strings.Contains(md, row) || !strings.Contains(md, numfmt.Est(low)+" | "+numfmt.Est(high)+" | "+numfmt.Stat(chi2)+" | 1 | "+numfmt.PValue(p)) {
		t.Errorf("the table Hypotheses of the plan lacks the numbers of the Summary")
	}
}
