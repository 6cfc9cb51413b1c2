package runner

import (
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner/fit"
)

// Cluster-robust errors on the invented example data (clusters: district),
// and sampling weights, which turn likelihood-ratio tests into Wald
// tests and say so.
func TestRunRobustAndProbabilityWeights(t *testing.T) {
	dir := t.TempDir()
	src, err := os.ReadFile(filepath.Join("..", "plans", "data", "quietstreets.csv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(src)), "\n")
	var b strings.Builder
	b.WriteString(lines[0] + ",sw\n")
	for i, l := range lines[1:] {
		b.WriteString(l + "," + strconv.Itoa(1+i%3) + "\n")
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
	base := `version: 1
title: sandwich
data: {file: d.csv, cluster: district%s}
outcomes: [{column: safety, categories: [very_unsafe, unsafe, neutral, safe, very_safe]}]
predictors: [pilot, female, age]
models: {approaches: [cumulative], effects: [parallel, partial, nonparallel], partial: {free: [pilot]}}
tests: {parallel_lines: [brant, lr, wald]}
rules:
  - reject_if_test_rejects: {test: lr, alpha: 0.05}
  - choose: {by: bic}
covariance: clustered
`
	run := func(extra string) *OutcomeResult {
		p := planIn(t, dir, strings.Replace(base, "%s", extra, 1))
		r, err := Run(p, Options{})
		if err != nil {
			t.Fatal(err)
		}
		return r.Outcomes[0]
	}
	or := run("")
	f := or.Find("cumulative/partial/logit")
	if f.Result.CovType != fit.Clustered {
		t.Fatalf("covariance %s", f.Result.CovType)
	}
	if findTest(or.Tests[0].Global, "lr").OK != true {
		t.Errorf("LR test should be computed with frequency weights")
	}
	// With sampling weights the plan's LR rule and BIC choice are refused,
	// naming the comparisons; the Wald rule and TIC run.
	os.WriteFile(filepath.Join(dir, "p.yaml"), []byte(strings.Replace(base, "%s", ", weights: sw, weight_kind: sampling", 1)), 0o644)
	_, err = plan.Load(filepath.Join(dir, "p.yaml"))
	if err == nil || !strings.Contains(err.Error(), "p.yaml:9:36: rules[0].reject_if_test_rejects.test: the likelihood-ratio test is not defined for 2 of the 2 comparisons") ||
		!strings.Contains(err.Error(), "p.yaml:10:18: rules[1].choose.by: by: bic assumes a likelihood") {
		t.Fatalf("sampling weights with lr and bic: %v", err)
	}
	base = strings.Replace(strings.Replace(base, "{test: lr,", "{test: wald,", 1), "{by: bic}", "{by: tic}", 1)
	or = run(", weights: sw, weight_kind: sampling")
	lr := findTest(or.Tests[0].Global, "lr")
	if lr.OK || !strings.Contains(lr.Reason, "pseudo-likelihood") {
		t.Errorf("LR with sampling weights: %+v", lr)
	}
	if w := findTest(or.Tests[0].Global, "wald"); !w.OK {
		t.Errorf("Wald should be computed: %+v", w)
	}
	v := verdictOf(or.Rules[0], "cumulative/parallel/logit")
	if v == nil || !strings.Contains(v.Reason, "Wald test against cumulative/nonparallel/logit: chi2(") {
		t.Errorf("verdict %+v", v)
	}
	for _, v := range or.Rules[1].Verdicts {
		if !strings.Contains(v.Reason, "TIC ") || !strings.Contains(v.Reason, "penalty tr(A^-1 B) = ") {
			t.Errorf("TIC verdict %+v", v)
		}
	}
}

// Stepwise selection tests with the plan's standard errors: cluster-robust
// Wald tests differ from observed-information ones.
func TestStepwiseUsesPlanCovariance(t *testing.T) {
	dir := t.TempDir()
	src, _ := os.ReadFile(filepath.Join("..", "plans", "data", "quietstreets.csv"))
	os.WriteFile(filepath.Join(dir, "d.csv"), src, 0o644)
	base := `version: 1
title: stepwise
data: {file: d.csv%s}
outcomes: [{column: safety, categories: [very_unsafe, unsafe, neutral, safe, very_safe]}]
predictors: [pilot, female, age]
models: {approaches: [cumulative], effects: [parallel, partial], partial: {select: {method: stepwise, alpha: 0.05}}}
tests: {parallel_lines: []}
rules:
  - choose: {by: bic}
%s`
	chi := func(data, cov string) float64 {
		p := planIn(t, dir, fmt.Sprintf(base, data, cov))
		r, err := Run(p, Options{})
		if err != nil {
			t.Fatal(err)
		}
		return r.Outcomes[0].Stepwise[0].Result.Steps[0].Tests[0].Chi2
	}
	obs, cl := chi("", ""), chi(", cluster: district", "covariance: clustered\n")
	if obs == cl || obs <= 0 || cl <= 0 {
		t.Fatalf("stepwise chi2 with observed information %v and clustered %v", obs, cl)
	}
}
