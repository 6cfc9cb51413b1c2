package plan

import (
	"bytes"
	"reflect"
	"strings"
	"testing"

	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// sensBase is base with a subset column and a categorical predictor.
const sensBase = `version: 1
data:
  file: d.csv
outcomes:
  - column: y
categorical:
  site: {levels: [s1, s2, s3]}
predictors: [a, b, c, site]
models:
  partial:
    free: [a]
rules:
  - choose: {by: aic}
inference:
  hypotheses: ["c = 0"]
report:
  focus_predictor: c
`

const twoAnalyses = `sensitivity:
  - name: without_s3
    why: Site s3 changed its protocol halfway.
    change:
      subset:
        - {column: site, none_of: [s3]}
      categorical:
        site: {levels: [s1, s2, s3], unobserved: drop}
  - name: complete_cases
    why: Imputation assumes missing at random.
    change:
      data.missing: impute
      data.imputation: {sets: 5}
      covariance: sandwich
`

// Each analysis is the primary plan with its changes, read as a whole
// plan; the primary plan is unchanged, and what a run of an analysis
// does not do is left out of its plan.
func TestSensitivityDecodes(t *testing.T) {
	p, err := Parse([]byte(sensBase+twoAnalyses), "p.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if len(p.Sensitivity) != 2 {
		t.Fatalf("%d analyses", len(p.Sensitivity))
	}
	a, b := p.Sensitivity[0], p.Sensitivity[1]
	check := func(name string, got, want any) {
		t.Helper()
		if !reflect.DeepEqual(got, want) {
			t.Errorf("%s = %#v, want %#v", name, got, want)
		}
	}
	check("names", []string{a.Name, b.Name}, []string{"without_s3", "complete_cases"})
	check("keys", []string{a.Key, b.Key}, []string{"sensitivity[0]", "sensitivity[1]"})
	check("lines", []int{a.Line, b.Line}, []int{19, 26})
	check("why", b.Why, "Imputation assumes missing at random.")
	check("changes", [][]string{a.Changes, b.Changes}, [][]string{{"subset", "categorical"}, {"data.missing", "data.imputation", "covariance"}})
	check("primary subset", p.Subset, []data.Condition(nil))
	check("subset", len(a.Plan.Subset), 1)
	check("unobserved", a.Plan.Categorical[0].Unobserved, "drop")
	check("primary unobserved", p.Categorical[0].Unobserved, "refuse")
	check("missing", []string{p.Data.Missing, b.Plan.Data.Missing}, []string{"drop", "impute"})
	check("sets", b.Plan.Data.Imputation.Sets, 5)
	check("covariance", []fit.Covariance{p.Covariance, b.Plan.Covariance}, []fit.Covariance{fit.Observed, fit.Sandwich})
	check("rules", b.Plan.Rules, p.Rules)
	check("inference", b.Plan.Inference, Inference{Multiplicity: MultiplicityNone, TermTests: TermTestsNone})
	check("primary inference", len(p.Inference.Hypotheses), 1)
	check("focus", []string{p.Report.FocusPredictor, b.Plan.Report.FocusPredictor}, []string{"c", "a"})
	check("analysis's own analyses", b.Plan.Sensitivity, []Sensitivity(nil))
	check("hash", b.Plan.Hash, p.Hash)
}

// A change to data.missing other than impute drops the primary plan's
// data.imputation (which applies only to imputing) unless it gives one.
func TestSensitivityCompleteCases(t *testing.T) {
	src := strings.Replace(sensBase, "  file: d.csv\n", "  file: d.csv\n  missing: impute\n  imputation: {sets: 7}\n", 1) + `sensitivity:
  - name: complete_cases
    why: Imputation assumes missing at random.
    change:
      data.missing: drop
`
	p, err := Parse([]byte(src), "p.yaml")
	if err != nil {
		t.Fatal(err)
	}
	sp := p.Sensitivity[0].Plan
	if sp.Data.Missing != "drop" || sp.Data.Imputation != nil || p.Data.Imputation.Sets != 7 {
		t.Fatalf("missing %q, imputation %+v, primary's %+v", sp.Data.Missing, sp.Data.Imputation, p.Data.Imputation)
	}
}

// Bad sensitivity sections: each message names the file, line, column
// and key.
func TestSensitivityBad(t *testing.T) {
	item := func(name, why, change string) string {
		return "  - name: " + name + "\n    why: " + why + "\n    change:\n" + change
	}
	ok := item("s1", "because", "      covariance: sandwich\n")
	cases := []struct {
		name, src string
		want      []string
	}{
		{"key not changeable", item("s", "x", "      rules: []\n"),
			[]string{`p.yaml:22:7: sensitivity[0].change.rules: "rules" cannot be changed by a sensitivity analysis, which changes only data.missing, data.imputation, data.cluster, subset, categorical, predictors, models.partial, models.links, covariance, few_clusters`}},
		{"nested key", item("s", "x", "      models.effects: [parallel]\n"),
			[]string{`p.yaml:22:7: sensitivity[0].change.models.effects: "models.effects" cannot be changed`}},
		{"section", item("s", "x", "      data: {missing: impute}\n"),
			[]string{`p.yaml:22:7: sensitivity[0].change.data: write the key path in full (such as data.missing: ...), not a section`}},
		{"below a key", item("s", "x", "      models.partial.free: [b]\n"),
			[]string{`p.yaml:22:7: sensitivity[0].change.models.partial.free: a sensitivity analysis replaces models.partial whole: give models.partial with its full value`}},
		{"twice", item("s", "x", "      covariance: sandwich\n      covariance: expected\n"),
			[]string{`p.yaml:23:7: sensitivity[0].change.covariance: key is given twice (first at line 22)`}},
		{"same name", ok + item("s1", "again", "      covariance: expected\n"),
			[]string{`p.yaml:23:11: sensitivity[1].name: "s1" already names the sensitivity analysis at line 19; give each its own name`}},
		{"the primary's name", item("Primary", "x", "      covariance: sandwich\n"),
			[]string{`p.yaml:19:11: sensitivity[0].name: "Primary" names the primary analysis in the report and its tables; give the sensitivity analysis a name of its own`}},
		{"empty why", item("s", `""`, "      covariance: sandwich\n"),
			[]string{`p.yaml:20:10: sensitivity[0].why: is empty; say why this sensitivity analysis is done`}},
		{"no why", "  - name: s\n    change: {covariance: sandwich}\n",
			[]string{`p.yaml:19:5: sensitivity[0].why: required key is missing`}},
		{"empty change", "  - name: s\n    why: x\n    change: {}\n",
			[]string{`p.yaml:21:13: sensitivity[0].change: want a mapping of the keys it changes (one or more of data.missing,`}},
		{"changes nothing", item("s", "x", "      covariance: observed\n"),
			[]string{`p.yaml:22:7: sensitivity[0].change.covariance: changes nothing: the primary plan has this value already ("observed")`}},
		{"bad value inside", item("s", "x", "      covariance: robust\n"),
			[]string{`p.yaml:22:19: sensitivity[0].change.covariance: in sensitivity analysis "s": unknown covariance "robust"`}},
		{"bad item inside", item("s", "x", "      subset:\n        - {column: site, not_in: [s3]}\n"),
			[]string{`sensitivity[0].change.subset[0].not_in: in sensitivity analysis "s": unknown key "not_in"`}},
		{"problem it brings elsewhere", item("s", "x", "      predictors: [b, c, site]\n"),
			[]string{`p.yaml:11:12: models.partial.free[0]: with sensitivity analysis "s" (sensitivity[0], line 19) applied: "a" is not a predictor (predictors: b, c, site)`}},
		{"not a list", "  name: s\n", []string{`p.yaml:19:3: sensitivity: want a list, got a mapping`}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			src := sensBase + "sensitivity:\n" + c.src
			_, err := Parse([]byte(src), "p.yaml")
			if err == nil {
				t.Fatalf("no error for:\n%s", src)
			}
			for _, w := range c.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error does not contain\n  %s\ngot:\n  %s", w, strings.ReplaceAll(err.Error(), "\n", "\n  "))
				}
			}
		})
	}
}

// A problem of the primary plan is said once, not again for each
// analysis that keeps it.
func TestSensitivityPrimaryProblemOnce(t *testing.T) {
	src := strings.Replace(sensBase, "{by: aic}", "{by: aicc}", 1) + twoAnalyses
	_, err := Parse([]byte(src), "p.yaml")
	if err == nil || strings.Count(err.Error(), "aicc") != 1 || strings.Count(err.Error(), "\n") != 0 {
		t.Fatalf("want the one problem once, got:\n%v", err)
	}
}

// The analyses are part of the canonical form (so of a registration),
// which stays a plan of the same meaning; a plan without them keeps its
// canonical form.
func TestSensitivityCanonical(t *testing.T) {
	p, err := Parse([]byte(sensBase+twoAnalyses), "p.yaml")
	if err != nil {
		t.Fatal(err)
	}
	c := p.Canonical()
	for _, w := range []string{`"sensitivity": [`, `"name": "without_s3"`, `"data.missing": "impute"`, `"covariance": "sandwich"`, `"none_of": [`} {
		if !bytes.Contains(c, []byte(w)) {
			t.Errorf("canonical form lacks %s:\n%s", w, c)
		}
	}
	q, err := Parse(c, "elsewhere/plan.json")
	if err != nil {
		t.Fatalf("canonical form does not parse: %v\n%s", err, c)
	}
	if !bytes.Equal(q.Canonical(), c) {
		t.Errorf("canonical form changed on reparse:\n%s\nvs\n%s", q.Canonical(), c)
	}
	plain, err := Parse([]byte(sensBase), "p.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if bytes.Contains(plain.Canonical(), []byte("sensitivity")) {
		t.Errorf("a plan without sensitivity analyses has them in its canonical form")
	}
}

// A column only an analysis uses that the dictionary does not describe is
// named once, at the analysis's change, not again by the analysis's own
// plan.
func TestSensitivityUndescribedColumnOnce(t *testing.T) {
	src := sensBase + `dictionary:
  a: {label: A}
  b: {label: B}
  c: {label: C}
  site: {label: Site}
sensitivity:
  - name: clustered
    why: Sites share staff.
    change:
      data.cluster: ward
      covariance: clustered
`
	_, err := Parse([]byte(src), "p.yaml")
	if err == nil || strings.Count(err.Error(), `"ward"`) != 1 || !strings.Contains(err.Error(), `column "ward" is used (sensitivity[0].change.data.cluster) but not described`) {
		t.Fatalf("want the column named once, at the change, got:\n%v", err)
	}
}
