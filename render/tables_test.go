package render

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"ordplan/render/numfmt"
)

// TestTableFiles: every table file of the golden run is CSV with one
// header and rows of the same width, is listed in the report, and the
// estimates file holds the chosen model's estimates to full precision.
func TestTableFiles(t *testing.T) {
	res := runPlan(t, goldenPlan, 2)
	files := outputsOf(t, res)
	md := string(files["report.md"])
	want := []string{"descriptives", "models", "estimates", "odds-ratios", "tests", "decision-log", "marginal-effects", "predicted", "calibration"}
	for _, kind := range want {
		name := "table-" + kind + "-safety.csv"
		b, ok := files[name]
		if !ok {
			t.Errorf("%s not written", name)
			continue
		}
		if !strings.Contains(md, name) {
			t.Errorf("%s not listed in report.md", name)
		}
		recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		if len(recs) < 2 {
			t.Errorf("%s: %d lines", name, len(recs))
		}
	}
	// Each marginal effect says what changes: a categorical predictor has
	// a row per level and category, told apart by the change alone.
	me, _ := csv.NewReader(bytes.NewReader(files["table-marginal-effects-safety.csv"])).ReadAll()
	if len(me) == 0 || strings.Join(me[0][:5], ",") != "kind,predictor,change,category,discrete_change" {
		t.Errorf("marginal effects header %v", me[0])
	}
	seen, levels := map[string]bool{}, map[string]bool{}
	for _, r := range me[1:] {
		key := r[0] + "|" + r[1] + "|" + r[2] + "|" + r[3]
		if seen[key] {
			t.Errorf("marginal effects: two rows %s", key)
		}
		seen[key] = true
		if r[1] == "street_type" {
			levels[r[2]] = true
		}
	}
	if !levels["residential to through_road"] || !levels["residential to cul_de_sac"] || len(levels) != 2 {
		t.Errorf("marginal effects of street_type: changes %v, want residential to each other level", levels)
	}
	recs, _ := csv.NewReader(bytes.NewReader(files["table-estimates-safety.csv"])).ReadAll()
	ch := res.Outcomes[0].Chosen.Result
	found := 0
	for _, r := range recs[1:] {
		if r[0] != res.Outcomes[0].Chosen.ID {
			continue
		}
		i := found
		found++
		est, _ := strconv.ParseFloat(r[3], 64)
		se, _ := strconv.ParseFloat(r[4], 64)
		if math.Abs(est-ch.Estimates[i]) > 1e-11*math.Max(1, math.Abs(est)) || math.Abs(se-ch.StdErrors[i]) > 1e-11*math.Max(1, se) {
			t.Errorf("%s: %s %s, want %g %g", r[2], r[3], r[4], ch.Estimates[i], ch.StdErrors[i])
		}
	}
	if found != len(ch.Estimates) {
		t.Errorf("%d estimates of the chosen model in the file, want %d", found, len(ch.Estimates))
	}
}

// TestMarkdownFigures: every image report.md references is among the files
// of the run, is an SVG document, and every chart of report.html has one.
func TestMarkdownFigures(t *testing.T) {
	files := renderPlan(t, goldenPlan, 2)
	md := string(files["report.md"])
	refs := regexp.MustCompile(`!\[[^\]]*\]\(([^)]+)\)`).FindAllStringSubmatch(md, -1)
	charts := len(regexp.MustCompile(`<div class="chart" id="chart-`).FindAllString(string(files["report.html"]), -1))
	if len(refs) == 0 || len(refs) != charts {
		t.Errorf("report.md references %d figures, report.html has %d charts", len(refs), charts)
	}
	for _, m := range refs {
		b, ok := files[m[1]]
		if !ok {
			t.Errorf("report.md references %s, which the run does not write", m[1])
			continue
		}
		if !bytes.Contains(b[:min(len(b), 400)], []byte("<svg")) {
			t.Errorf("%s is not an SVG document", m[1])
		}
	}
}

// A spline term has no odds ratio per column (a unit of one basis column
// with the others fixed is no change of age): the report says which
// terms are left out, and the odds-ratio table and CSV hold only the
// columns with a reading, each with its change (what exp(b) compares,
// checked against the fitted probabilities in runner/readings_test.go).
func TestOddsRatiosLeaveOutBasisColumns(t *testing.T) {
	data, err := filepath.Abs(filepath.Join("testdata", "data", "small.csv"))
	if err != nil {
		t.Fatal(err)
	}
	src := `version: 1
title: spline odds ratios
data: {file: ` + data + `}
outcomes: [{column: safety, categories: [very_unsafe, unsafe, neutral, safe, very_safe]}]
predictors:
  - pilot
  - {name: age_s, column: age, spline: {knots: [20, 40, 60, 80]}}
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: bic}
inference: {marginal_effects: [average, means]}
`
	files := renderSource(t, t.TempDir(), src, 1)
	// The marginal effects at the means say in the CSV where they are (the
	// point the report names), the averages have no point.
	recs, err := csv.NewReader(bytes.NewReader(files["table-marginal-effects-safety.csv"])).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	// at_outside, after at: false at the means, empty for the averages.
	h := recs[0]
	if len(h) < 2 || h[len(h)-2] != "at" || h[len(h)-1] != "at_outside" {
		t.Fatalf("marginal effects header %q", h)
	}
	for _, r := range recs[1:] {
		at, outside := r[len(r)-2], r[len(r)-1]
		if (r[0] == "means") != strings.HasPrefix(at, "pilot = 0.") || r[0] == "means" && !strings.Contains(at, ", age = ") {
			t.Errorf("%s row at %q", r[0], at)
		}
		if want := map[bool]string{true: "false", false: ""}[r[0] == "means"]; outside != want {
			t.Errorf("%s row at_outside %q, want %q", r[0], outside, want)
		}
	}
	md, orCSV := string(files["report.md"]), string(files["table-odds-ratios-safety.csv"])
	hasAll(t, "report.md", md, "Not shown: the columns of age_s.", "| Predictor | Change | Boundary |", "| pilot | 1 against 0 | every boundary |")
	hasAll(t, "odds-ratios CSV", orCSV, "model,predictor,change,holds_at,boundary,", ",pilot,1 against 0,,0,")
	if strings.Contains(orCSV, "age_s") || strings.Contains(md, "| age_s.1 | column") {
		t.Errorf("a spline column has an odds ratio:\n%s", orCSV)
	}
}

// goldenWith is the golden plan with its data file by absolute path and
// extra report keys, for a test that renders a variant of it.
func goldenWith(t *testing.T, report string) string {
	t.Helper()
	b, err := os.ReadFile(goldenPlan)
	if err != nil {
		t.Fatal(err)
	}
	data, err := filepath.Abs(filepath.Join("testdata", "data", "small.csv"))
	if err != nil {
		t.Fatal(err)
	}
	src := strings.Replace(string(b), "file: data/small.csv", "file: "+data, 1)
	return strings.Replace(src, "report:\n", "report:\n"+report, 1)
}

// TestPredictedCSVEveryPanel: with report.panels_by the CSV of predicted
// probabilities holds every panel, its first column naming the panel's
// level, each panel's first values (the smallest age) equal to those of
// the report's table of that panel, and its description says where the
// other predictors are held (categorical ones at their reference level,
// not at a mean).
func TestPredictedCSVEveryPanel(t *testing.T) {
	files := renderSource(t, t.TempDir(), goldenWith(t, "  panels_by: street_type\n")+"dictionary:\n  age: {range: [16, 100], unit: years}\n  pilot: {values: [0, 1]}\n  female: {values: [0, 1]}\n  cyclist: {values: [0, 1]}\n  street_type: {label: street}\n", 1)
	recs, err := csv.NewReader(bytes.NewReader(files["table-predicted-safety.csv"])).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(recs[0], ","); got != "street_type,age,category,probability,std_error,low_90,high_90" {
		t.Fatalf("header %s", got)
	}
	md := string(files["report.md"])
	perPanel := map[string]int{}
	first := map[string][]string{}
	for _, r := range recs[1:] {
		perPanel[r[0]]++
		if perPanel[r[0]] <= 5 {
			p, _ := strconv.ParseFloat(r[3], 64)
			first[r[0]] = append(first[r[0]], strconv.FormatFloat(p, 'f', 4, 64))
		}
	}
	for _, l := range []string{"residential", "through_road", "cul_de_sac"} {
		if perPanel[l] != chartPoints*5 {
			t.Errorf("panel %s: %d rows, want %d", l, perPanel[l], chartPoints*5)
		}
		// The report's panel: its heading, then the table whose first
		// row is the smallest age.
		i := strings.Index(md, "#### street_type = "+l)
		if i < 0 {
			t.Errorf("report.md has no panel %s", l)
			continue
		}
		row := regexp.MustCompile(`\n\| -?[0-9.]+ \| ([^\n]*)`).FindStringSubmatch(md[i:])
		for j, p := range first[l] {
			if row == nil || !strings.Contains(strings.Split(row[1], "|")[j], p+" (") {
				t.Errorf("panel %s, category %d: CSV %s, report's row %q", l, j+1, p, row)
			}
		}
	}
	hasAll(t, "report.md", md, "one panel per level of street_type (report.panels_by; column street_type: the level it is held at) (other predictors at their means) with")
	// The charts over age: a value axis (ticks at round values), the
	// stacked series' points [y, x] read through their encode.
	// The axis's title gives the dictionary's unit.
	hasAll(t, "report.html", string(files["report.html"]), `"encode":{"x":1,"y":0}`, `"type":"value","name":"age (years)"`)
	// So does the first column of the tables of the same predictions.
	hasAll(t, "report.md", md, "| age (years) | P(very_unsafe) |")
	svgs := 0
	for name, b := range files {
		if strings.HasSuffix(name, ".svg") && bytes.Contains(b, []byte("Predicted probabilities by age")) {
			svgs++
			hasAll(t, name, string(b), ">age (years)<")
		}
	}
	if svgs != 3 {
		t.Errorf("%d figures of predicted probabilities, want 3", svgs)
	}
	// Without panels the categorical predictor is at its reference level,
	// which the description and the charts' captions say.
	plain := string(renderSource(t, t.TempDir(), goldenWith(t, ""), 1)["report.md"])
	hasAll(t, "report.md without panels", plain,
		"predicted probabilities of the chosen model over age (other predictors at their means, categorical ones at their reference level) with",
		"as age varies, with other predictors at their means, categorical ones at their reference level;")
}

// TestPanelsByZeroOne: report.panels_by may name a predictor holding only
// 0 and 1 (here pilot, assigned by chance, which interacts with
// street_type): a panel at 0 and one at 1, labelled pilot = 0 and pilot =
// 1, each table held there; the CSV's first column and decisions.json
// name the panel's value; the 0/1 columns not the panel are said to be
// held at their shares of 1, which no row has. Without panels the report
// says so of pilot too and points at report.panels_by.
func TestPanelsByZeroOne(t *testing.T) {
	dict := "dictionary:\n  pilot: {values: [0, 1], assigned_by_chance: true}\n  female: {values: [0, 1]}\n  cyclist: {values: [0, 1]}\n  street_type: {label: street}\n  age: {range: [16, 100]}\n"
	files := renderSource(t, t.TempDir(), goldenWith(t, "  panels_by: pilot\n")+dict, 1)
	md := string(files["report.md"])
	hasAll(t, "report.md", md,
		"One panel for each value of `pilot` (report.panels_by), 0 and 1, so that the predictions can be compared between them",
		"#### pilot = 0", "#### pilot = 1",
		"categorical ones at the level shown (pilot 0 in this panel, female 0.532203, cyclist 0.244068, street_type residential)",
		"categorical ones at the level shown (pilot 1 in this panel, female 0.532203, cyclist 0.244068, street_type residential)",
		"In these predictions the columns `female` and `cyclist`, which hold only 0 and 1, are held at their means, the shares of rows at 1 (female 0.532203, cyclist 0.244068): no person (no row of the data) has such a value",
		"as age varies, with pilot = 1, other predictors at their means, categorical ones at their reference level;",
		"one panel for each of the values 0 and 1 of pilot (report.panels_by; column pilot: the value it is held at)")
	if strings.Contains(md, "pilot 0.332203") {
		t.Error("pilot, the panels' column, is still said to be held at its mean")
	}
	recs, err := csv.NewReader(bytes.NewReader(files["table-predicted-safety.csv"])).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(recs[0], ","); got != "pilot,age,category,probability,std_error,low_90,high_90" {
		t.Fatalf("header %s", got)
	}
	perPanel := map[string]int{}
	first := map[string]string{}
	for _, r := range recs[1:] {
		perPanel[r[0]]++
		if perPanel[r[0]] == 1 {
			first[r[0]] = r[3]
		}
	}
	if len(perPanel) != 2 || perPanel["0"] != chartPoints*5 || perPanel["1"] != chartPoints*5 {
		t.Errorf("rows per panel %v, want %d at 0 and at 1", perPanel, chartPoints*5)
	}
	for _, v := range []string{"0", "1"} {
		p, _ := strconv.ParseFloat(first[v], 64)
		i := strings.Index(md, "#### pilot = "+v)
		row := regexp.MustCompile(`\n\| -?[0-9.]+ \| ([^\n]*)`).FindStringSubmatch(md[max(i, 0):])
		if i < 0 || row == nil || !strings.HasPrefix(row[1], strconv.FormatFloat(p, 'f', 4, 64)+" (") {
			t.Errorf("panel pilot = %s: CSV %s, report's row %q", v, first[v], row)
		}
	}
	if first["0"] == first["1"] {
		t.Error("the panels at 0 and 1 predict alike")
	}
	hasAll(t, "decisions.json", string(files["decisions.json"]), `"prediction_panels": {
        "column": "pilot",
        "kind": "zero_one",
        "values": [
          "0",
          "1"
        ]
      }`)
	// Without panels pilot is held at its share, which the report says,
	// pointing at report.panels_by for the arms.
	plainFiles := renderSource(t, t.TempDir(), goldenWith(t, "")+dict, 1)
	plain := string(plainFiles["report.md"])
	hasAll(t, "report.md without panels", plain,
		"In these predictions the columns `pilot`, `female` and `cyclist`, which hold only 0 and 1, are held at their means, the shares of rows at 1 (pilot 0.332203, female 0.532203, cyclist 0.244068)",
		"`pilot` was assigned by chance (the dictionary's assigned_by_chance), so its values are the arms of the trial: to see the predictions in each arm, name it in report.panels_by (`panels_by: pilot`), which draws a panel at 0 and one at 1.")
	if bytes.Contains(plainFiles["decisions.json"], []byte("prediction_panels")) {
		t.Error("decisions.json records panels the plan did not ask for")
	}
}

// TestSlopesSayWhereTheyHold: the slopes across boundaries of a column
// whose term enters an interaction hold where the terms it interacts
// with are at 0; the table says so in a column Holds at, as the odds
// ratios do, and its chart in caption, subtitle and the figure's title.
func TestSlopesSayWhereTheyHold(t *testing.T) {
	files := renderPlan(t, goldenPlan, 1)
	md := string(files["report.md"])
	hasAll(t, "report.md", md,
		"| Predictor | Holds at | b[1] very_unsafe/unsafe |",
		"| pilot | street_type = residential | 1.4072 (0.6661) |",
		"| female |  | -0.7720 (0.4178) |",
		"**Figure 2.** pilot at street_type = residential (where its slopes hold, since it enters an interaction): nonparallel slope")
	hasAll(t, "report.html", string(files["report.html"]), `"subtext":"slope at each boundary, holds at street_type = residential"`)
	hasAll(t, "figure-2.svg", string(files["figure-2.svg"]), "pilot: slope at each boundary (at street_type = residential)")
}

// TestPValueColumnsRightAligned: a column of p-values is right-aligned
// like the other numbers, also when a cell of it says why a test has no
// p-value (the parallel-lines tests of an adjacent model, Table 15 of the
// golden report, whose Brant row is "not computed: ..."); every table of
// the golden report is checked.
func TestPValueColumnsRightAligned(t *testing.T) {
	var d doc
	d.table([]string{"Test", "Chi-square", "df", "p", "p, Holm"}, [][]string{
		{"Brant (all predictors)", "", "", "not computed: defined for the cumulative logit model only", ""},
		{"Likelihood ratio (all predictors)", "12.345", "3", "0.0063", "0.0126"},
	})
	if !strings.Contains(d.b.String(), "\n|---|---:|---:|---:|---:|\n") {
		t.Errorf("the p columns are not right-aligned:\n%s", d.b.String())
	}
	golden, err := os.ReadFile(filepath.Join("testdata", "golden", "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(golden), "\n")
	tables := 0
	for i := 0; i+1 < len(lines); i++ {
		if !strings.HasPrefix(lines[i], "| ") || !strings.HasPrefix(lines[i+1], "|---") {
			continue
		}
		tables++
		head := strings.Split(strings.Trim(lines[i], "| "), " | ")
		align := strings.Split(strings.Trim(lines[i+1], "|"), "|")
		for c, h := range head {
			if pColumn(h) && (c >= len(align) || align[c] != "---:") {
				t.Errorf("golden report line %d: column %q is not right-aligned: %s", i+2, h, lines[i+1])
			}
		}
	}
	if tables < 20 {
		t.Errorf("only %d tables found in the golden report", tables)
	}
}

// The missing-value patterns table has one column of x marks per used
// column: such columns are centred, and report.html does not widen their
// cells to the 8em of text cells (with eight used columns the table ran
// off the page of the example report).
func TestMarkColumnsCentredAndNarrow(t *testing.T) {
	d := &doc{}
	d.table([]string{"Rows", "Share", "safety", "age", "years_resident", "Note"}, [][]string{
		{"41", "2.3%", "", "", "x", "a"},
		{"23", "1.3%", "", "x", "", "two words"},
		{"1734", "96.3%", "", "", "", ""},
	})
	if !strings.Contains(d.b.String(), "\n|---:|---:|:---:|:---:|:---:|---|\n") {
		t.Errorf("the mark columns (one without a mark too) are not centred:\n%s", d.b.String())
	}
	got, err := d.html("t")
	if err != nil {
		t.Fatal(err)
	}
	h := string(got)
	if !strings.Contains(h, `<td style="text-align:center">x</td>`) {
		t.Errorf("report.html lacks a centred x cell")
	}
	if !strings.Contains(h, `td:not([style*="right"]):not([style*="center"]){white-space:normal;min-width:8em`) {
		t.Errorf("the 8em minimum width of text cells also applies to centred mark cells")
	}
}

// TestModelsCSVNoMaximumNoCriteria: a candidate whose likelihood has no
// finite maximum (separation) has no log-likelihood, AIC, BIC or count of
// rows with negative probabilities in table-models, as in the report's
// table of models; they read 0 before, which looked like values. Every row
// is as wide as the header.
func TestModelsCSVNoMaximumNoCriteria(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("y,x,z\n")
	for i := range 60 {
		x := i % 2
		y := 1 + i%3
		if x == 1 && y == 1 {
			y = 2 // x = 1 never in the lowest category: separation at the first boundary
		}
		fmt.Fprintf(&b, "%d,%d,%d\n", y, x, (i*7)%5)
	}
	if err := os.WriteFile(filepath.Join(dir, "sep.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	src := `version: 1
title: separated
data: {file: ` + filepath.Join(dir, "sep.csv") + `}
outcomes: [{column: y, categories: [1, 2, 3]}]
predictors: [x, z]
models: {approaches: [cumulative], effects: [parallel, nonparallel]}
tests: {parallel_lines: []}
rules:
  - reject_unconverged: true
  - choose: {by: bic}
`
	files := renderSource(t, t.TempDir(), src, 1)
	recs, err := csv.NewReader(bytes.NewReader(files["table-models-y.csv"])).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := map[string]int{}
	for i, h := range recs[0] {
		col[h] = i
	}
	failed := 0
	for _, r := range recs[1:] {
		if r[col["status"]] != "no_finite_maximum" {
			continue
		}
		failed++
		for _, h := range []string{"loglik", "aic", "bic", "rows_negative_probability"} {
			if r[col[h]] != "" {
				t.Errorf("%s: %s %q, want empty (no finite maximum)", r[0], h, r[col[h]])
			}
		}
	}
	if failed == 0 {
		t.Fatalf("no candidate without a finite maximum:\n%s", files["table-models-y.csv"])
	}
}

// TestLimitsSayFewObservationsPerParameter: a chosen model of 5
// parameters fitted to 8 rows (a plan without reject_if_sparse) is said in
// Assumptions and limits to rest on large-sample approximations those
// rows support poorly; the golden run (300 rows) says nothing of it.
func TestLimitsSayFewObservationsPerParameter(t *testing.T) {
	dir := t.TempDir()
	rows := "y,a,b\n3,0.675,0.665\n3,-1.579,0.51\n1,0.2,-0.3\n2,1.1,0.9\n1,-0.4,1.2\n2,0.3,-1.1\n3,1.9,0.2\n1,-1.2,-0.6\n"
	if err := os.WriteFile(filepath.Join(dir, "tiny.csv"), []byte(rows), 0o644); err != nil {
		t.Fatal(err)
	}
	src := `version: 1
title: tiny
data: {file: ` + filepath.Join(dir, "tiny.csv") + `}
outcomes: [{column: y, categories: [1, 2, 3]}]
predictors: [a, b]
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: bic}
`
	files := renderSource(t, t.TempDir(), src, 1)
	want := "The chosen model cumulative/parallel/logit of `y` has 4 parameters for 8 observations (2 per parameter), fewer than 10. Its standard errors, tests, p-values and intervals rest on large-sample approximations"
	if md := string(files["report.md"]); !strings.Contains(md, want) {
		t.Errorf("report.md lacks %q", want)
	}
	golden := outputsOf(t, runPlan(t, goldenPlan, 2))
	if md := string(golden["report.md"]); strings.Contains(md, "per parameter), fewer than") {
		t.Errorf("the golden report speaks of few observations per parameter")
	}
}

// TestPredictionGridReadsAlike: a focus predictor on a scale of its own
// (the golden data's age as 0.0731 age - 3.3436, every value with several
// decimals) is shown in the report's table of predictions with one number
// of decimals, numfmt.Spaced of the grid, its ends the data's smallest and
// largest values rounded so; the CSV of predictions keeps the grid's
// values as the data file's numbers are written (csvNum), so that each
// row names the point it was predicted at, and its probabilities are the
// table's.
func TestPredictionGridReadsAlike(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("testdata", "data", "small.csv"))
	if err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, r := range recs[1:] {
		if r[3] == "" {
			continue
		}
		age, err := strconv.ParseFloat(r[3], 64)
		if err != nil {
			t.Fatal(err)
		}
		v, _ := strconv.ParseFloat(strconv.FormatFloat(0.0731*age-3.3436, 'f', 4, 64), 64)
		r[3] = strconv.FormatFloat(v, 'f', -1, 64)
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	dir := t.TempDir()
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	if err := w.WriteAll(recs); err != nil {
		t.Fatal(err)
	}
	data := filepath.Join(dir, "scaled.csv")
	if err := os.WriteFile(data, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	src := goldenWith(t, "")
	src = regexp.MustCompile(`file: .*small\.csv`).ReplaceAllString(src, "file: "+data)
	files := renderSource(t, dir, src, 1)
	grid := make([]float64, tablePoints)
	for i := range grid {
		grid[i] = lo + (hi-lo)*float64(i)/float64(tablePoints-1)
	}
	grid[tablePoints-1] = hi
	want := numfmt.Spaced(grid)
	md := string(files["report.md"])
	i := strings.Index(md, "Predicted probabilities by age")
	if i < 0 {
		t.Fatal("report.md has no table of predictions")
	}
	rows := regexp.MustCompile(`\n\| (-?[0-9.]+) \| ([0-9.]+) \(`).FindAllStringSubmatch(md[i:], tablePoints)
	var got []string
	for _, r := range rows {
		got = append(got, r[1])
	}
	if strings.Join(got, " ") != strings.Join(want, " ") || !strings.Contains(want[0], ".") {
		t.Errorf("the table's ages %v, want %v", got, want)
	}
	preds, err := csv.NewReader(bytes.NewReader(files["table-predicted-safety.csv"])).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	first, last := preds[1], preds[len(preds)-1]
	if first[0] != strconv.FormatFloat(lo, 'g', 12, 64) || last[0] != strconv.FormatFloat(hi, 'g', 12, 64) {
		t.Errorf("the CSV's ages run from %s to %s, want %g to %g", first[0], last[0], lo, hi)
	}
	if p, _ := strconv.ParseFloat(first[2], 64); len(rows) == 0 || strconv.FormatFloat(p, 'f', 4, 64) != rows[0][2] {
		t.Errorf("the CSV's first probability %s, the table's %v", first[2], rows)
	}
}
