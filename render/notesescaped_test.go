package render

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"ordplan/runner"
)

// The outcome's data sentence (rows dropped, naming the columns) and its
// notes (here the warning on a predictor observed in fewer than half of
// the rows, W34) show a column named with Markdown ("*x*") as written: they
// were written raw, and report.html showed the name in italics.
func TestOutcomeNotesShowNamesLiterally(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("y,*x*,z\n")
	for i := range 90 {
		x := ""
		if i%3 == 0 {
			x = fmt.Sprintf("%.2f", float64(i%7)-3)
		}
		fmt.Fprintf(&b, "%d,%s,%.2f\n", 1+(i/3+i/9)%3, x, float64(i%5)-2)
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	src := `version: 1
data: {file: d.csv}
outcomes: [{column: y}]
predictors: ["*x*", z]
models: {approaches: [cumulative], effects: [parallel], links: [logit]}
rules:
  - choose: {by: aic}
`
	files := renderSource(t, dir, src, 0)
	md := string(files["report.md"])
	hasAll(t, "report.md", md,
		"rows dropped for missing values (\\*x\\*: 60)",
		"Predictor column \"\\*x\\*\" is observed in 30 of the 90 rows")
	if h := string(files["report.html"]); strings.Contains(h, "<em>x</em>") {
		t.Error("report.html shows the column *x* in italics")
	}
}

// A study whose columns, levels and cluster column hold Markdown and HTML
// ("*x*", "a_b_", "<b>z</b>", "<i>g</i>", levels "<b>L</b>", "*w*",
// "_u_") and that meets the runner's warnings and notes: *x* missing in
// most rows, errors clustered by 6 clusters, the level *w* in one cluster
// (its tests not computed), a profile where log(<b>z</b> + 5) is
// undefined (its marginal effects not computed), pairs of levels, a
// sensitivity analysis imputing *x* and one without the clusters.
// report.html shows every name as written in the rules' descriptions (the
// cluster column), the Pulkstenis-Robinson patterns, the points of the
// marginal effects and of the level pairs, the reasons something was not
// computed, the rows of the sensitivity analyses (the imputation models'
// predictors) and the columns whose slopes across boundaries are not
// drawn, which were written raw; report.md escapes each name once (no
// "\\").
func TestRunnerTextShowsNamesLiterally(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(7, 11))
	var b strings.Builder
	b.WriteString("y,*x*,a_b_,<b>z</b>,<i>g</i>\n")
	levels := []string{"<b>L</b>", "*w*", "_u_"}
	for g := range 6 {
		for range 40 {
			x, u, z := rng.NormFloat64(), rng.Float64(), rng.NormFloat64()
			lv := []int{0, 2}[rng.IntN(2)]
			if g == 0 {
				lv = rng.IntN(3) // *w* only in cluster k0
			}
			eta := 0.7*x + 0.3*float64(lv) + 0.2*z
			y := 1
			for _, cut := range []float64{-1, 0, 1} {
				if math.Log(u/(1-u))+eta > cut {
					y++
				}
			}
			xs := fmt.Sprintf("%.4f", x)
			if rng.Float64() < 0.6 {
				xs = ""
			}
			fmt.Fprintf(&b, "%d,%s,%s,%.3f,k%d\n", y, xs, levels[lv], z, g)
		}
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	src := `version: 1
data: {file: d.csv, cluster: "<i>g</i>"}
outcomes: [{column: y}]
categorical: {"a_b_": {levels: ["<b>L</b>", "*w*", "_u_"]}}
predictors: ["*x*", "a_b_", {name: zl, column: "<b>z</b>", log: {shift: 5}}]
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: [wald, lr, brant]}
rules:
  - choose: {by: aic}
covariance: clustered
inference:
  hypotheses: ["a_b_ = 0"]
  marginal_effects: [average, means, profile]
  profile: {"<b>z</b>": -5}
  level_pairs: {predictors: [a_b_]}
sensitivity:
  - name: "imp_*x*_"
    why: "the *x* column is mostly missing"
    change: {data.missing: impute}
  - name: "sand"
    why: "robust"
    change: {covariance: sandwich, data.cluster: null}
`
	files := renderSource(t, dir, src, 1)
	page, md := string(files["report.html"]), string(files["report.md"])
	if d := os.Getenv("ORDPLAN_ODD_DIR"); d != "" {
		_ = os.WriteFile(filepath.Join(d, "report.md"), files["report.md"], 0o644)
		_ = os.WriteFile(filepath.Join(d, "report.html"), files["report.html"], 0o644)
	}
	for _, bad := range []string{"raw HTML omitted", "<em>", "<b>L", "<b>z", "<i>g"} {
		if strings.Contains(page, bad) {
			t.Errorf("report.html holds %q from a name", bad)
		}
	}
	hasAll(t, "report.html (visible text)", visibleText(page),
		"AIC takes every observation as independent: the clusters of <i>g</i> that the clustered",
		`column "<i>g</i>" holds 6 clusters`,
		"standard errors of a_b_._w_ are not estimable",
		"(a_b_: 3 patterns)",
		"categorical predictors (a_b_) was checked",
		"(*x* = ", "a_b_ = <b>L</b>, <b>z</b> = ",
		"imp_*x*_: 240 rows read",
		"by predictive mean matching (5 donors) given y, a_b_, <b>z</b>.",
		"dropped for missing values (*x*: 147)",
		"Not drawn for a_b_._w_: the nonparallel fit",
		`Not computed: column "<b>z</b>": log(-5 + 5) is undefined`,
		"every other predictor at its mean over the rows used: *x* = ")
	if strings.Contains(md, `\\`) {
		t.Error("report.md escapes a name twice")
	}
}

// The captions of the sensitivity analyses' tables name the outcome as
// code: an outcome named *y* was shown in italics there.
func TestSensitivityCaptionsShowOutcomeLiterally(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(3, 5))
	var b strings.Builder
	b.WriteString("*y*,x\n")
	for range 200 {
		x, u := rng.NormFloat64(), rng.Float64()
		y := 1
		for _, cut := range []float64{-1, 0.5} {
			if math.Log(u/(1-u))+0.8*x > cut {
				y++
			}
		}
		fmt.Fprintf(&b, "%d,%.4f\n", y, x)
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	src := `version: 1
data: {file: d.csv}
outcomes: [{column: "*y*"}]
predictors: [x]
models: {approaches: [cumulative], effects: [parallel, nonparallel], links: [logit]}
rules:
  - choose: {by: aic}
sensitivity:
  - name: sand
    why: robust errors
    change: {covariance: sandwich}
`
	files := renderSource(t, dir, src, 1)
	md, page := string(files["report.md"]), string(files["report.html"])
	hasAll(t, "report.md", md,
		"The model the rules chose under each analysis, `*y*`",
		"under each analysis, `*y*`\n")
	if strings.Contains(page, "<em>y</em>") {
		t.Error("report.html shows the outcome *y* in italics")
	}
}

// TestRunNotesBuiltInRender: the run's notes are built where they are
// written: in the report the imputed sets' file names and the remarks are
// escaped (a file *b*_c_.csv is not shown in italics, <i>d</i>.csv not
// dropped as raw HTML) and the plan's hypotheses are code spans, whatever
// they hold; decisions.json carries the same notes in plain text, the
// names as written and the hypotheses quoted, no Markdown.
func TestRunNotesBuiltInRender(t *testing.T) {
	res := runPlan(t, goldenPlan, 2)
	res.ImputedCopies = []runner.ImputedCopy{{Earlier: 1, Set: 2, EarlierFile: "sets/*b*_c_.csv", File: "sets/<i>d</i>.csv", SHA256: "ab12"}}
	res.Notes = append(res.Notes, "A remark on column *w*.")
	res.Multiplicity = &runner.MultiplicityFamily{Method: "holm", Size: 2,
		Outside: []runner.OutsideHypothesis{{Text: "x`1` = *y*", Line: 9, Model: "cumulative/parallel/logit", Elsewhere: true}}}
	files := outputsOf(t, res)
	md, page := string(files["report.md"]), string(files["report.html"])
	hasAll(t, "report.md", md,
		`Imputed sets 1 and 2 (sets/\*b\*\_c\_.csv and sets/\<i>d\</i>.csv) hold the same bytes (sha256 ab12)`,
		`A remark on column \*w\*.`,
		"descriptively): ``x`1` = *y*`` (plan line 9) in cumulative/parallel/logit.")
	hasAll(t, "report.html (visible text)", visibleText(page),
		"(sets/*b*_c_.csv and sets/<i>d</i>.csv)", "A remark on column *w*.", "x`1` = *y* (plan line 9)")
	var dec struct{ Notes []string }
	if err := json.Unmarshal(files["decisions.json"], &dec); err != nil {
		t.Fatal(err)
	}
	hasAll(t, "decisions.json's notes", strings.Join(dec.Notes, "\n"),
		"Imputed sets 1 and 2 (sets/*b*_c_.csv and sets/<i>d</i>.csv) hold the same bytes",
		"A remark on column *w*.",
		"descriptively): \"x`1` = *y*\" (plan line 9) in cumulative/parallel/logit.")
	for _, n := range dec.Notes {
		if strings.Contains(n, `\*`) || strings.Contains(n, "``") || strings.Contains(n, "`x") {
			t.Errorf("decisions.json's note holds Markdown: %s", n)
		}
	}
}
