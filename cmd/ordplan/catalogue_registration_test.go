package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"ordplan/plan"
	"ordplan/plan/lock"
)

// freezeAs writes the lock of the plan text src beside DIR/ID.yaml, as if
// src had been frozen under that name.
func freezeAs(t *testing.T, dir, id, src string) string {
	t.Helper()
	path := filepath.Join(dir, id+".yaml")
	p, err := plan.Parse([]byte(src), path)
	if err != nil {
		t.Fatal(err)
	}
	f := lock.New(p, "TEST-1", time.Date(2026, 12, 1, 9, 0, 0, 0, time.UTC), "test")
	lp := lock.PathFor(path)
	os.Remove(lp)
	if err := os.WriteFile(lp, f.Encode(), 0o644); err != nil {
		t.Fatal(err)
	}
	return lp
}

// assumed is an assumptions section for goodPlan's outcome (three
// categories) with the given effects and further top-level lines.
func assumed(effects, more string) string {
	return "assumptions:\n  predictors: {a: {mean: 0, sd: 1}, b: {mean: 0, sd: 1}}\n  outcomes:\n    y:\n      proportions: [0.3, 0.4, 0.3]\n      effects: " + effects + "\n" + more
}

// clustered is goodPlan with a cluster column k (written by the
// simulation) and cluster-robust errors.
var clustered = edit("  file: d.csv\n", "  file: d.csv\n  cluster: k\n", "rules:", "covariance: clustered\nrules:")

// registrationItems are the catalogue items of freezing and deviations.
func registrationItems(dir string) []badInput {
	changed := edit("{by: aic}", "{by: bic}")
	return []badInput{
		{id: "R1", name: "plan changed after freezing, no stated reason", args: []string{"run"}, plan: changed, code: 1, lines: true,
			setup: func(t *testing.T, dir, id string) { freezeAs(t, dir, id, goodPlan) },
			want: []string{"R1.yaml: the plan departs from its registered form (R1.lock.json, frozen 2026-12-01T09:00:00Z) in 1 key without a stated reason:",
				`rules[1].choose.by: "aic" -> "bic"`, "--allow-unregistered-changes"}},
		{id: "R7", name: "a deviation's key misspelt", args: []string{"run"}, plan: changed + "deviations:\n  - key: rules[1].chose.by\n    reason: BIC was registered in the protocol\n", code: 1, lines: true,
			setup: func(t *testing.T, dir, id string) { freezeAs(t, dir, id, goodPlan) },
			want: []string{`rules[1].choose.by: "aic" -> "bic"`,
				`deviations: "rules[1].chose.by" (line 15) explains no change from the frozen plan; did you mean "rules[1].choose.by", which changed?`}},
		{id: "R7", name: "run: a stated deviation that explains no change, beside one that does", args: []string{"run"}, code: 0,
			plan:  changed + "deviations:\n  - key: rules[1].choose.by\n    reason: BIC was registered in the protocol\n  - key: titel\n    reason: a typo\n",
			setup: func(t *testing.T, dir, id string) { freezeAs(t, dir, id, goodPlan) },
			want: []string{"registered plan: 1 deviation from R7.lock.json, each with a stated reason\n" +
				`note: deviations: "titel" (line 17) explains no change from the frozen plan` + "\n"}},
		{id: "R7", name: "run: a deviations list whose lock is gone", args: []string{"run"}, code: 0,
			plan:  changed + "deviations:\n  - key: rules[1].choose.by\n    reason: BIC was registered in the protocol\n",
			setup: func(t *testing.T, dir, id string) { os.Remove(filepath.Join(dir, id+".lock.json")) },
			want:  []string{`note: deviations: "rules[1].choose.by" (line 15) explains a change, but nothing is frozen: the plan has no lock file (R7.lock.json) whose plan it could depart from`}},
		{id: "R16", name: "run: a plan frozen anew with freeze --replace", args: []string{"run"}, plan: changed, code: 0,
			setup: func(t *testing.T, dir, id string) {
				lp := freezeAs(t, dir, id, goodPlan)
				if err := os.Rename(lp, lp+".replaced-20261201T090000Z"); err != nil {
					t.Fatal(err)
				}
				freezeAs(t, dir, id, changed)
			},
			want: []string{"registered plan: matches R16.lock.json (frozen 2026-12-01T09:00:00Z)\n" +
				"note: R16.lock.json was frozen anew (ordplan freeze --replace): it replaced the lock kept as R16.lock.json.replaced-20261201T090000Z (frozen 2026-12-01T09:00:00Z, registration TEST-1); the plan run differs from it in 1 key (rules[1].choose.by). The plan counts as registered only from R16.lock.json's time; the report says so\n"},
			check: func(t *testing.T, dir, out, errs string) {
				b, _ := os.ReadFile(filepath.Join(dir, "R16-out", "report.md"))
				for _, w := range []string{"**Frozen anew.** The lock `R16.lock.json` replaced an earlier lock of this plan",
					"- `R16.lock.json.replaced-20261201T090000Z`, frozen at 2026-12-01T09:00:00Z, registration TEST-1, canonical sha256 `"} {
					if !strings.Contains(string(b), w) {
						t.Errorf("report.md lacks %q", w)
					}
				}
				// Without the lock, the kept one still says the plan was frozen.
				os.Remove(filepath.Join(dir, "R16.lock.json"))
				o, e, code := runCLI("check", filepath.Join(dir, "R16.yaml"))
				if code != 0 || !strings.Contains(o, "note: the plan has no lock file (R16.lock.json), but an earlier lock of it is kept beside it: R16.lock.json.replaced-20261201T090000Z") {
					t.Errorf("check without the lock: exit %d\n%s%s", code, o, e)
				}
			}},
		{id: "R17", name: "run: a plan frozen after runs of it were made in its output folder", args: []string{"run"}, plan: goodPlan, code: 0,
			setup: func(t *testing.T, dir, id string) {
				p := filepath.Join(dir, id+".yaml")
				os.Remove(lock.PathFor(p))
				os.WriteFile(p, []byte(goodPlan), 0o644)
				if o, e, code := runCLI("run", p, "--out", filepath.Join(dir, id+"-out"), "--quiet"); code != 0 {
					t.Fatalf("run before freezing: exit %d\n%s%s", code, o, e)
				}
				freezeAs(t, dir, id, goodPlan)
			},
			want: []string{"registered plan: matches R17.lock.json (frozen 2026-12-01T09:00:00Z)\n" +
				"note: the output folder held 1 run made when the plan had no lock file: its results existed before the plan was registered as it is now (R17.lock.json, frozen 2026-12-01T09:00:00Z), so the plan may have been written after seeing them, and it is not a run of the registered plan; the report lists it\n"},
			check: func(t *testing.T, dir, out, errs string) {
				b, _ := os.ReadFile(filepath.Join(dir, "R17-out", "report.md"))
				for _, w := range []string{"**This output folder already held 1 run made before this plan was registered**, on the same data as this run: its results existed before",
					"on the same data; with no lock file, its run.json records no time"} {
					if !strings.Contains(string(b), w) {
						t.Errorf("report.md lacks %q:\n%s", w, b)
					}
				}
			}},
		{id: "R18", name: "run: the registered plan run again on other data in its output folder", args: []string{"run"}, plan: edit("file: d.csv", "file: grow.csv"), code: 0,
			setup: func(t *testing.T, dir, id string) {
				src, _ := os.ReadFile(filepath.Join(dir, "d.csv"))
				os.WriteFile(filepath.Join(dir, "grow.csv"), src, 0o644)
				p := filepath.Join(dir, id+".yaml")
				os.WriteFile(p, []byte(edit("file: d.csv", "file: grow.csv")), 0o644)
				freezeAs(t, dir, id, edit("file: d.csv", "file: grow.csv"))
				if o, e, code := runCLI("run", p, "--out", filepath.Join(dir, id+"-out"), "--quiet"); code != 0 {
					t.Fatalf("first run: exit %d\n%s%s", code, o, e)
				}
				lines := strings.SplitAfter(string(src), "\n")
				os.WriteFile(filepath.Join(dir, "grow.csv"), []byte(string(src)+strings.Join(lines[1:11], "")), 0o644) // rows added
			},
			want: []string{"registered plan: matches R18.lock.json (frozen 2026-12-01T09:00:00Z)\n" +
				"note: the output folder held 1 run of this registered plan on other data: if these data extend those, the data have been analysed more than once, and the p-values make no allowance for it; the report lists it\n"}},
		{id: "R18", name: "run: a plan changed after a run of the registered plan in its output folder", args: []string{"run"}, code: 0,
			plan: strings.Replace(goodPlan, "{by: aic}", "{by: bic}", 1) + "deviations:\n  - key: rules[1].choose.by\n    reason: as the protocol says\n",
			setup: func(t *testing.T, dir, id string) {
				p := filepath.Join(dir, id+".yaml")
				os.RemoveAll(filepath.Join(dir, id+"-out"))
				os.WriteFile(p, []byte(goodPlan), 0o644)
				freezeAs(t, dir, id, goodPlan)
				if o, e, code := runCLI("run", p, "--out", filepath.Join(dir, id+"-out"), "--quiet"); code != 0 {
					t.Fatalf("run of the registered plan: exit %d\n%s%s", code, o, e)
				}
			},
			want: []string{"registered plan: 1 deviation from R18.lock.json, each with a stated reason\n",
				"note: the output folder held 1 run of the registered plan unchanged: its results existed before the plan was changed, so the deviations may have been chosen after seeing them; the report lists it\n"}},
		{id: "R2", name: "lock file edited by hand", args: []string{"check"}, plan: goodPlan, code: 1,
			setup: func(t *testing.T, dir, id string) {
				lp := freezeAs(t, dir, id, goodPlan)
				b, _ := os.ReadFile(lp)
				if err := os.WriteFile(lp, []byte(strings.Replace(string(b), `"aic"`, `"bic"`, 1)), 0o644); err != nil {
					t.Fatal(err)
				}
			},
			want: []string{"R2.lock.json: the lock file was edited by hand (its lock_checksum does not match its content)"}},
		{id: "R2", name: "an empty JSON object where the lock should be", args: []string{"check"}, plan: goodPlan, code: 1,
			setup: func(t *testing.T, dir, id string) {
				lp := freezeAs(t, dir, id, goodPlan)
				if err := os.WriteFile(lp, []byte("{}\n"), 0o644); err != nil {
					t.Fatal(err)
				}
			},
			want: []string{"R2.lock.json: not a lock file written by ordplan freeze (it has none of a lock's fields: ordplan_lock, canonical_sha256, lock_checksum); put the registered lock back, or remove this file if the plan was never frozen"}},
		{id: "R3", name: "freezing over an existing lock", args: []string{"freeze"}, plan: goodPlan, code: 1,
			setup: func(t *testing.T, dir, id string) { freezeAs(t, dir, id, goodPlan) },
			want:  []string{"R3.lock.json already exists", "is not replaced silently", "pass --replace"},
			check: func(t *testing.T, dir, out, errs string) {
				f, err := lock.Read(filepath.Join(dir, "R3.lock.json"))
				if err != nil || f.Registration != "TEST-1" {
					t.Errorf("the old lock changed: %v %+v", err, f)
				}
			}},
		{id: "R6", name: "freezing a plan still marked by ordplan init", args: []string{"freeze"}, code: 1, lines: true,
			plan: "title: EDIT the title of the report\n" + edit("  - column: y\n", "  - column: y   # <- outcome (guessed: EDIT)\n"),
			want: []string{`R6.yaml:1:8: title: still holds the placeholder of ordplan init ("EDIT the title of the report"): replace it`,
				`R6.yaml:6:40: outcomes[0].column: still marked by ordplan init ("<- outcome (guessed: EDIT)"): check the line, then delete the marker`,
				"R6.yaml still has 2 places marked EDIT by ordplan init", "check each place, delete its marker, then freeze"},
			check: func(t *testing.T, dir, out, errs string) {
				if _, err := os.Stat(filepath.Join(dir, "R6.lock.json")); !os.IsNotExist(err) {
					t.Errorf("a lock was written for a plan still marked by init: %v", err)
				}
			}},
		{id: "R4", name: "deviation without a reason", args: []string{"check"}, code: 1,
			plan: goodPlan + "deviations:\n  - key: rules[1].choose.by\n    reason: \"  \"\n",
			want: []string{"deviations[0].reason: the reason is empty; say why the registered plan was changed"}},
		{id: "V1", name: "values outside the dictionary's range", args: []string{"check"}, code: 1, lines: true,
			plan: goodPlan + "dictionary:\n  a: {range: [-1.5, 1.5]}\n  b: {values: [0, 1]}\n",
			want: []string{`d.csv:4: column "a": value "-1.6773" is below the range [-1.5, 1.5] of the data dictionary (dictionary.a.range)`,
				`d.csv: ... 31 problems in all against the data dictionary`}},
		{id: "V9", name: "an outcome category renamed in the data", args: []string{"check"}, code: 1, lines: true,
			plan: strings.Replace(edit("file: d.csv", "file: renamed.csv"), "  - column: y\n", "  - column: y\n    categories: [low, medium, high]\n", 1) + "dictionary:\n  a: {label: Dose}\n  b: {values: [0, 1]}\n",
			setup: func(t *testing.T, dir, id string) {
				os.WriteFile(filepath.Join(dir, "renamed.csv"), []byte("y,a,b\nlow,0.5,1\nmid,0.7,0\nhigh,0.1,1\nlow,0.2,0\nmid,0.9,1\nhigh,-0.4,0\n"), 0o644)
			},
			want: []string{`renamed.csv:3: column "y": value "mid" is not one of the declared categories: "low", "medium", "high"`,
				`renamed.csv: column "y": the declared category "medium" is in no row, while "mid" (2 rows) is not declared: if the data renamed a category, write its new name in outcomes[0].categories (under a lock, a change from the registered plan to state in its deviations)`}},
		{id: "V2", name: "a value that is not one of the dictionary's values", args: []string{"run"}, code: 1, lines: true,
			plan: goodPlan + "dictionary:\n  a: {label: Dose}\n  b: {values: [0, 2]}\n",
			want: []string{`ordplan: d.csv:3: column "b": value "1" is not one of the values 0, 2 of the data dictionary (dictionary.b.values)`}},
		{id: "V3", name: "text in a column the dictionary calls numeric", args: []string{"check"}, code: 1,
			plan: edit("file: d.csv", "file: text.csv") + "dictionary:\n  a: {range: [-5, 5]}\n  b: {values: [0, 1]}\n",
			want: []string{`text.csv:3: column "a": value "abc" is not a number; the data dictionary (dictionary.a) describes a numeric column`}},
		{id: "V4", name: "dictionary that leaves out a used column or names an unused one", args: []string{"check"}, code: 1, lines: true,
			plan: goodPlan + "dictionary:\n  a: {unit: mg}\n  c: {unit: cm}\n",
			want: []string{`dictionary.c: column "c" is not used by the plan`, `dictionary: column "b" is used (predictors[1]) but not described`}},
		{id: "V5", name: "dictionary range upside down", args: []string{"check"}, code: 1,
			plan: goodPlan + "dictionary:\n  a: {range: [3, -3]}\n  b: {values: [0, 1]}\n",
			want: []string{`dictionary.a.range: the minimum 3 is not below the maximum -3`}},
		{id: "V6", name: "a column's own missing-value code", args: []string{"check"}, code: 0,
			plan: edit("file: d.csv", "file: minus9.csv") + "dictionary:\n  a: {range: [-5, 5], missing: [\"-9\"]}\n  b: {values: [0, 1]}\n",
			setup: func(t *testing.T, dir, id string) {
				os.WriteFile(filepath.Join(dir, "minus9.csv"), []byte("y,a,b\n1,0.5,1\n2,-9,0\n3,0.1,1\n1,0.2,0\n2,0.9,1\n3,-0.4,0\n1,0.3,1\n2,-9,1\n3,0.8,0\n"), 0o644)
			},
			want: []string{"plan is valid"}},
		{id: "A1", name: "assumptions naming an unknown term", args: []string{"rehearse"}, code: 1,
			plan: goodPlan + "assumptions:\n  predictors: {a: {mean: 0, sd: 1}, b: {mean: 0, sd: 1}}\n  outcomes:\n    y:\n      proportions: [0.3, 0.4, 0.3]\n      effects: {a: 0.5, c: 0.2}\n",
			want: []string{`assumptions.outcomes.y.effects.c: "c" is not a term of the plan (predictors: a, b)`}},
		{id: "A2", name: "assumed proportions that do not sum to 1", args: []string{"power", "--n", "100"}, code: 1,
			plan: goodPlan + "assumptions:\n  outcomes:\n    y:\n      proportions: [0.3, 0.4, 0.4]\n",
			want: []string{`assumptions.outcomes.y.proportions: the proportions sum to 1.1, not 1`}},
		{id: "A3", name: "one proportion per category", args: []string{"check", "--no-data"}, code: 1,
			plan: edit("column: y", "column: y\n    categories: [\"1\", \"2\", \"3\"]") + "assumptions:\n  outcomes:\n    y: {proportions: [0.5, 0.5]}\n",
			want: []string{`assumptions.outcomes.y.proportions: want 3 proportions, one per category of "y" (1, 2, 3), got 2`}},
		{id: "A4", name: "rehearsing a plan without assumptions", args: []string{"rehearse"}, plan: goodPlan, code: 1,
			want: []string{`A4.yaml: the plan has no assumptions section: state the category proportions and the effects to simulate from`}},
		{id: "A5", name: "a predictor the simulation cannot draw", args: []string{"rehearse"}, code: 1,
			plan: goodPlan + "assumptions:\n  outcomes:\n    y: {proportions: [0.3, 0.4, 0.3]}\n",
			want: []string{`assumptions.predictors: say how to draw "a": mean and sd, or give it a range or values in the dictionary`}},
		{id: "A6", name: "an effect for a design column that does not exist", args: []string{"check", "--no-data"}, code: 1, lines: true,
			plan: edit("[a, b]", "[a, b, {interact: [a, b]}]") + "categorical:\n  b: {levels: [u, v, w]}\n" + strings.Replace(assumed("{a&b: {a&b.x: 0.2}}", ""), "b: {mean: 0, sd: 1}", "b: {proportions: [0.3, 0.3, 0.4]}", 1),
			want: []string{`assumptions.outcomes.y.effects.a&b.a&b.x: "a&b.x" is not a design column of "a&b" (a&b.v, a&b.w)`}},
		{id: "A7", name: "correlations that are not positive definite", args: []string{"check", "--no-data"}, code: 1, lines: true,
			plan: edit("[a, b]", "[a, b, c]") + assumed("{a: 0.2}", "  correlations:\n    - {between: [a, b], r: 0.9}\n    - {between: [b, c], r: 0.9}\n    - {between: [a, c], r: -0.9}\n"),
			want: []string{`assumptions.correlations: the correlations of a, b, c are not positive definite: no set of variables can have them all (smallest eigenvalue -0.8)`}},
		{id: "A8", name: "a correlation of 1 or more", args: []string{"rehearse"}, code: 1, lines: true,
			plan: goodPlan + assumed("{a: 0.2}", "  correlations:\n    - {between: [a, b], r: 1}\n"),
			want: []string{`assumptions.correlations[0].r: a correlation must be above -1 and below 1, got 1`}},
		{id: "A9", name: "a correlation naming a column the plan does not read", args: []string{"power", "--n", "100"}, code: 1, lines: true,
			plan: goodPlan + assumed("{a: 0.2}", "  correlations:\n    - {between: [a, q], r: 0.3}\n"),
			want: []string{`assumptions.correlations[0].between: "q" is not a column the predictors or the subset read (columns: a, b)`}},
		{id: "A10", name: "an unknown word for the generating model", args: []string{"check", "--no-data"}, code: 1, lines: true,
			plan: goodPlan + assumed("{a: 0.2}", "  comparison: ordinal\n"),
			want: []string{`assumptions.comparison: unknown comparison "ordinal" (want cumulative, stage or adjacent)`}},
		{id: "A11", name: "one slope for a term with several design columns", args: []string{"check", "--no-data"}, code: 1, lines: true,
			plan: edit("[a, b]", "[b, {name: as, column: a, spline: {knots: [-1, 0, 1]}}]") + assumed("{as: 0.3}", ""),
			want: []string{`assumptions.outcomes.y.effects.as: "as" has 2 design columns (as.1, as.2): give its values at points, {at: [...], values: [...]}, or a slope per design column`}},
		{id: "A12", name: "points that do not determine a spline's curve", args: []string{"rehearse"}, code: 1, lines: true,
			plan: edit("[a, b]", "[b, {name: as, column: a, spline: {knots: [-1, 0, 1]}}]") + assumed("{as: {at: [2, 3, 4], values: [0, 0.2, 0.4]}}", ""),
			want: []string{`A12.yaml:19: assumptions.outcomes.y.effects.as: the points [2, 3, 4] do not determine the curve of as's 2 design columns (as.1, as.2): spread them over the range the columns bend in (knots at [-1, 0, 1] on the transformed scale)`}},
		{id: "A13", name: "a direction for a generating model that is not stage", args: []string{"check", "--no-data"}, code: 1, lines: true,
			plan: goodPlan + assumed("{a: 0.2}", "  direction: backward\n"),
			want: []string{`assumptions.direction: the direction applies to the stage comparison only (assumptions.comparison is "cumulative")`}},
		{id: "A14", name: "a subset that keeps almost none of the simulated rows", args: []string{"rehearse"}, code: 1,
			plan: edit("predictors:", "subset:\n  - {column: a, at_least: 5}\npredictors:") + assumed("{a: 0.2}", ""),
			want: []string{`A14.yaml: subset: the plan's subset (a >= 5) keeps 0 of the first 20000 rows drawn from the assumptions (0%, under 5%): the stated proportions cannot be set on the rows it keeps`}},
		{id: "A15", name: "an effect for a level the subset leaves out", args: []string{"check", "--no-data"}, code: 1, lines: true,
			plan: edit("predictors:", "subset:\n  - {column: b, none_of: [w]}\npredictors:") + "categorical:\n  b: {levels: [u, v, w], unobserved: drop}\n" +
				strings.Replace(assumed("{b: {v: 0.3, w: 0.5}}", ""), "b: {mean: 0, sd: 1}", "b: {proportions: [0.3, 0.3, 0.4]}", 1),
			want: []string{`assumptions.outcomes.y.effects.b.w: "w" is a level the subset leaves out (subset[0]: b not in {w}): no row the plan analyses has it, so there is no effect of it to simulate; remove it`}},
		{id: "A17", name: "an effect for a level no simulated row has", args: []string{"rehearse"}, code: 1,
			plan: edit("predictors:", "seed: 17\npredictors:") + "categorical:\n  b: {levels: [u, v, w], unobserved: drop}\n" +
				strings.Replace(assumed("{b: {v: 0.3, w: 0.5}}", ""), "b: {mean: 0, sd: 1}", "b: {proportions: [0.499995, 0.499995, 0.00001]}", 1),
			want: []string{`assumptions.outcomes.y.effects.b.w: level "w" of b occurs in no simulated row, so the design drops its column (unobserved: drop) and its effect cannot be simulated`}},
		{id: "A16", name: "a log of a column drawn from a normal distribution without a range", args: []string{"check", "--no-data"}, code: 1, lines: true,
			plan: edit("[a, b]", "[{name: alog, column: a, log: true}, b]") + assumed("{alog: 0.2}", ""),
			want: []string{`A16.yaml:15:19: assumptions.predictors.a: log(a) of predictors[0] (alog) is undefined for values at or below 0, and a normal distribution (mean 0, sd 1) with no range in the dictionary takes such values: give a a range in the dictionary (dictionary.a.range) with a minimum above 0, or a shift (log: {shift: ...})`}},
		{id: "A18", name: "missing values stated for a column the plan does not read", args: []string{"check", "--no-data"}, code: 1,
			plan: edit() + assumed("{a: 0.2}", "  missing: {q: {proportion: 0.2}}\n"),
			want: []string{`assumptions.missing.q: "q" is a column the plan does not read: missing values are simulated in an outcome or a column the predictors read (outcomes and columns the predictors read: y, a, b)`}},
		{id: "A18", name: "missingness given a column the plan does not read", args: []string{"rehearse"}, code: 1,
			plan: edit() + assumed("{a: 0.2}", "  missing: {b: {proportion: 0.2, given: {q: 1}}}\n"),
			want: []string{`assumptions.missing.b.given.q: "q" is not an outcome or a column the predictors read (outcomes and columns the predictors read: y, a, b)`}},
		{id: "A19", name: "a share of missing values of 1", args: []string{"power", "--n", "100"}, code: 1,
			plan: edit() + assumed("{a: 0.2}", "  missing: {b: {proportion: 1}}\n"),
			want: []string{`assumptions.missing.b.proportion: a share of missing values must be at least 0 and below 1, got 1 (at 1 the column would hold no value at all)`}},
		{id: "A20", name: "missingness that depends on the missing value itself", args: []string{"check", "--no-data"}, code: 1,
			plan: edit() + assumed("{a: 0.2}", "  missing: {b: {proportion: 0.2, given: {b: 1}}}\n"),
			want: []string{`assumptions.missing.b.given.b: the missingness of "b" cannot depend on its own values: a value missing because of what it is would be missing not at random, which neither dropping incomplete rows nor imputation corrects; name other columns it depends on`}},
		{id: "A21", name: "missingness given the outcome, which is itself made missing", args: []string{"rehearse"}, code: 1,
			plan: edit() + assumed("{a: 0.2}", "  missing:\n    y: {proportion: 0.1}\n    b: {proportion: 0.2, given: {y: 1}}\n"),
			want: []string{`assumptions.missing.b.given.y: missing at random given "y" needs the outcome observed in every row, but assumptions.missing.y makes it missing too: the missingness would then depend on values that are themselves missing (not at random); give "y" no missing values, or name another column`}},
		{id: "A22", name: "missing values stated where nothing reads as missing", args: []string{"check", "--no-data"}, code: 1,
			plan: edit("  file: d.csv\n", "  file: d.csv\n  missing_values: []\n") + assumed("{a: 0.2}", "  missing: {b: {proportion: 0.2}}\n"),
			want: []string{`assumptions.missing.b: data.missing_values is empty, so no cell of "b" reads as missing, and a simulated missing value could not be written: give data.missing_values a marker (such as "NA") or the column its own code (dictionary.b.missing)`}},
		{id: "A23", name: "missing values stated while the plan refuses them", args: []string{"power", "--n", "100"}, code: 1,
			plan: edit("  file: d.csv\n", "  file: d.csv\n  missing: refuse\n") + assumed("{a: 0.2}", "  missing: {b: {proportion: 0.2}}\n"),
			want: []string{`assumptions.missing.b: the assumptions make "b" missing, but data.missing is refuse, so a run stops at the first missing value: every simulated data set would stop there; handle the missing values (data.missing: drop or impute) or state none (proportion: 0)`}},
		{id: "A24", name: "simulated weights drawn from a dictionary range below 0", args: []string{"power", "--n", "100", "--replicates", "2"}, code: 1,
			plan: edit("  file: d.csv\n", "  file: d.csv\n  weights: w\n") + "dictionary:\n  a: {label: A}\n  b: {label: B}\n  w: {range: [-1, 3]}\n" + assumed("{a: 0.2}", ""),
			want: []string{`A24.yaml:18:14: dictionary.w.range: the simulated weights (data.weights: w) are drawn from the dictionary's range, which starts below 0 (-1), but a weight is zero or more: give dictionary.w values or a range of zero or more`},
			check: func(t *testing.T, dir, out, errs string) {
				// The plan alone shows it: check refuses it with and
				// without the data.
				for _, args := range [][]string{{"check", "--no-data"}, {"check"}} {
					if _, e, code := runCLI(append(args, filepath.Join(dir, "A24.yaml"))...); code != 1 || !strings.Contains(e, "A24.yaml:18:14: dictionary.w.range: the simulated weights") {
						t.Errorf("%v: exit %d: %s", args, code, e)
					}
				}
			}},
		{id: "A24", name: "simulated weights drawn from dictionary values below 0", args: []string{"rehearse"}, code: 1,
			plan: edit("  file: d.csv\n", "  file: d.csv\n  weights: w\n") + "dictionary:\n  a: {label: A}\n  b: {label: B}\n  w: {values: [2, -0.5, 1]}\n" + assumed("{a: 0.2}", ""),
			want: []string{`A24.yaml:18:15: dictionary.w.values: the simulated weights (data.weights: w) are drawn from the dictionary's values, which include -0.5, but a weight is zero or more`}},
		{id: "D36", name: "simulated frequency weights drawn from dictionary values that are not whole numbers", args: []string{"check", "--no-data"}, code: 1,
			plan: edit("  file: d.csv\n", "  file: d.csv\n  weights: w\n") + "dictionary:\n  a: {label: A}\n  b: {label: B}\n  w: {values: [1, 2.5, 3]}\n" + assumed("{a: 0.2}", ""),
			want: []string{`D36.yaml:18:15: dictionary.w.values: the simulated frequency weights (data.weights: w, data.weight_kind: frequency, the default) are counts, whole numbers, but the dictionary's values include 2.5: give whole numbers, or set data.weight_kind: sampling if they are sampling weights`}},
		{id: "D36", name: "simulated frequency weights drawn from a dictionary range holding no whole number", args: []string{"rehearse"}, code: 1,
			plan: edit("  file: d.csv\n", "  file: d.csv\n  weights: w\n") + "dictionary:\n  a: {label: A}\n  b: {label: B}\n  w: {range: [0.2, 0.8]}\n" + assumed("{a: 0.2}", ""),
			want: []string{`D36.yaml:18:14: dictionary.w.range: the simulated frequency weights (data.weights: w, data.weight_kind: frequency, the default) are counts, whole numbers, and the dictionary's range [0.2, 0.8] holds none: give a range holding whole numbers, or set data.weight_kind: sampling if they are sampling weights`}},
		{id: "A28", name: "rehearse --n 0: refused as any size below 10, not taken as --n not given", args: []string{"rehearse", "--n", "0"}, code: 2,
			plan: edit() + assumed("{a: 0.2}", ""),
			want: []string{"ordplan rehearse: --n must be at least 10"}},
		{id: "A28", name: "power --n 0", args: []string{"power", "--n", "0"}, code: 2,
			plan: edit() + assumed("{a: 0.2}", ""),
			want: []string{`ordplan power: --n: want sample sizes of at least 10, comma separated (e.g. 200,400,800), got "0"`}},
		{id: "A28", name: "power without --n", args: []string{"power"}, code: 2,
			plan: edit() + assumed("{a: 0.2}", ""),
			want: []string{`ordplan power: --n is required: the sample sizes to simulate, at least 10 each, comma separated (e.g. --n 200,400,800)`}},
		{id: "A25", name: "a cluster effect with a negative standard deviation", args: []string{"check", "--no-data"}, code: 1,
			plan: clustered + assumed("{a: 0.2}", "  clusters: {number: 50, intercept_sd: -0.5}\n"),
			want: []string{`A25.yaml:22:40: assumptions.clusters.intercept_sd: the standard deviation of the clusters' intercepts must be 0 or more, got -0.5 (0: no cluster effect)`}},
		{id: "A25", name: "a latent intraclass correlation of 1", args: []string{"rehearse"}, code: 1,
			plan: clustered + assumed("{a: 0.2}", "  clusters: {rows_each: 20, latent_icc: 1}\n"),
			want: []string{`assumptions.clusters.latent_icc: an intraclass correlation on the latent scale must be at least 0 and below 1, got 1 (0: no cluster effect; at 1 the rows of a cluster would share one latent value)`}},
		{id: "A26", name: "clusters stated in a plan without a cluster column", args: []string{"check", "--no-data"}, code: 1,
			plan: goodPlan + assumed("{a: 0.2}", "  clusters: {number: 50}\n"),
			want: []string{`assumptions.clusters: the plan has no cluster column (data.cluster), so there are no clusters to simulate: name the cluster column under data.cluster (and covariance: clustered for cluster-robust errors), or remove assumptions.clusters`}},
		{id: "A26", name: "both the number and the size of the clusters", args: []string{"power", "--n", "100"}, code: 1,
			plan: clustered + assumed("{a: 0.2}", "  clusters: {number: 50, rows_each: 10}\n"),
			want: []string{`assumptions.clusters.rows_each: give number (the clusters, the same at every sample size) or rows_each (the rows of each cluster, so that the clusters grow with the sample size), not both`}},
		{id: "A26", name: "a latent intraclass correlation under the cauchy link", args: []string{"check", "--no-data"}, code: 1,
			plan: clustered + assumed("{a: 0.2}", "  link: cauchy\n  clusters: {latent_icc: 0.1}\n"),
			want: []string{`assumptions.clusters.latent_icc: the generating link is "cauchy", whose distribution has no variance, so a latent intraclass correlation does not define the clusters' intercepts: give intercept_sd instead`}},
		{id: "A26", name: "a column drawn once per cluster that the plan does not read", args: []string{"rehearse"}, code: 1,
			plan: clustered + assumed("{a: 0.2}", "  clusters: {number: 50, per_cluster: [q]}\n"),
			want: []string{`assumptions.clusters.per_cluster[0]: "q" is not a column the predictors or the subset read (columns: a, b): per_cluster names predictor columns drawn once per cluster`}},
		{id: "A27", name: "more clusters than the smallest size power simulates", args: []string{"power", "--n", "200,40", "--replicates", "2"}, code: 1,
			plan: clustered + assumed("{a: 0.2}", "  clusters: {number: 50}\n"),
			want: []string{`A27.yaml:22:22: assumptions.clusters.number: 50 clusters cannot be made of the 40 rows simulated (n = 40, from --n): each cluster needs a row at least; state at most 40 clusters, or give --n of 50 or more`}},
		{id: "A27", name: "more clusters than assumptions.n rows, refused at check", args: []string{"check", "--no-data"}, code: 1,
			plan: clustered + assumed("{a: 0.2}", "  n: 40\n  clusters: {number: 50}\n"),
			want: []string{`A27.yaml:23:22: assumptions.clusters.number: 50 clusters cannot be made of the 40 rows simulated (n = 40, from assumptions.n): each cluster needs a row at least; state at most 40 clusters, or state assumptions.n of 50 or more (or give rehearse or power a size of 50 or more with --n)`}},
		{id: "A27", name: "more clusters than assumptions.n rows, rehearsed without --n", args: []string{"rehearse"}, code: 1,
			plan: clustered + assumed("{a: 0.2}", "  n: 40\n  clusters: {number: 50}\n"),
			want: []string{`A27.yaml:23:22: assumptions.clusters.number: 50 clusters cannot be made of the 40 rows simulated (n = 40, from assumptions.n)`}},
		{id: "A27", name: "clusters that assumptions.n holds, rehearsed with a --n that cannot", args: []string{"rehearse", "--n", "30"}, code: 1,
			plan: clustered + assumed("{a: 0.2}", "  n: 100\n  clusters: {number: 50}\n"),
			want: []string{`A27.yaml:23:22: assumptions.clusters.number: 50 clusters cannot be made of the 30 rows simulated (n = 30, from --n): each cluster needs a row at least; state at most 30 clusters, or give --n of 50 or more`}},
		{id: "A27", name: "clusters so large that the rows simulated make one", args: []string{"rehearse", "--n", "25"}, code: 1,
			plan: clustered + assumed("{a: 0.2}", "  clusters: {rows_each: 25}\n"),
			want: []string{`A27.yaml:22:25: assumptions.clusters.rows_each: clusters of 25 rows make one cluster of the 25 rows simulated (n = 25, from --n), and clustered errors need at least 2 (about 40 to be trusted): state fewer rows in each cluster (below 25), or give --n of 26 or more`}},
		{id: "A27", name: "more clusters than assumptions.n rows, rehearsed with a --n that holds them (runs)", code: 0,
			args: []string{"rehearse", "--n", "100", "--quiet", "--out", filepath.Join(dir, "A27-rehearsal")},
			plan: clustered + assumed("{a: 0.2}", "  n: 40\n  clusters: {number: 50}\n"),
			want: []string{"SIMULATED DATA: 100 rows simulated from the plan's assumptions", "report: "},
			check: func(t *testing.T, dir, out, errs string) {
				b, err := os.ReadFile(filepath.Join(dir, "A27-rehearsal", "simulated-data.csv"))
				if err != nil {
					t.Fatal(err)
				}
				ks := map[string]bool{}
				for _, l := range strings.Split(strings.TrimSpace(string(b)), "\n")[1:] {
					f := strings.Split(l, ",")
					ks[f[len(f)-1]] = true
				}
				if len(ks) != 50 {
					t.Errorf("%d clusters simulated in 100 rows, want the 50 stated", len(ks))
				}
			}},
		{id: "A27", name: "more clusters than assumptions.n rows, sized by power at sizes that hold them (runs)", code: 0,
			args: []string{"power", "--n", "100,200", "--replicates", "2", "--quiet", "--out", filepath.Join(dir, "A27-power")},
			plan: clustered + assumed("{a: 0.2}", "  n: 40\n  clusters: {number: 50}\n"),
			want: []string{"y n=100: ", "y n=200: ", "report: "}},
		{id: "W17", name: "a power study whose clustered errors rest on too few clusters at some sizes", code: 0,
			args: []string{"power", "--n", "100,400", "--replicates", "2", "--quiet", "--out", filepath.Join(dir, "W17-power")},
			plan: clustered + assumed("{a: 0.2}", ""), want: []string{"report: "},
			check: func(t *testing.T, dir, out, errs string) {
				few := `W17.yaml: outcome y, n = 100 (2 of 2 replicates): data.cluster: column "k" holds 10 clusters in the 100 rows used, fewer than 40: cluster-robust standard errors tend to be too small`
				if !strings.Contains(errs, few) || strings.Contains(errs, "n = 400") {
					t.Errorf("power does not warn at n = 100 alone:\n%s", errs)
				}
				md, _ := os.ReadFile(filepath.Join(dir, "W17-power", "power.md"))
				js, _ := os.ReadFile(filepath.Join(dir, "W17-power", "power.json"))
				for _, w := range []string{"**Warning: at n = 100 the plan's clustered errors rest on fewer than 40 clusters**", "**Warning: at n = 100 the runs' clustered errors rest on fewer than 40 clusters** (2 of 2 replicates)",
					"The cluster column `k` was simulated as runs of 10 consecutive rows, the default (the assumptions state no `clusters`)", "| simulated | 10 | 40 |"} {
					if !strings.Contains(string(md), w) {
						t.Errorf("power.md lacks %q", w)
					}
				}
				if strings.Contains(string(md), "at n = 400 the") || !strings.Contains(string(js), `"few_warned": {`) || !strings.Contains(string(js), `"stated": false`) {
					t.Errorf("power.md or power.json:\n%s", js)
				}
			}},
		{id: "R5", name: "ordplan init over an existing file", args: []string{"init", "--header", "y,a"}, plan: goodPlan, code: 1,
			want: []string{"init: R5.yaml already exists; ordplan init never overwrites a file"},
			check: func(t *testing.T, dir, out, errs string) {
				if b, _ := os.ReadFile(filepath.Join(dir, "R5.yaml")); string(b) != goodPlan {
					t.Error("the plan was overwritten")
				}
			}},
	}
}
