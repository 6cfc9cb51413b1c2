package plan

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"ordplan/runner/fit"
)

// base is a small valid plan; bad plans below are variations of it.
const base = `version: 1
data:
  file: d.csv
outcomes:
  - column: y
predictors: [a, b, c]
models:
  partial:
    free: [a]
rules:
  - choose: {by: aic}
`

func TestExamplePlan(t *testing.T) {
	path := filepath.Join("..", "plans", "example.yaml")
	p, err := Load(path)
	if err != nil {
		t.Fatalf("Load: %v", err)
	}
	src, _ := os.ReadFile(path)
	if len(p.Hash) != 64 || p.Hash == strings.Repeat("0", 64) {
		t.Errorf("Hash = %q", p.Hash)
	}
	if p2, _ := Parse(src, path); p2 == nil || p2.Hash != p.Hash {
		t.Errorf("Parse and Load disagree on the hash")
	}
	check := func(name string, got, want any) {
		t.Helper()
		if !reflect.DeepEqual(got, want) {
			t.Errorf("%s = %#v, want %#v", name, got, want)
		}
	}
	check("Path", p.Path, path)
	check("Dir", p.Dir, filepath.Join("..", "plans"))
	check("Title", p.Title, "Cycling safety after the quiet-streets pilot")
	check("Seed", p.Seed, uint64(20261202))
	check("Data", p.Data, Data{
		File:          "data/quietstreets.csv",
		Path:          filepath.Join("..", "plans", "data", "quietstreets.csv"),
		FileAt:        PartEntry{Line: 11, Col: 9},
		Missing:       "drop",
		MissingValues: []string{"", "NA"},
		Delimiter:     "comma",
		Decimal:       "point",
		WeightKind:    "frequency",
	})
	check("Outcomes", p.Outcomes, []Outcome{{
		Column:     "safety",
		Categories: []string{"very_unsafe", "unsafe", "neutral", "safe", "very_safe"},
		Label:      "Feels safe cycling on own street",
	}})
	check("Predictors", p.Predictors, []string{"pilot", "female", "age", "child_home", "years_log", "cyclist", "street_type", "pilot&street_type"})
	check("Sources", p.SourceColumns(), []string{"pilot", "female", "age", "child_home", "years_resident", "cyclist", "street_type"})
	check("Models", p.Models, Models{
		Approaches: []fit.Comparison{fit.Cumulative, fit.Stage, fit.Adjacent},
		Direction:  "forward",
		Effects:    fit.StructureWords.All(),
		Links:      []fit.Link{fit.Logit},
		Partial: Partial{
			Free:   []string{"pilot", "female"},
			Groups: []Group{{Name: "g1", Predictors: []string{"pilot", "female"}}},
		},
	})
	check("Tests", p.Tests, Tests{ParallelLines: fit.TestWords.All(), Alpha: 0.05})
	wantKinds := []string{RuleRejectUnconverged, RuleRejectNegativeProbabilities, RuleRejectIfSparse, RuleRejectIfTestRejects, RulePreferSimpler}
	if len(p.Rules) != len(wantKinds) {
		t.Fatalf("got %d rules, want %d", len(p.Rules), len(wantKinds))
	}
	for i, k := range wantKinds {
		check("Rules kind", p.Rules[i].Kind, k)
		if p.Rules[i].Line == 0 {
			t.Errorf("rule %d has no line", i)
		}
	}
	check("rule 2", p.Rules[2], Rule{Line: p.Rules[2].Line, Kind: RuleRejectIfSparse, PerParameter: 10, SmallestCategory: 5, Within: "pilot"})
	check("rule 3", p.Rules[3], Rule{Line: p.Rules[3].Line, Kind: RuleRejectIfTestRejects, Test: fit.TestLR, Alpha: 0.05, Against: AgainstLeast})
	check("rule 4", p.Rules[4], Rule{Line: p.Rules[4].Line, Kind: RulePreferSimpler, By: "bic", Margin: 2, Otherwise: OtherwiseStop})
	check("Covariance", p.Covariance, fit.Observed)
	check("Report", p.Report, Report{
		Title:           "Cycling safety after the quiet-streets pilot",
		FocusPredictor:  "age",
		PanelsBy:        "street_type",
		ConfidenceLevel: 0.95,
	})
}

func TestDefaults(t *testing.T) {
	src := base + "title: Small\ntests: {alpha: 0.1}\n"
	src = strings.Replace(src, "  - choose: {by: aic}\n", "  - reject_if_test_rejects: true\n  - prefer_simpler: true\n", 1)
	p, err := Parse([]byte(src), filepath.Join("plans", "small.yaml"))
	if err != nil {
		t.Fatalf("Parse: %v", err)
	}
	check := func(name string, got, want any) {
		t.Helper()
		if !reflect.DeepEqual(got, want) {
			t.Errorf("%s = %#v, want %#v", name, got, want)
		}
	}
	check("Seed", p.Seed, uint64(1))
	check("Covariance", p.Covariance, fit.Observed)
	check("Data", p.Data, Data{File: "d.csv", Path: filepath.Join("plans", "d.csv"), FileAt: PartEntry{Line: 3, Col: 9}, Missing: "drop", WeightKind: "frequency", Delimiter: "comma", Decimal: "point"})
	check("Outcomes", p.Outcomes, []Outcome{{Column: "y", Label: "y"}})
	check("Approaches", p.Models.Approaches, []fit.Comparison{fit.Cumulative, fit.Stage, fit.Adjacent})
	check("Direction", p.Models.Direction, "forward")
	check("Effects", p.Models.Effects, []fit.Structure{fit.ParallelEffects, fit.PartialEffects, fit.ConstrainedEffects, fit.NonparallelEffects})
	check("Links", p.Models.Links, []fit.Link{fit.Logit})
	check("Groups", p.Models.Partial.Groups, []Group{{Name: "", Predictors: []string{"a"}}})
	check("Select", p.Models.Partial.Select, (*Select)(nil))
	check("Tests", p.Tests, Tests{ParallelLines: []fit.TestKind{fit.TestBrant, fit.TestLR, fit.TestScore, fit.TestWald}, Alpha: 0.1})
	check("Rules", p.Rules, []Rule{
		{Line: 11, Kind: RuleRejectIfTestRejects, Test: fit.TestLR, Alpha: 0.1, Against: AgainstLeast},
		{Line: 12, Kind: RulePreferSimpler, By: "bic", Margin: 2, Otherwise: OtherwiseStop},
	})
	check("Report", p.Report, Report{Title: "Small", FocusPredictor: "a", ConfidenceLevel: 0.95})

	// choose keeps a zero margin; select fills its defaults; an empty
	// missing_values list differs from an absent one.
	src = strings.Replace(base, "free: [a]", "select: {method: stepwise}", 1) +
		"seed: 0\nreport: {title: Other}\n"
	src = strings.Replace(src, "  file: d.csv\n", "  file: /abs/d.csv\n  missing_values: []\n", 1)
	p, err = Parse([]byte(src), "x.yaml")
	if err != nil {
		t.Fatalf("Parse: %v", err)
	}
	check("Seed", p.Seed, uint64(0))
	check("Data.Path", p.Data.Path, filepath.FromSlash("/abs/d.csv"))
	check("MissingValues", p.Data.MissingValues, []string{})
	check("Select", p.Models.Partial.Select, &Select{Method: "stepwise", Alpha: 0.05, Test: fit.TestWald})
	check("Groups", p.Models.Partial.Groups, []Group(nil))
	check("Rules", p.Rules, []Rule{{Line: 12, Kind: RuleChoose, By: "aic", Margin: 0, Otherwise: OtherwiseStop}})
	check("Report.Title", p.Report.Title, "Other")
}

func TestBadPlans(t *testing.T) {
	// Each case replaces one piece of base (old -> new) or, with old
	// empty, appends new; want lists substrings the error must contain.
	const tail = "models:\n  partial:\n    free: [a]\nrules:\n  - choose: {by: aic}\n"
	cases := []struct {
		name     string
		old, new string
		want     []string
	}{
		{"unknown criterion", "{by: aic}", "{by: aicc}",
			[]string{`bad.yaml:11:18: rules[0].choose.by: unknown criterion "aicc" (want aic, bic or tic)`}},
		{"criterion case", "{by: aic}", "{by: AIC}",
			[]string{`rules[0].choose.by: unknown criterion "AIC" (want aic, bic or tic); did you mean "aic"?`}},
		{"unknown top key", "", "colour: blue\n",
			[]string{`bad.yaml:12:1: colour: unknown key "colour" (allowed: version, title, seed, data,`}},
		{"unknown nested key", "  file: d.csv\n", "  file: d.csv\n  sep: ';'\n",
			[]string{`bad.yaml:4:3: data.sep: unknown key "sep" (allowed: file, parts, missing, missing_values,`}},
		{"duplicate key", "", "title: a\ntitle: b\n",
			[]string{`bad.yaml:13:1: title: key is given twice (first at line 12)`}},
		{"missing version", "version: 1\n", "",
			[]string{`bad.yaml:1:1: version: required key is missing`}},
		{"null version", "version: 1", "version: ~",
			[]string{`bad.yaml:1:10: version: required; null does not count as a value`}},
		{"wrong version", "version: 1", "version: 2",
			[]string{`bad.yaml:1:10: version: unsupported plan version 2 (want 1)`}},
		{"version as text", "version: 1", "version: one",
			[]string{`version: want a whole number, got string "one"`}},
		{"missing data file", "  file: d.csv\n", "  missing: drop\n",
			[]string{`bad.yaml:3:3: data.file: required key is missing`}},
		{"missing outcomes", "outcomes:\n  - column: y\n", "",
			[]string{`outcomes: required key is missing`}},
		{"missing predictors", "predictors: [a, b, c]\n", "",
			[]string{`predictors: required key is missing`}},
		{"empty predictors", "predictors: [a, b, c]", "predictors: []",
			[]string{`bad.yaml:6:13: predictors: list is empty; give at least one predictor`}},
		{"missing rules", "rules:\n  - choose: {by: aic}\n", "",
			[]string{`rules: required key is missing`}},
		{"string for list", "predictors: [a, b, c]", "predictors: a",
			[]string{`bad.yaml:6:13: predictors: want a list, got string "a"; write [a] for a list of one`}},
		{"list for string", "  file: d.csv", "  file: [d.csv]",
			[]string{`bad.yaml:3:9: data.file: want a name, got a list`}},
		{"mapping for list", "predictors: [a, b, c]", "predictors: {a: 1}",
			[]string{`predictors: want a list, got a mapping`}},
		{"duplicate predictor", "predictors: [a, b, c]", "predictors: [a, b, a]",
			[]string{`bad.yaml:6:20: predictors[2]: "a" is listed twice (first at line 6)`}},
		{"empty name", "predictors: [a, b, c]", `predictors: [a, "", c]`,
			[]string{`predictors[1]: name is empty`}},
		{"unknown approach", "models:\n", "models:\n  approaches: [cumulative, ordinal]\n",
			[]string{`bad.yaml:8:28: models.approaches[1]: unknown approach "ordinal" (want cumulative, stage or adjacent)`}},
		{"unknown effect structure", "models:\n", "models:\n  effects: [parallel, partial, full]\n",
			[]string{`models.effects[2]: unknown effect structure "full" (want parallel, partial, constrained, nonparallel or stereotype)`}},
		{"unknown link", "models:\n", "models:\n  links: [logit, tobit]\n",
			[]string{`models.links[1]: unknown link "tobit" (want logit, probit, cloglog, loglog or cauchy)`}},
		{"duplicate link", "models:\n", "models:\n  links: [logit, probit, logit]\n",
			[]string{`bad.yaml:8:26: models.links[2]: "logit" is listed twice (first at line 8)`}},
		{"unknown direction", "models:\n", "models:\n  direction: sideways\n",
			[]string{`models.direction: unknown direction "sideways" (want forward or backward)`}},
		{"run_every_start without a search from several starts", "models:\n", "models:\n  effects: [parallel, nonparallel]\n  run_every_start: true\n",
			[]string{`bad.yaml:9:20: models.run_every_start: applies only to constrained and stereotype models (searched from several starts), and models.effects includes neither`}},
		{"run_every_start not a boolean", "models:\n", "models:\n  run_every_start: always\n",
			[]string{`models.run_every_start: want true or false, got string "always"`}},
		{"direction without stage", "models:\n", "models:\n  approaches: [cumulative]\n  direction: backward\n",
			[]string{`bad.yaml:9:14: models.direction: only the stage approach has a direction`}},
		{"unknown test", "", "tests:\n  parallel_lines: [brant, chow]\n",
			[]string{`bad.yaml:13:27: tests.parallel_lines[1]: unknown parallel-lines test "chow" (want brant, lr, score, wald or wolfe_gould)`}},
		{"tests alpha range", "", "tests: {alpha: 1.5}\n",
			[]string{`tests.alpha: 1.5 is out of range (want a number strictly between 0 and 1)`}},
		{"alpha not finite", "", "tests: {alpha: .nan}\n",
			[]string{`tests.alpha: want a finite number, got .nan`}},
		{"unknown covariance", "", "covariance: bootstrap\n",
			[]string{`bad.yaml:12:13: covariance: unknown covariance "bootstrap" (want observed, expected, sandwich, sandwich_plain or clustered)`}},
		{"clustered covariance without cluster", "", "covariance: clustered\n",
			[]string{`bad.yaml:12:13: covariance: clustered covariance needs a cluster column, and data.cluster is not set`}},
		{"cluster column without clustered covariance", "  file: d.csv\n", "  file: d.csv\n  cluster: street\n",
			[]string{`bad.yaml:4:12: data.cluster: the cluster column is used only with covariance: clustered`}},
		{"unknown weight kind", "  file: d.csv\n", "  file: d.csv\n  weight_kind: survey\n",
			[]string{`data.weight_kind: unknown weight kind "survey" (want frequency or sampling)`}},
		{"sampling weights without weights", "  file: d.csv\n", "  file: d.csv\n  weight_kind: sampling\n",
			[]string{`bad.yaml:4:16: data.weight_kind: sampling weights need a weights column`}},
		{"unknown missing mode", "  file: d.csv\n", "  file: d.csv\n  missing: guess\n",
			[]string{`data.missing: unknown missing-data mode "guess" (want drop, refuse or impute)`}},
		{"impute and imputed sets", "  file: d.csv\n", "  file: d.csv\n  missing: impute\n  imputed: {files: [a.csv, b.csv]}\n",
			[]string{`bad.yaml:4:12: data.missing: impute makes the imputed sets, while data.imputed names sets made elsewhere; give one or the other`}},
		{"imputation without impute", "  file: d.csv\n", "  file: d.csv\n  imputation: {sets: 5}\n",
			[]string{`bad.yaml:4:15: data.imputation: is used only with data.missing: impute (data.missing is "drop")`}},
		{"one imputed set", "  file: d.csv\n", "  file: d.csv\n  missing: impute\n  imputation: {sets: 1}\n",
			[]string{`bad.yaml:5:22: data.imputation.sets: pooling needs at least 2 imputed sets, got 1`}},
		{"no iteration", "  file: d.csv\n", "  file: d.csv\n  missing: impute\n  imputation: {iterations: 0}\n",
			[]string{`bad.yaml:5:28: data.imputation.iterations: want 1 to 10000 iterations, got 0`}},
		{"imputation model of an unused column", "  file: d.csv\n", "  file: d.csv\n  missing: impute\n  imputation:\n    column_models: {z: mean_matching}\n",
			[]string{`bad.yaml:6:24: data.imputation.column_models.z: "z" is not an imputed column; the imputed columns are the outcomes and the columns the terms read: y, a, b, c`}},
		{"unknown imputation model", "  file: d.csv\n", "  file: d.csv\n  missing: impute\n  imputation:\n    column_models: {a: nearest}\n",
			[]string{`data.imputation.column_models.a: unknown imputation model "nearest" (want mean_matching, normal_draw, logistic, multinomial or ordinal)`}},
		{"imputation model of another kind", "  file: d.csv\n", "  file: d.csv\n  missing: impute\n  imputation:\n    column_models: {a: logistic}\n",
			[]string{`data.imputation.column_models.a: logistic imputes a column with two levels; this column is numeric`}},
		{"normal draws for a column a log term reads", "  file: d.csv\noutcomes:\n  - column: y\npredictors: [a, b, c]", "  file: d.csv\n  missing: impute\n  imputation:\n    column_models: {b: normal_draw}\noutcomes:\n  - column: y\npredictors: [a, {name: lb, column: b, log: {shift: 1}}, c]",
			[]string{`bad.yaml:6:24: data.imputation.column_models.b: normal_draw draws b from a normal distribution, which can give values at or below -1, where log(b + 1) of the term lb (predictors[1]) is undefined: a run would stop on the first such draw; impute b by mean_matching (the default), which imputes values observed in the data`}},
		{"normal draws for a column a square root reads", "  file: d.csv\noutcomes:\n  - column: y\npredictors: [a, b, c]", "  file: d.csv\n  missing: impute\n  imputation:\n    column_models: {c: normal_draw}\noutcomes:\n  - column: y\npredictors: [a, b, {column: c, sqrt: true}]",
			[]string{`data.imputation.column_models.c: normal_draw draws c from a normal distribution, which can give values below 0, where sqrt(c) of the term c.sqrt (predictors[2]) is undefined`}},
		{"imputation with sampling weights", "  file: d.csv\n", "  file: d.csv\n  missing: impute\n  weights: w\n  weight_kind: sampling\n",
			[]string{`data.weight_kind: imputation by chained equations (data.missing: impute) takes frequency weights (counts of identical units, each imputed on its own), not sampling weights`}},
		{"outcome also predictor", "predictors: [a, b, c]", "predictors: [a, y, c]",
			[]string{`bad.yaml:5:13: outcomes[0].column: "y" is both an outcome and a predictor (predictors[1], line 6)`}},
		{"weights is a predictor", "  file: d.csv\n", "  file: d.csv\n  weights: b\n",
			[]string{`data.weights: "b" is also listed in predictors (predictors[1]): ordplan reads each column in one role; a weight says how much a row counts`}},
		{"cluster is a predictor", "  file: d.csv\n", "  file: d.csv\n  cluster: c\ncovariance: clustered\n",
			[]string{`data.cluster: "c" is also listed in predictors (predictors[2]): ordplan reads each column in one role; the cluster ids are read as labels, the predictor as values or levels; to cluster the errors by a column that is also a predictor (sites as fixed effects and errors clustered by site), put a copy of the column in the data under another name and name the copy here`}},
		{"one category", "  - column: y\n", "  - column: y\n    categories: [low]\n",
			[]string{`bad.yaml:6:17: outcomes[0].categories: an ordinal outcome needs at least 2 categories, got 1`}},
		{"duplicate category", "  - column: y\n", "  - column: y\n    categories: [low, mid, low]\n",
			[]string{`outcomes[0].categories[2]: "low" is listed twice (first at line 6)`}},
		{"category is a missing marker", "  file: d.csv\noutcomes:\n  - column: y\n", "  file: d.csv\n  missing_values: [NA]\noutcomes:\n  - column: y\n    categories: [low, NA, high]\n",
			[]string{`bad.yaml:7:23: outcomes[0].categories[1]: category "NA" of column "y" is also a missing-value marker in data.missing_values: every cell "NA" is read as missing, never as this value; remove it from data.missing_values ([]), or recode the value in the data`}},
		{"duplicate outcome", "  - column: y\n", "  - column: y\n  - column: y\n",
			[]string{`bad.yaml:6:13: outcomes[1].column: outcome "y" is listed twice (first at line 5)`}},
		{"outcomes differing in case", "  - column: y\n", "  - column: y\n  - column: Y\n",
			[]string{`bad.yaml:6:13: outcomes[1].column: outcomes "y" and "Y" (line 5) differ only in letter case: their output files (table-models-y.csv and table-models-Y.csv, predictions, imputed sets) would be one file where the file system ignores case (macOS, Windows); rename one of the outcome columns in the data and the plan`}},
		{"outcome without column", "  - column: y\n", "  - label: Y\n",
			[]string{`bad.yaml:5:5: outcomes[0].column: required key is missing`}},
		{"free not a predictor", "free: [a]", "free: [a, z]",
			[]string{`bad.yaml:9:15: models.partial.free[1]: "z" is not a predictor (predictors: a, b, c)`}},
		{"no partial set", "models:\n  partial:\n    free: [a]\n", "",
			[]string{`models.partial: effect structures "partial" and "constrained" need a partial set, and models.effects is not given, so its default (parallel, partial, constrained, nonparallel) includes them: give models.partial.free (a list of predictors) or models.partial.select, or list models.effects without them, e.g. models: {effects: [parallel, nonparallel]}`}},
		{"no partial set for constrained", "models:\n  partial:\n    free: [a]\n", "models:\n  effects: [parallel, constrained]\n",
			[]string{`bad.yaml:8:3: models.partial: effect structure "constrained" needs a partial set`}},
		{"free and select", "    free: [a]\n", "    free: [a]\n    select: {method: stepwise}\n",
			[]string{`bad.yaml:10:13: models.partial.select: give either free or select, not both`}},
		{"partial unused", "models:\n", "models:\n  effects: [parallel, nonparallel]\n",
			[]string{`bad.yaml:10:5: models.partial: is unused, because models.effects includes neither partial nor constrained`}},
		{"select method", "free: [a]", "select: {method: lasso}",
			[]string{`models.partial.select.method: unknown selection method "lasso" (want stepwise)`}},
		{"select alpha", "free: [a]", "select: {alpha: 0}",
			[]string{`models.partial.select.alpha: 0 is out of range`}},
		{"select test", "free: [a]", "select: {test: score}",
			[]string{`models.partial.select.test: unknown selection test "score" (want wald or lr)`}},
		{"group predictor not a predictor", "    free: [a]\n", "    free: [a]\n    groups:\n      - name: g\n        predictors: [a, q]\n",
			[]string{`bad.yaml:12:25: models.partial.groups[0].predictors[1]: "q" is not a predictor`}},
		{"group predictor not free", "    free: [a]\n", "    free: [a]\n    groups:\n      - name: g\n        predictors: [a, b]\n",
			[]string{`models.partial.groups[0].predictors[1]: "b" is not in models.partial.free`}},
		{"free predictor in no group", "    free: [a]\n", "    free: [a, b]\n    groups:\n      - name: g\n        predictors: [a]\n",
			[]string{`bad.yaml:11:7: models.partial.groups: free predictor "b" is in no group`}},
		{"predictor in two groups", "    free: [a]\n", "    free: [a, b]\n    groups:\n      - {name: g, predictors: [a, b]}\n      - {name: h, predictors: [b]}\n",
			[]string{`bad.yaml:12:32: models.partial.groups[1].predictors[0]: "b" is already in group "g"`}},
		{"unnamed groups", "    free: [a]\n", "    free: [a, b]\n    groups:\n      - {predictors: [a]}\n      - {predictors: [b]}\n",
			[]string{`models.partial.groups[0]: a name is required when there are several groups`}},
		{"duplicate group names", "    free: [a]\n", "    free: [a, b]\n    groups:\n      - {name: g, predictors: [a]}\n      - {name: g, predictors: [b]}\n",
			[]string{`bad.yaml:12:16: models.partial.groups[1].name: group name "g" is used twice (first at line 11)`}},
		{"groups unused", "models:\n  partial:\n    free: [a]\n", "models:\n  effects: [partial]\n  partial:\n    free: [a]\n    groups: [{name: g, predictors: [a]}]\n",
			[]string{`models.partial.groups: groups are used only by the constrained effect structure`}},
		{"groups with select", "free: [a]", "select: {test: lr}\n    groups: [{name: g, predictors: [a]}]",
			[]string{`models.partial.groups: groups split a listed free set; they cannot be used with select`}},
		{"stereotype without adjacent", "models:\n", "models:\n  approaches: [cumulative, stage]\n  effects: [parallel, partial, stereotype]\n",
			[]string{`bad.yaml:9:32: models.effects[2]: the stereotype effect structure needs the adjacent approach`}},
		{"unknown rule kind", "  - choose: {by: aic}\n", "  - reject_everything: true\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:11:5: rules[0]: unknown rule kind "reject_everything" (want reject_unconverged, reject_negative_probabilities, reject_if_test_rejects, reject_if_simpler_is_close, reject_if_sparse, reject_if_unstable, choose or prefer_simpler)`}},
		{"rule as string", "  - choose: {by: aic}\n", "  - reject_unconverged\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:11:5: rules[0]: want a one-key mapping naming the rule kind`, `got string "reject_unconverged"`}},
		{"rule with two keys", "  - choose: {by: aic}\n", "  - choose: {by: aic}\n    reject_unconverged: true\n",
			[]string{`rules[0]: want a one-key mapping naming the rule kind`, `got a mapping with 2 keys`}},
		{"rule false", "  - choose: {by: aic}\n", "  - reject_unconverged: false\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:11:25: rules[0].reject_unconverged: want true, got false; remove the rule to turn it off`}},
		{"rule options on flag", "  - choose: {by: aic}\n", "  - reject_unconverged: {strict: true}\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_unconverged: want true (this rule has no options), got a mapping`}},
		{"no final rule", "  - choose: {by: aic}\n", "  - reject_unconverged: true\n",
			[]string{`bad.yaml:11:3: rules: the last rule must be choose or prefer_simpler, and neither is given`}},
		{"final rule not last", "  - choose: {by: aic}\n", "  - choose: {by: aic}\n  - reject_unconverged: true\n",
			[]string{`bad.yaml:11:5: rules[0]: must be the last rule, but 1 rule follows it`}},
		{"two final rules", "  - choose: {by: aic}\n", "  - choose: {by: aic}\n  - prefer_simpler: true\n",
			[]string{`bad.yaml:12:5: rules[1]: only one choose or prefer_simpler rule is allowed (the first is at line 11)`}},
		{"unknown rule test", "  - choose: {by: aic}\n", "  - reject_if_test_rejects: {test: f}\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:11:36: rules[0].reject_if_test_rejects.test: unknown test "f" (want lr, wald, score or brant)`}},
		{"unknown rule option", "  - choose: {by: aic}\n", "  - reject_if_test_rejects: {level: 0.1}\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_if_test_rejects.level: unknown key "level" (allowed: test, alpha, against, applies_to)`}},
		{"rule alpha range", "  - choose: {by: aic}\n", "  - reject_if_test_rejects: {alpha: -1}\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_if_test_rejects.alpha: -1 is out of range`}},
		{"negative margin", "{by: aic}", "{by: aic, margin: -2}",
			[]string{`bad.yaml:11:31: rules[0].choose.margin: -2 is out of range (want a number >= 0)`}},
		{"margin as text", "{by: aic}", "{margin: wide}",
			[]string{`bad.yaml:11:22: rules[0].choose.margin: want a number >= 0, got string "wide"`}},
		{"alpha as text", "  - choose: {by: aic}\n", "  - reject_if_test_rejects: {alpha: low}\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:11:37: rules[0].reject_if_test_rejects.alpha: want a number strictly between 0 and 1, got string "low"`}},
		{"max_difference as a date", "  - choose: {by: aic}\n", "  - reject_if_simpler_is_close: {max_difference: 2024-01-01}\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:11:50: rules[0].reject_if_simpler_is_close.max_difference: want a number strictly between 0 and 1, got the date "2024-01-01"`}},
		{"grid value as text", "  - choose: {by: aic}\n", "  - reject_if_simpler_is_close: {max_difference: 0.05, grid: {a: [1, forty]}}\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:11:70: rules[0].reject_if_simpler_is_close.grid.a[1]: want a number, got string "forty"`}},
		{"grid giving a categorical column a mapping", "predictors: [a, b, c]\nmodels:\n  partial:\n    free: [a]\nrules:\n  - choose: {by: aic}\n",
			"categorical:\n  b: {levels: [p, q, north]}\npredictors: [a, b, c]\nmodels:\n  partial:\n    free: [a]\nrules:\n  - reject_if_simpler_is_close: {max_difference: 0.05, grid: {b: {p: 1}}}\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:13:66: rules[0].reject_if_simpler_is_close.grid.b: "b" is categorical: give all (b: all, every level the rows used have), one of its levels, or a list of its levels; got a mapping`}},
		{"grid giving a categorical column an empty list", "predictors: [a, b, c]\nmodels:\n  partial:\n    free: [a]\nrules:\n  - choose: {by: aic}\n",
			"categorical:\n  b: {levels: [p, q, north]}\npredictors: [a, b, c]\nmodels:\n  partial:\n    free: [a]\nrules:\n  - reject_if_simpler_is_close: {max_difference: 0.05, grid: {b: []}}\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:13:66: rules[0].reject_if_simpler_is_close.grid.b: "b" is categorical`}},
		{"grid naming levels a categorical column lacks", "predictors: [a, b, c]\nmodels:\n  partial:\n    free: [a]\nrules:\n  - choose: {by: aic}\n",
			"categorical:\n  b: {levels: [p, q, north]}\npredictors: [a, b, c]\nmodels:\n  partial:\n    free: [a]\nrules:\n  - reject_if_simpler_is_close: {max_difference: 0.05, grid: {a: [1], b: [q, nroth, q, all, 7]}}\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:13:78: rules[0].reject_if_simpler_is_close.grid.b[1]: "nroth" is not a level of "b" (categorical.b.levels: p, q, north); nearest levels: "north"`, `bad.yaml:13:85: rules[0].reject_if_simpler_is_close.grid.b[2]: the level "q" is listed twice`, `bad.yaml:13:88: rules[0].reject_if_simpler_is_close.grid.b[3]: "all" is not a level of "b" (categorical.b.levels: p, q, north); in a list, all names a level: write b: all, without brackets, for every level`, `bad.yaml:13:93: rules[0].reject_if_simpler_is_close.grid.b[4]: "7" is not a level of "b" (categorical.b.levels: p, q, north)`}},
		{"grid naming one level a categorical column lacks", "predictors: [a, b, c]\nmodels:\n  partial:\n    free: [a]\nrules:\n  - choose: {by: aic}\n",
			"categorical:\n  b: {levels: [p, q, north]}\npredictors: [a, b, c]\nmodels:\n  partial:\n    free: [a]\nrules:\n  - reject_if_simpler_is_close: {max_difference: 0.05, grid: {b: Q}}\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:13:66: rules[0].reject_if_simpler_is_close.grid.b: "Q" is not a level of "b" (categorical.b.levels: p, q, north); nearest levels: "q"`}},
		{"min_starts_agreeing as text", "  - choose: {by: aic}\n", "  - reject_if_unstable: {min_starts_agreeing: many}\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:11:47: rules[0].reject_if_unstable.min_starts_agreeing: want a whole number from 1 to 1000, got string "many"`}},
		{"binary value", "  - choose: {by: aic}\n", "  - choose: {by: aic, margin: !!binary aGk=}\n",
			[]string{`bad.yaml:11:31: rules[0].choose.margin: want a number >= 0, got "aGk=" marked as YAML type binary`}},
		{"duplicate rule", "  - choose: {by: aic}\n", "  - reject_unconverged: true\n  - reject_unconverged: {}\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:12:5: rules[1]: repeats the rule at line 11`}},
		{"negative probabilities without cumulative", tail, "models:\n  approaches: [stage, adjacent]\n  partial:\n    free: [a]\nrules:\n  - reject_negative_probabilities: true\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:12:36: rules[0].reject_negative_probabilities: applies only to cumulative fits, and models.approaches does not include cumulative`}},
		{"test rule with one effect structure", tail, "models:\n  effects: [parallel]\nrules:\n  - reject_if_test_rejects: true\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:10:29: rules[0].reject_if_test_rejects: tests each model against a less constrained one, but models.effects (parallel) gives no such pair`}},
		{"applies_to an effect structure not fitted", tail, "models:\n  effects: [parallel, partial, nonparallel]\n  partial: {free: [a]}\nrules:\n  - reject_if_test_rejects: {applies_to: [partial, stereotype]}\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:11:52: rules[0].reject_if_test_rejects.applies_to[1]: "stereotype" is not in models.effects (parallel, partial, nonparallel): the rule would test no such model`}},
		{"applies_to the least constrained structure", tail, "models:\n  effects: [parallel, nonparallel]\nrules:\n  - reject_if_test_rejects: {applies_to: [parallel, nonparallel]}\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_if_test_rejects.applies_to[1]: "nonparallel" effects are the least constrained: no model is less constrained to test them against`}},
		{"brant outside cumulative logit", tail, "models:\n  approaches: [cumulative, stage]\n  effects: [parallel, nonparallel]\nrules:\n  - reject_if_test_rejects: {test: brant}\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:11:36: rules[0].reject_if_test_rejects.test: the Brant test is not defined for 1 of the 2 comparisons this rule makes (least_constrained): stage/parallel/logit against stage/nonparallel/logit; the Brant test compares the cumulative logit parallel model with the nonparallel one, and nothing else; use test: lr, or keep the Brant rule to a plan of cumulative logit models with applies_to: [parallel]`}},
		{"brant with partial models", tail, "models:\n  approaches: [cumulative]\n  effects: [parallel, partial, nonparallel]\n  partial: {free: [a]}\nrules:\n  - reject_if_test_rejects: {test: brant, against: each_less_constrained}\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_if_test_rejects.test: the Brant test is not defined for 2 of the 3 comparisons this rule makes (each_less_constrained): cumulative/parallel/logit against cumulative/partial/logit, cumulative/partial/logit against cumulative/nonparallel/logit;`}},
		{"wald with constrained models", tail, "models:\n  approaches: [cumulative]\n  effects: [parallel, constrained]\n  partial: {free: [a]}\nrules:\n  - reject_if_test_rejects: {test: wald}\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_if_test_rejects.test: the Wald test is not defined for 1 of the 1 comparisons this rule makes (least_constrained): cumulative/parallel/logit against cumulative/constrained/logit; the Wald test here compares models whose slopes are linear in the parameters`}},
		{"unknown against", "  - choose: {by: aic}\n", "  - reject_if_test_rejects: {against: nearest}\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_if_test_rejects.against: unknown comparison "nearest" (want least_constrained, next_less_constrained or each_less_constrained)`}},
		{"applies_to leaves nothing", tail, "models:\n  effects: [parallel, nonparallel]\nrules:\n  - reject_if_test_rejects: {applies_to: [nonparallel]}\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_if_test_rejects.applies_to[0]: "nonparallel" effects are the least constrained: no model is less constrained to test them against`}},
		{"sampling weights with bic", "  file: d.csv\n", "  file: d.csv\n  weights: w\n  weight_kind: sampling\n",
			[]string{`bad.yaml:13:18: rules[0].choose.by: by: aic assumes a likelihood, but with sampling weights (data.weight_kind: sampling) the fits maximize a pseudo-likelihood; use by: tic`}},
		{"sampling weights default criterion", "  file: d.csv\noutcomes:\n  - column: y\npredictors: [a, b, c]\nmodels:\n  partial:\n    free: [a]\nrules:\n  - choose: {by: aic}\n",
			"  file: d.csv\n  weights: w\n  weight_kind: sampling\noutcomes:\n  - column: y\npredictors: [a, b, c]\nmodels:\n  partial:\n    free: [a]\nrules:\n  - prefer_simpler: true\n",
			[]string{`rules[0].prefer_simpler: by: bic (the default) assumes a likelihood`}},
		{"sampling weights with lr test", "data:\n  file: d.csv\n", "data:\n  file: d.csv\n  weights: w\n  weight_kind: sampling\n",
			[]string{`rules[0].choose.by: by: aic assumes a likelihood`}},
		{"fallback not in the grid", "{by: aic}", "{by: aic, otherwise: cumulative/stereotype/probit}",
			[]string{`bad.yaml:11:34: rules[0].choose.otherwise: the fallback cumulative/stereotype/probit is not a model of the plan: effects "stereotype" are not in models.effects; link "probit" is not in models.links`}},
		{"fallback badly written", "{by: aic}", "{by: aic, otherwise: parallel}",
			[]string{`rules[0].choose.otherwise: want stop or a model of the plan written approach/effects/link, such as cumulative/parallel/logit; got "parallel"`}},
		{"close rule without amount", "  - choose: {by: aic}\n", "  - reject_if_simpler_is_close: {grid: {a: [0, 1]}}\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:11:33: rules[0].reject_if_simpler_is_close.max_difference: required key is missing`}},
		{"close rule grid names no predictor", "  - choose: {by: aic}\n", "  - reject_if_simpler_is_close: {max_difference: 0.02, grid: {q: [0, 1]}}\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_if_simpler_is_close.grid.q: "q" is not a column the predictors read (a, b, c)`}},
		{"close rule empty grid list", "  - choose: {by: aic}\n", "  - reject_if_simpler_is_close: {max_difference: 0.02, grid: {a: []}}\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_if_simpler_is_close.grid.a: list is empty; give at least one value`}},
		{"close rule amount range", "  - choose: {by: aic}\n", "  - reject_if_simpler_is_close: {max_difference: 2}\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_if_simpler_is_close.max_difference: 2 is out of range (want a number strictly between 0 and 1)`}},
		{"sparse rule without limits", "  - choose: {by: aic}\n", "  - reject_if_sparse: {within: c}\n  - choose: {by: aic}\n",
			[]string{`bad.yaml:11:23: rules[0].reject_if_sparse: give per_parameter (observations per parameter), smallest_category (smallest outcome category count) or both`, `rules[0].reject_if_sparse.within: within counts the outcome categories within each value of a column, and smallest_category is not given`}},
		{"sparse rule negative", "  - choose: {by: aic}\n", "  - reject_if_sparse: {per_parameter: -5}\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_if_sparse.per_parameter: -5 is out of range (want a number > 0)`}},
		{"sparse within the outcome", "  - choose: {by: aic}\n", "  - reject_if_sparse: {smallest_category: 5, within: y}\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_if_sparse.within: "y" is the outcome`}},
		{"unstable rule without limits", "  - choose: {by: aic}\n", "  - reject_if_unstable: true\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_if_unstable: give max_condition (largest condition number of the information), min_starts_agreeing (starts of a constrained search that reach the best value) or both`}},
		{"unstable starts without constrained models", tail, "models:\n  effects: [parallel, nonparallel]\nrules:\n  - reject_if_unstable: {min_starts_agreeing: 2}\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_if_unstable.min_starts_agreeing: applies only to constrained and stereotype models`}},
		{"unstable starts range", "  - choose: {by: aic}\n", "  - reject_if_unstable: {min_starts_agreeing: 0}\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_if_unstable.min_starts_agreeing: 0 is out of range (want a whole number from 1 to 1000)`}},
		{"unstable starts above range", "  - choose: {by: aic}\n", "  - reject_if_unstable: {min_starts_agreeing: 1001}\n  - choose: {by: aic}\n",
			[]string{`rules[0].reject_if_unstable.min_starts_agreeing: 1001 is out of range (want a whole number from 1 to 1000)`}},
		{"unknown multiplicity", "", "inference: {hypotheses: [\"a = 0\"], multiplicity: bonferroni}\n",
			[]string{`inference.multiplicity: unknown multiplicity correction "bonferroni" (want none, holm or benjamini_hochberg)`}},
		{"multiplicity without hypotheses", "", "inference: {multiplicity: holm}\n",
			[]string{`bad.yaml:12:27: inference.multiplicity: corrects the p-values of the plan's hypotheses, and inference.hypotheses is not given`}},
		{"focus not a predictor", "", "report: {focus_predictor: zz}\n",
			[]string{`bad.yaml:12:27: report.focus_predictor: "zz" is not a predictor (predictors: a, b, c)`}},
		{"panels by no predictor", "", "report: {panels_by: zz}\n",
			[]string{`bad.yaml:12:21: report.panels_by: "zz" is not a column the predictors read (a, b, c): panels_by names a categorical predictor, a panel per level, or a predictor holding only 0 and 1, a panel at 0 and one at 1`}},
		{"panels by the focus", "", "report: {focus_predictor: b, panels_by: b}\n",
			[]string{`report.panels_by: "b" is already the focus predictor; panels_by names a categorical predictor`}},
		{"panels by a column with more values", "", "report: {panels_by: b}\ndictionary: {a: {}, b: {values: [0, 1, 2]}, c: {}}\n",
			[]string{`report.panels_by: "b" is a numeric column whose values (dictionary.b.values) include 2: panels_by names a categorical predictor, a panel per level, or a predictor holding only 0 and 1, a panel at 0 and one at 1; declare it under categorical for a panel per value`}},
		{"confidence range", "", "report: {confidence_level: 95}\n",
			[]string{`report.confidence_level: 95 is out of range (want a number strictly between 0 and 1)`}},
		{"timestamp not bool", "", "report: {timestamp: yes}\n",
			[]string{`report.timestamp: want true or false, got string "yes"`}},
		{"seed negative", "", "seed: -3\n",
			[]string{`seed: want a whole number from 0 to 18446744073709551615, got number -3`}},
		// A whole number written as a decimal or with an exponent, which
		// YAML reads as a float: the message said "want a whole number,
		// got number 1e3" and no more.
		{"seed with an exponent", "", "seed: 1e3\n",
			[]string{`seed: want a whole number from 0 to 18446744073709551615, got number 1e3 (a whole number, written as a decimal or with an exponent: write it 1000)`}},
		{"version as a decimal", "version: 1", "version: 1.0",
			[]string{`version: want a whole number, got number 1.0 (a whole number, written as a decimal or with an exponent: write it 1)`}},
		{"report not a mapping", "", "report: [title]\n",
			[]string{`bad.yaml:12:9: report: want a mapping with keys title, focus_predictor, panels_by, confidence_level, timestamp; got a list`}},
		{"control character", "predictors: [a, b, c]", `predictors: [a, "b\u0007", c]`,
			[]string{`predictors[1]: contains the control or non-printable character U+0007`}},
		{"not yaml", "predictors: [a, b, c]", "predictors: [a, b",
			[]string{`bad.yaml:`, `not valid YAML:`}},
		{"two documents", "", "---\nversion: 1\n",
			[]string{`bad.yaml:12:1: a plan file holds one YAML document`}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			src := base + c.new
			if c.old != "" {
				if !strings.Contains(base, c.old) {
					t.Fatalf("test setup: %q not in base", c.old)
				}
				src = strings.Replace(base, c.old, c.new, 1)
			}
			_, err := Parse([]byte(src), "bad.yaml")
			if err == nil {
				t.Fatalf("no error for plan:\n%s", src)
			}
			var es Errors
			if !errors.As(err, &es) || len(es) == 0 {
				t.Fatalf("error is %T, want Errors", err)
			}
			for _, w := range c.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error does not contain\n  %s\ngot:\n  %s", w, strings.ReplaceAll(err.Error(), "\n", "\n  "))
				}
			}
		})
	}
}

// Outcome names that differ in case but carry a character a file name
// does not hold as it is ('.') are written with a hash of the name in
// file names, so their files differ where case is ignored: no refusal.
func TestOutcomesDifferingInCaseWithHashedNames(t *testing.T) {
	src := "version: 1\ndata:\n  file: d.csv\noutcomes:\n  - column: y.1\n  - column: Y.1\npredictors: [a]\nmodels: {effects: [parallel]}\nrules:\n  - choose: {by: aic}\n"
	if _, err := Parse([]byte(src), "ok.yaml"); err != nil {
		t.Fatal(err)
	}
}

func TestAllErrorsInLineOrder(t *testing.T) {
	src := `version: 1
title: [x]
data:
  file: d.csv
  colour: red
outcomes:
  - column: y
predictors: [a, b, y]
models:
  links: [logit, tobit]
  partial:
    free: [a, zz]
rules:
  - choose: {by: aicc}
report:
  focus_predictor: q
`
	_, err := Parse([]byte(src), "m.yaml")
	var es Errors
	if !errors.As(err, &es) {
		t.Fatalf("got %v, want Errors", err)
	}
	want := []string{
		`m.yaml:2:8: title: want text, got a list`,
		`m.yaml:5:3: data.colour: unknown key "colour"`,
		`m.yaml:7:13: outcomes[0].column: "y" is both an outcome and a predictor (predictors[2], line 8)`,
		`m.yaml:10:18: models.links[1]: unknown link "tobit"`,
		`m.yaml:12:15: models.partial.free[1]: "zz" is not a predictor (predictors: a, b, y)`,
		`m.yaml:14:18: rules[0].choose.by: unknown criterion "aicc" (want aic, bic or tic)`,
		`m.yaml:16:20: report.focus_predictor: "q" is not a predictor`,
	}
	lines := strings.Split(err.Error(), "\n")
	if len(lines) != len(want) || len(es) != len(want) {
		t.Fatalf("got %d errors, want %d:\n%s", len(lines), len(want), err)
	}
	for i, w := range want {
		if !strings.HasPrefix(lines[i], w) {
			t.Errorf("error %d = %q, want prefix %q", i, lines[i], w)
		}
	}
}

func TestErrorFormat(t *testing.T) {
	for _, c := range []struct {
		e    Error
		want string
	}{
		{Error{File: "p.yaml", Line: 14, Col: 5, Key: "rules[2].choose.by", Msg: "bad"}, "p.yaml:14:5: rules[2].choose.by: bad"},
		{Error{File: "p.yaml", Line: 3, Key: "k", Msg: "bad"}, "p.yaml:3: k: bad"},
		{Error{File: "p.yaml", Msg: "plan file is empty"}, "p.yaml: plan file is empty"},
	} {
		if got := c.e.Error(); got != c.want {
			t.Errorf("Error() = %q, want %q", got, c.want)
		}
	}
}

func TestEmptyAndMissingFiles(t *testing.T) {
	for _, src := range []string{"", "# nothing\n", "---\n", "~\n"} {
		_, err := Parse([]byte(src), "e.yaml")
		if err == nil || err.Error() != "e.yaml: plan file is empty" {
			t.Errorf("Parse(%q) error = %v", src, err)
		}
	}
	absent := filepath.Join(t.TempDir(), "absent.yaml")
	_, err := Load(absent)
	if err == nil || err.Error() != absent+": the plan file does not exist: check its name and folder" {
		t.Errorf("Load of a missing file: %v", err)
	}
}

func TestAliases(t *testing.T) {
	src := strings.Replace(base, "predictors: [a, b, c]", "predictors: &all [a, b, c]", 1) +
		"report: {focus_predictor: &f b}\n"
	src = strings.Replace(src, "free: [a]", "free: *all", 1)
	p, err := Parse([]byte(src), "a.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(p.Models.Partial.Free, []string{"a", "b", "c"}) || p.Report.FocusPredictor != "b" {
		t.Errorf("aliases not followed: %+v %+v", p.Models.Partial, p.Report)
	}
}

func TestCanonical(t *testing.T) {
	p, err := Load(filepath.Join("..", "plans", "example.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	c := p.Canonical()
	if !bytes.Equal(c, p.Canonical()) {
		t.Fatal("Canonical is not deterministic")
	}
	for _, w := range []string{`"version": 1`, `"seed": 20261202`, `"direction": "forward"`, `"prefer_simpler": {`, `"margin": 2`} {
		if !bytes.Contains(c, []byte(w)) {
			t.Errorf("canonical plan lacks %s:\n%s", w, c)
		}
	}
	for _, w := range []string{p.Hash, `"path"`, `"dir"`, "example.yaml"} {
		if bytes.Contains(c, []byte(w)) {
			t.Errorf("canonical plan holds %s", w)
		}
	}
	// The canonical form is itself a plan with the same meaning.
	q, err := Parse(c, filepath.Join("elsewhere", "plan.json"))
	if err != nil {
		t.Fatalf("canonical plan does not parse: %v\n%s", err, c)
	}
	if !bytes.Equal(q.Canonical(), c) {
		t.Errorf("canonical plan changed on reparse:\n%s\nvs\n%s", q.Canonical(), c)
	}
	// Comments and key order do not change it.
	r, err := Parse([]byte("# a comment\n"+strings.Replace(base, "version: 1\n", "", 1)+"version: 1\n"), "b.yaml")
	if err != nil {
		t.Fatal(err)
	}
	s, err := Parse([]byte(base), "c.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(r.Canonical(), s.Canonical()) || r.Hash == s.Hash {
		t.Errorf("canonical form depends on layout, or hash does not")
	}
}

// models.run_every_start decodes, and enters the canonical form only when
// true: plans without it (or with false) keep their canonical form.
func TestRunEveryStart(t *testing.T) {
	parse := func(src string) *Plan {
		t.Helper()
		p, err := Parse([]byte(src), "a.yaml")
		if err != nil {
			t.Fatal(err)
		}
		return p
	}
	without := parse(base)
	off := parse(strings.Replace(base, "models:\n", "models:\n  run_every_start: false\n", 1))
	on := parse(strings.Replace(base, "models:\n", "models:\n  run_every_start: true\n", 1))
	if without.Models.RunEveryStart || off.Models.RunEveryStart || !on.Models.RunEveryStart {
		t.Errorf("run_every_start decoded as %v (absent), %v (false), %v (true)", without.Models.RunEveryStart, off.Models.RunEveryStart, on.Models.RunEveryStart)
	}
	if !bytes.Equal(without.Canonical(), off.Canonical()) || bytes.Contains(without.Canonical(), []byte("run_every_start")) {
		t.Errorf("run_every_start: false changes the canonical form:\n%s", off.Canonical())
	}
	c := on.Canonical()
	if !bytes.Contains(c, []byte(`"run_every_start": true`)) {
		t.Errorf("canonical plan lacks run_every_start:\n%s", c)
	}
	if q, err := Parse(c, "plan.json"); err != nil || !q.Models.RunEveryStart {
		t.Errorf("canonical plan loses run_every_start: %v", err)
	}
	// The stereotype structure is searched from several starts too.
	st := parse(strings.Replace(base, "models:\n  partial:\n    free: [a]\n", "models:\n  approaches: [adjacent]\n  effects: [parallel, stereotype]\n  run_every_start: true\n", 1))
	if !st.Models.RunEveryStart {
		t.Error("run_every_start not read with stereotype models")
	}
}

func TestInferenceSection(t *testing.T) {
	base := "version: 1\ndata: {file: d.csv}\noutcomes: [{column: y}]\npredictors: [a, b]\nmodels: {effects: [parallel]}\nrules:\n  - choose: {by: aic}\n"
	p, err := Parse([]byte(base+"inference:\n  hypotheses: [\"a = b\", \"a = 0\"]\n  marginal_effects: [average, profile]\n  profile: {a: 2.5}\n  predict: new.csv\n"), "x/p.yaml")
	if err != nil {
		t.Fatal(err)
	}
	inf := p.Inference
	if len(inf.Hypotheses) != 2 || inf.Hypotheses[0].Line != 9 || len(inf.Profile) != 1 || inf.Profile[0].Value != 2.5 || inf.PredictPath != "x/new.csv" {
		t.Fatalf("%+v", inf)
	}
	if q, err := Parse(p.Canonical(), "x/p.yaml"); err != nil || string(q.Canonical()) != string(p.Canonical()) {
		t.Fatalf("canonical round trip: %v", err)
	}
	for _, c := range []struct{ src, want string }{
		{"inference:\n  profile: {c: 1}\n  marginal_effects: [profile]\n", `inference.profile.c: "c" is not a column the predictors read`},
		{"inference:\n  marginal_effects: [profile]\n", "need inference.profile"},
		{"inference:\n  profile: {a: 1}\n", "used only with marginal_effects"},
		{"inference:\n  marginal_effects: [median]\n", "median"},
		{"inference:\n  profile: {a: x}\n  marginal_effects: [profile]\n", "give a number"},
		{"inference:\n  hypothesis: [\"a = 0\"]\n", "unknown key"},
	} {
		_, err := Parse([]byte(base+c.src), "p.yaml")
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%q: %v", c.src, err)
		}
	}
}

// The line of a YAML syntax error is the line of the file, counted from
// 1: the library counts its parser's errors from 0 (an unclosed { opened on
// line 3 was said at line 2) and its scanner's from 1.
func TestYAMLSyntaxErrorLines(t *testing.T) {
	for _, c := range []struct{ src, want string }{
		{"version: 1\ntitle: t\ndata: {file: d.csv\noutcomes: [{column: y}]\n", "p.yaml:3: not valid YAML: did not find expected ',' or '}'"},
		{"version: 1\ndata:\n  file: x\n  missing_values: [drop\noutcomes: []\n", "p.yaml:4: not valid YAML: did not find expected ',' or ']'"},
		{"version: 1\ndata:\n  file: x\n bad: y\n", "p.yaml:4: not valid YAML: did not find expected key"},
		{"version: 1\n  title: t\ndata: x\n", "p.yaml:2: not valid YAML: mapping values are not allowed in this context"},
	} {
		_, err := Parse([]byte(c.src), "p.yaml")
		if err == nil || err.Error() != c.want {
			t.Errorf("%q:\n got %v\nwant %s", c.src, err, c.want)
		}
	}
}
