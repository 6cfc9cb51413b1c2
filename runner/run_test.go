package runner

import (
	"bytes"
	"encoding/json"
	"math"
	"ordplan/internal/refdata"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner/fit"
)

type refChi2 struct {
	Chi2 float64 `json:"chi2"`
	DF   int     `json:"df"`
	P    float64 `json:"p"`
}

func loadPlan(t *testing.T, name string) *plan.Plan {
	t.Helper()
	p, err := plan.Load(filepath.Join("testdata", name))
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func runPlan(t *testing.T, p *plan.Plan, workers int) *Result {
	t.Helper()
	r, err := Run(p, Options{Workers: workers})
	if err != nil {
		t.Fatal(err)
	}
	return r
}

func wantChi2(t *testing.T, label string, got fit.Test, want refChi2) {
	t.Helper()
	if !got.OK {
		t.Errorf("%s: not computed: %s", label, got.Reason)
		return
	}
	if math.Abs(got.Chi2-want.Chi2) > 1e-4*math.Max(1, want.Chi2) || got.DF != want.DF || math.Abs(got.P-want.P) > 1e-4*math.Max(want.P, 1e-6) {
		t.Errorf("%s: chi2 %.6f df %d p %.6g; want %.6f df %d p %.6g", label, got.Chi2, got.DF, got.P, want.Chi2, want.DF, want.P)
	}
}

func findTest(ts []fit.Test, name string) fit.Test {
	for _, t := range ts {
		if t.Name == name {
			return t
		}
	}
	return fit.Test{Name: name, Reason: "absent"}
}

// TestRunReproducesReferenceTests runs the full grid on the General Social
// Survey extract (Long 1997) and checks the runner's tests against
// testdata/reference/gsswarm.tests.json: Brant omnibus 49.18 (Long &
// Freese 2014), LR 49.20, score 48.42, Wald 48.55, Wolfe-Gould 48.91, the
// per-variable tests and the nested likelihood-ratio tests of every
// approach.
func TestRunReproducesReferenceTests(t *testing.T) {
	p := loadPlan(t, "gss_grid.yaml")
	r := runPlan(t, p, 0)
	b, err := os.ReadFile(refdata.Path("gsswarm.tests.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Cumulative struct {
			Global      map[string]refChi2            `json:"global"`
			PerVariable map[string]map[string]refChi2 `json:"per_variable"`
			Nested      map[string]refChi2            `json:"nested_lr"`
		} `json:"cumulative"`
		Stage     map[string]json.RawMessage `json:"stage"`
		Adjacent  map[string]json.RawMessage `json:"adjacent"`
		StereoNP  refChi2                    `json:"stereotype_vs_adjacent_nonparallel"`
		ParStereo refChi2                    `json:"adjacent_parallel_vs_stereotype"`
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	or := r.Outcomes[0]
	var cum *TestBlock
	for _, tb := range or.Tests {
		if tb.Approach == fit.Cumulative {
			cum = tb
		}
	}
	for _, name := range []string{"brant", "lr", "score", "wald", "wolfe_gould"} {
		wantChi2(t, "cumulative "+name, findTest(cum.Global, name), ref.Cumulative.Global[name])
	}
	for _, vt := range cum.PerVariable {
		for _, name := range []string{"brant", "wald", "lr"} {
			wantChi2(t, "cumulative "+name+" "+vt.Predictor, findTest(vt.Tests, name), ref.Cumulative.PerVariable[vt.Predictor][name])
		}
	}
	nestedKey := map[[2]string]string{
		{"parallel", "partial"}:     "parallel_vs_partial_unconstrained",
		{"partial", "nonparallel"}:  "partial_unconstrained_vs_nonparallel",
		{"parallel", "constrained"}: "parallel_vs_partial_constrained",
		{"constrained", "partial"}:  "partial_constrained_vs_partial_unconstrained",
	}
	for _, tb := range or.Tests {
		var nested map[string]refChi2
		switch tb.Approach {
		case fit.Cumulative:
			nested = ref.Cumulative.Nested
		case fit.Stage:
			json.Unmarshal(ref.Stage["nested_lr"], &nested)
		case fit.Adjacent:
			json.Unmarshal(ref.Adjacent["nested_lr"], &nested)
		}
		seen := 0
		for _, nt := range tb.Nested {
			lv := func(id string) string { return strings.Split(id, "/")[1] }
			key, ok := nestedKey[[2]string{lv(nt.Restricted), lv(nt.Full)}]
			switch {
			case ok:
				wantChi2(t, tb.Approach.String()+" nested "+key, nt.Test, nested[key])
				seen++
			case tb.Approach == fit.Adjacent && lv(nt.Restricted) == "stereotype":
				wantChi2(t, "stereotype vs nonparallel", nt.Test, ref.StereoNP)
				seen++
			case tb.Approach == fit.Adjacent && lv(nt.Full) == "stereotype":
				wantChi2(t, "parallel vs stereotype", nt.Test, ref.ParStereo)
				seen++
			}
		}
		if seen < 4 {
			t.Errorf("%s: only %d nested tests checked", tb.Approach, seen)
		}
		if tb.Approach != fit.Cumulative {
			var lr refChi2
			raw := ref.Stage
			if tb.Approach == fit.Adjacent {
				raw = ref.Adjacent
			}
			json.Unmarshal(raw["lr_parallel_vs_nonparallel"], &lr)
			wantChi2(t, tb.Approach.String()+" lr", findTest(tb.Global, "lr"), lr)
		}
	}
	if or.Chosen == nil {
		t.Fatalf("no model chosen: %s", or.Choice)
	}
	// Every candidate has a final verdict and every rule judged every
	// survivor.
	for _, f := range or.Fits {
		if !f.Auxiliary && f.Verdict == "" {
			t.Errorf("%s has no verdict", f.ID)
		}
	}
	if len(or.Rules) != len(p.Rules) {
		t.Errorf("%d rule outcomes for %d rules", len(or.Rules), len(p.Rules))
	}
	// No categorical predictor: the Pulkstenis-Robinson tests say why they
	// are not computed.
	if ps := or.PatternSplit; ps == nil || ps.PatternSplit != nil || !strings.Contains(ps.NotComputed, "no categorical predictors") {
		t.Errorf("Pulkstenis-Robinson without categorical predictors: %+v", ps)
	}
}

// TestRunStepwise reproduces Williams (2006) on the General Social Survey
// extract: white, ed, prst, age made parallel (p = .7136, .1589, .2046,
// .0743), final chi2(8) = 12.80, p = .1190.
func TestRunStepwise(t *testing.T) {
	r := runPlan(t, loadPlan(t, "gss_stepwise.yaml"), 0)
	or := r.Outcomes[0]
	sw := or.Stepwise[0].Result
	if !sw.OK {
		t.Fatal(sw.Reason)
	}
	want := []struct {
		v string
		p float64
	}{{"white", .7136}, {"ed", .1589}, {"prst", .2046}, {"age", .0743}}
	for i, w := range want {
		st := sw.Steps[i]
		if st.Imposed != w.v || math.Abs(st.P-w.p) > 5e-5 {
			t.Errorf("step %d: %s p=%.4f, want %s p=%.4f", i+1, st.Imposed, st.P, w.v, w.p)
		}
	}
	if ft := sw.FinalTest; ft.DF != 8 || math.Abs(ft.Chi2-12.80) > 0.005 || math.Abs(ft.P-.1190) > 5e-5 {
		t.Errorf("final test %+v", ft)
	}
	if got := strings.Join(or.FreeSets[0].Predictors, ","); got != "yr89,male" {
		t.Errorf("partial set %s", got)
	}
	if or.Find("cumulative/partial/logit").Result.NParams != 13 {
		t.Errorf("partial model from the stepwise set should have 13 parameters")
	}
}

// TestRerunIsByteIdentical: the same plan and data give the same decisions,
// whatever the number of workers.
func TestRerunIsByteIdentical(t *testing.T) {
	p := loadPlan(t, "gss_stepwise.yaml")
	a, _ := MarshalStable(BuildDecisions(runPlan(t, p, 1)))
	b, _ := MarshalStable(BuildDecisions(runPlan(t, p, 3)))
	if !bytes.Equal(a, b) {
		t.Fatal("decisions differ between runs")
	}
}

// A plan with two outcomes fits and decides each one apart; the decisions
// name both and a rerun gives the same bytes.
func TestRunTwoOutcomes(t *testing.T) {
	dir := t.TempDir()
	src, err := os.ReadFile(refdata.Path("gsswarm.csv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(src)), "\n")
	var b strings.Builder
	b.WriteString(lines[0] + ",warm3\n")
	for _, l := range lines[1:] {
		w := l[:1] // warm is the first column, one digit
		w3 := map[string]string{"1": "low", "2": "low", "3": "mid", "4": "high"}[w]
		b.WriteString(l + "," + w3 + "\n")
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
	plan := `version: 1
title: two outcomes
data: {file: d.csv}
outcomes:
  - {column: warm}
  - {column: warm3, categories: [low, mid, high]}
predictors: [yr89, male, age]
models: {approaches: [cumulative, adjacent], effects: [parallel, nonparallel]}
tests: {parallel_lines: [lr]}
rules:
  - reject_if_test_rejects: {test: lr}
  - choose: {by: bic}
`
	os.WriteFile(filepath.Join(dir, "p.yaml"), []byte(plan), 0o644)
	p := loadPlanFile(t, filepath.Join(dir, "p.yaml"))
	a, _ := MarshalStable(BuildDecisions(runPlan(t, p, 1)))
	r := runPlan(t, p, 2)
	c, _ := MarshalStable(BuildDecisions(r))
	if !bytes.Equal(a, c) {
		t.Fatal("decisions differ between runs")
	}
	if len(r.Outcomes) != 2 || r.Outcomes[1].Data.Categories[2] != "high" || r.Outcomes[0].Chosen == nil || r.Outcomes[1].Chosen == nil {
		t.Fatalf("outcomes %d", len(r.Outcomes))
	}
	if r.Outcomes[1].Find("cumulative/parallel/logit").Result.J != 3 {
		t.Fatal("second outcome should have 3 categories")
	}
}

func loadPlanFile(t *testing.T, path string) *plan.Plan {
	t.Helper()
	p, err := plan.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// planIn writes the plan src as dir/p.yaml and loads it.
func planIn(t *testing.T, dir, src string) *plan.Plan {
	t.Helper()
	if err := os.WriteFile(filepath.Join(dir, "p.yaml"), []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	return loadPlanFile(t, filepath.Join(dir, "p.yaml"))
}
