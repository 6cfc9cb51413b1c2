package runner

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner/fit"
	"ordplan/runner/impute"
)

// exampleWith writes dir/d.csv: the invented example data with more
// columns (names, comma separated), row i's cells from cells(i).
func exampleWith(t *testing.T, dir, names string, cells func(i int) string) {
	t.Helper()
	src, err := os.ReadFile(filepath.Join("..", "plans", "data", "quietstreets.csv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(src)), "\n")
	var b strings.Builder
	b.WriteString(lines[0] + "," + names + "\n")
	for i, l := range lines[1:] {
		b.WriteString(l + "," + cells(i) + "\n")
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// Cluster-robust errors on the invented example data (clusters: district),
// and sampling weights, which turn likelihood-ratio tests into Wald
// tests and say so.
func TestRunRobustAndProbabilityWeights(t *testing.T) {
	dir := t.TempDir()
	exampleWith(t, dir, "sw", func(i int) string { return strconv.Itoa(1 + i%3) })
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
	_, err := plan.Load(filepath.Join(dir, "p.yaml"))
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
	if v == nil || !strings.Contains(v.Reason, "Wald test against cumulative/nonparallel/logit: F(9, 15) = ") || !strings.Contains(v.Reason, "times (G-q)/((G-1) q), G = 24 clusters)") {
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

// Clustered errors from 3 clusters (the invented example data's rows dealt
// into three clusters) against 60: with 3, every Wald test of more than
// G-1 = 2 restrictions is refused, naming the clusters it needs (the
// parallel-lines Wald tests, 9 restrictions overall and 3 per predictor
// with five categories; a hypothesis of 3 restrictions; the Wald rule
// then rejects nothing and says why; the pooled D1 form alike), a
// hypothesis of 2 is tested, and check, run and the outcome's notes warn
// of too few clusters; with 60 clusters every test is made and nothing
// warns.
func TestFewClustersRun(t *testing.T) {
	dir := t.TempDir()
	exampleWith(t, dir, "c3,c60", func(i int) string { return fmt.Sprintf("%c,g%d", "kmn"[i%3], i%60) })
	base := `version: 1
title: few clusters
data: {file: d.csv, cluster: %s}
outcomes: [{column: safety, categories: [very_unsafe, unsafe, neutral, safe, very_safe]}]
predictors: [pilot, female, age]
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: [wald]}
rules:
  - reject_if_test_rejects: {test: wald, alpha: 0.05}
  - choose: {by: aic}
covariance: clustered
inference:
  hypotheses: ["pilot = 0; female = 0; age = 0", "pilot = 0; female = 0"]
`
	run := func(col string) (*Result, []string) {
		p := planIn(t, dir, fmt.Sprintf(base, col))
		warn, err := CheckData(p)
		if err != nil {
			t.Fatal(err)
		}
		r, err := Run(p, Options{})
		if err != nil {
			t.Fatal(err)
		}
		return r, warn
	}
	res, warn := run("c3")
	or := res.Outcomes[0]
	want := `data.cluster: column "c3" holds 3 clusters in the 1775 rows used, fewer than 40: cluster-robust standard errors tend to be too small, so their tests may reject a true hypothesis too often even on the references they take (t on G-1 = 2 degrees of freedom, F(q, 3-q) for q restrictions), and a joint Wald test of more than G-1 = 2 restrictions is not computed`
	// With 3 clusters every model of the grid has more parameters than
	// G-1 = 2: its covariance is singular (W19).
	singular := `data.cluster: column "c3" holds 3 clusters in the 1775 rows used, and cumulative/parallel/logit (7 parameters) and cumulative/nonparallel/logit (16 parameters) have more than G-1 = 2: a cluster-robust covariance from G clusters has rank at most G-1, so such a model's covariance is singular`
	if len(warn) != 2 || !strings.HasPrefix(warn[0], "outcome safety: "+want) || !strings.HasPrefix(warn[1], "outcome safety: "+singular) {
		t.Errorf("check's warnings %q, want one beginning %q and one %q", warn, want, singular)
	}
	if w := FewClustersWarnings(res); !slices.Equal(w, warn) {
		t.Errorf("run's warnings %q, check's %q", w, warn)
	}
	for _, w := range []string{want, singular} {
		if !slices.ContainsFunc(or.Notes, func(n string) bool { return strings.HasPrefix(n, w) }) {
			t.Errorf("the outcome's notes lack the warning %q: %q", w, or.Notes)
		}
	}
	need := func(q int) string {
		return fmt.Sprintf("%d restrictions need at least %d clusters, and the data have 3: a cluster-robust covariance from G clusters has rank at most G-1", q, q+1)
	}
	if w := findTest(or.Tests[0].Global, "wald"); w.OK || w.Reason != need(9) {
		t.Errorf("overall Wald test: %+v", w)
	}
	for _, pv := range or.Tests[0].PerVariable {
		if w := findTest(pv.Tests, "wald"); w.OK || w.Reason != need(3) {
			t.Errorf("Wald test of %s: %+v", pv.Predictor, w)
		}
	}
	if v := verdictOf(or.Rules[0], "cumulative/parallel/logit"); v == nil || !v.Kept || !strings.Contains(v.Reason, need(9)) {
		t.Errorf("the Wald rule's verdict: %+v", v)
	}
	// The hypotheses' restrictions: one per predictor in the parallel
	// model, one per predictor and boundary (4) in the nonparallel one.
	for _, h := range or.Hypotheses {
		q := strings.Count(h.Text, ";") + 1
		if h.Model == "cumulative/nonparallel/logit" {
			q *= 4
		}
		if q == 2 && (!h.Test.OK || h.Test.DF != 2) || q > 2 && (h.Test.OK || h.Test.Reason != need(q)) {
			t.Errorf("%s in %s: %+v", h.Text, h.Model, h.Test)
		}
	}

	// The pooled (D1) form refuses alike: two "imputed sets", the fit and
	// the fit with its estimates moved by a tenth of their errors.
	f := or.Find("cumulative/parallel/logit")
	moved := slices.Clone(f.Result.Estimates)
	for i := range moved {
		moved[i] += f.Result.StdErrors[i] / 10
	}
	pl, err := impute.Pool([]impute.Set{{Est: f.Result.Estimates, Cov: f.Result.Cov}, {Est: moved, Cov: f.Result.Cov}}, impute.Complete{DF: math.Inf(1)})
	if err != nil {
		t.Fatal(err)
	}
	pooled := *f.Result
	pooled.Estimates, pooled.Cov = pl.Estimate, pl.Total
	P := len(pooled.Estimates)
	rows := make([][]float64, 3)
	for i, name := range []string{"pilot", "female", "age"} {
		rows[i] = make([]float64, P)
		rows[i][slices.Index(pooled.ParamNames, name)] = 1
	}
	if w := pooledWald(&pooled, pl, rows, nil); w.OK || w.Reason != need(3) {
		t.Errorf("pooled test of 3 restrictions: %+v", w)
	}
	if w := pooledWald(&pooled, pl, rows[:2], nil); !w.OK || w.DF != 2 || w.Pooled != "D1" {
		t.Errorf("pooled test of 2 restrictions: %+v", w)
	}

	res, warn = run("c60")
	or = res.Outcomes[0]
	if len(warn) != 0 || len(FewClustersWarnings(res)) != 0 {
		t.Errorf("60 clusters: warnings %q", warn)
	}
	for _, n := range or.Notes {
		if strings.Contains(n, "clusters") {
			t.Errorf("60 clusters: note %q", n)
		}
	}
	tests := []fit.Test{findTest(or.Tests[0].Global, "wald")}
	for _, pv := range or.Tests[0].PerVariable {
		tests = append(tests, findTest(pv.Tests, "wald"))
	}
	for _, h := range or.Hypotheses {
		tests = append(tests, h.Test)
	}
	for _, w := range tests {
		if !w.OK {
			t.Errorf("60 clusters: %+v", w)
		}
	}
}
