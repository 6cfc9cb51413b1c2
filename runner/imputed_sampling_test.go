package runner

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/plan"
)

// withWeight adds a column w of sampling weights 0.7 to the CSV file name
// in dir.
func withWeight(t *testing.T, dir, name string) {
	t.Helper()
	path := filepath.Join(dir, name)
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimRight(string(b), "\n"), "\n")
	for i := range lines {
		if i == 0 {
			lines[i] += ",w"
		} else {
			lines[i] += ",0.7"
		}
	}
	if err := os.WriteFile(path, []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
}

// sampledPlan loads a plan of the imputed fixture with sampling weights,
// asking every parallel-lines test, with the given rules.
func sampledPlan(dir, data, rules string) (*plan.Plan, error) {
	src := `version: 1
title: sampled
data: ` + data + `
outcomes: [{column: y}]
predictors: [x1, x2]
models: {approaches: [cumulative, adjacent], effects: [parallel, nonparallel]}
tests: {parallel_lines: [lr, score, wald, brant, wolfe_gould]}
rules:
` + rules
	path := filepath.Join(dir, "sampled.yaml")
	os.WriteFile(path, []byte(src), 0o644)
	return plan.Load(path)
}

// TestImputedSamplingWeightsBarLikelihoodTests: with sampling weights the
// fits maximize a pseudo-likelihood, so the likelihood-ratio, score, Brant
// and Wolfe-Gould tests are shown as not computed, with the same reason,
// on imputed data as on one data set; only the Wald tests are computed,
// and rules decide as on one data set (a rule on a likelihood-based test
// is refused with the same message, a Wald rule decides).
func TestImputedSamplingWeightsBarLikelihoodTests(t *testing.T) {
	dir := imputedFixture(t, 3, false)
	for _, f := range []string{"orig.csv", "stacked.csv", "complete.csv"} {
		withWeight(t, dir, f)
	}
	const (
		imputed = "{file: orig.csv, imputed: {file: stacked.csv, column: imp}, weights: w, weight_kind: sampling}"
		plain   = "{file: complete.csv, weights: w, weight_kind: sampling}"
		rules   = "  - reject_if_test_rejects: {test: wald}\n  - choose: {by: tic}\n"
	)
	run := func(data string) *Result {
		p, err := sampledPlan(dir, data, rules)
		if err != nil {
			t.Fatal(err)
		}
		return runPlan(t, p, 0)
	}
	ri, rs := run(imputed), run(plain)
	oi, os1 := ri.Outcomes[0], rs.Outcomes[0]
	if oi.Imputed == nil || len(oi.Tests) != 2 || len(os1.Tests) != 2 {
		t.Fatalf("imputed %v; test blocks: %d imputed, %d plain", oi.Imputed != nil, len(oi.Tests), len(os1.Tests))
	}
	for b, tbs := range os1.Tests {
		tbi := oi.Tests[b]
		where := tbs.Approach.String() + "/" + tbs.Link.String()
		if len(tbi.Global) != len(tbs.Global) {
			t.Fatalf("%s: %d global tests imputed, %d plain", where, len(tbi.Global), len(tbs.Global))
		}
		for i, ts := range tbs.Global {
			ti := tbi.Global[i]
			if ti.Name != ts.Name || ti.OK != ts.OK || ti.Reason != ts.Reason {
				t.Errorf("%s %s: imputed ok=%v %q (p=%g), plain ok=%v %q", where, ts.Name, ti.OK, ti.Reason, ti.P, ts.OK, ts.Reason)
			}
			if ts.Name == "wald" && (!ti.OK || ti.Pooled != "D1") {
				t.Errorf("%s wald: imputed %+v, want a D1-pooled test", where, ti)
			}
			if ts.Name != "wald" && (ti.OK || ti.Reason == "") {
				t.Errorf("%s %s: computed on imputed data with sampling weights: %+v", where, ts.Name, ti)
			}
		}
		if ti := findTest(tbi.Global, "lr"); ti.Reason != pseudoReason {
			t.Errorf("%s lr: reason %q, want %q", where, ti.Reason, pseudoReason)
		}
		if len(tbi.PerVariable) != len(tbs.PerVariable) {
			t.Fatalf("%s: %d per-variable rows imputed, %d plain", where, len(tbi.PerVariable), len(tbs.PerVariable))
		}
		for v, vs := range tbs.PerVariable {
			vi := tbi.PerVariable[v]
			if len(vi.Tests) != len(vs.Tests) || len(vi.Tests) != 1 || vi.Tests[0].Name != vs.Tests[0].Name {
				t.Errorf("%s %s: per-variable tests imputed %+v, plain %+v", where, vs.Predictor, vi.Tests, vs.Tests)
			}
		}
		if len(tbi.Nested) != len(tbs.Nested) {
			t.Fatalf("%s: %d nested tests imputed, %d plain", where, len(tbi.Nested), len(tbs.Nested))
		}
		for i, n := range tbs.Nested {
			ni := tbi.Nested[i].Test
			if ni.OK || ni.Reason != n.Test.Reason || n.Test.Reason != pseudoReason {
				t.Errorf("%s nested %d: imputed %+v, plain %+v", where, i, ni, n.Test)
			}
		}
	}
	// No auxiliary fit is made for the per-predictor likelihood-ratio
	// tests, which are not computed.
	for _, or := range []*OutcomeResult{oi, os1} {
		for _, f := range or.Fits {
			if f.OnlyParallel != "" {
				t.Errorf("auxiliary fit %s made for a test not computed under sampling weights", f.ID)
			}
		}
	}
	// decisions.json says the same: not computed, with the reason.
	b, err := json.Marshal(BuildDecisions(ri))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(b), pseudoReason) {
		t.Error("decisions.json of the imputed run does not carry the reason the likelihood-based tests are not computed")
	}
	// The Wald rule decides the same models on both, with a pooled test
	// on imputed data.
	if len(oi.Rules) == 0 || len(os1.Rules) == 0 || len(oi.Rules[0].Verdicts) != len(os1.Rules[0].Verdicts) || len(oi.Rules[0].Verdicts) == 0 {
		t.Fatalf("Wald rule: imputed %+v, plain %+v", oi.Rules, os1.Rules)
	}
	for i, vs := range os1.Rules[0].Verdicts {
		vi := oi.Rules[0].Verdicts[i]
		tested := strings.Contains(vs.Reason, "Wald test against")
		if vi.Model != vs.Model || tested != strings.Contains(vi.Reason, "Wald test against") || tested != strings.Contains(vs.Model, "/parallel/") {
			t.Errorf("Wald rule on %s: imputed %q, plain %q", vs.Model, vi.Reason, vs.Reason)
		}
	}
	for _, or := range []*OutcomeResult{oi, os1} {
		if or.Chosen == nil {
			t.Errorf("nothing chosen: %s", or.Choice)
		}
	}
	// A rule on a likelihood-based test is refused, with the same message,
	// on imputed data as on one data set.
	for _, test := range []string{"lr", "score", "brant"} {
		r := "  - reject_if_test_rejects: {test: " + test + ", applies_to: [parallel]}\n  - choose: {by: tic}\n"
		_, ei := sampledPlan(dir, imputed, r)
		_, es := sampledPlan(dir, plain, r)
		if ei == nil || es == nil {
			t.Fatalf("%s rule with sampling weights accepted: imputed %v, plain %v", test, ei, es)
		}
		if !strings.Contains(ei.Error(), "pseudo-likelihood") || ei.Error() != es.Error() {
			t.Errorf("%s rule: imputed %q, plain %q", test, ei, es)
		}
	}
}
