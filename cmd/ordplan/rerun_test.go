package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// rerunRows writes an invented survey of 240 rows (a seeded-free
// arithmetic pattern: y from 1 to 3, an age, a group level), with the
// callers' edits to the rows applied: edit(i, fields) may change row i's
// fields (y, age, grp).
func rerunRows(edit func(i int, f []string)) []string {
	rows := make([]string, 240)
	for i := range rows {
		f := []string{fmt.Sprint(1 + (i*7+i%5)%3), fmt.Sprint(20 + (i*13)%50), []string{"a", "b", "c"}[(i*11)%3]}
		if edit != nil {
			edit(i, f)
		}
		rows[i] = strings.Join(f, ",")
	}
	return rows
}

func writeRows(t *testing.T, path string, rows []string) {
	t.Helper()
	if err := os.WriteFile(path, []byte("y,age,grp\n"+strings.Join(rows, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
}

const rerunPlan = `version: 1
data: {%s}
outcomes: [{column: y, categories: ["1", "2", "3"]}]
categorical: {grp: {levels: [a, b, c]}}
predictors: [age, grp]
models: {approaches: [cumulative], effects: [parallel], links: [logit]}
tests: {parallel_lines: [wald]}
rules:
  - choose: {by: aic}
`

// A plan is run, the data corrected in ways that change no count, and
// the plan run again with --previous: the message and the report's
// "Changes since the previous run" name the column that changed and how.
// An age 43 corrected to 34 changes the column's sum and mean; two rows
// exchanging their outcome categories change no count (the same values
// in other rows); the rows in another order are said once, no column
// named; an earlier run.json without the columns (an older program's) is
// said to lack them. The sums are counted here from the rows written.
func TestRerunNamesChangedColumns(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "d.csv")
	p := filepath.Join(dir, "plan.yaml")
	os.WriteFile(p, []byte(fmt.Sprintf(rerunPlan, "file: d.csv")), 0o644)
	base := rerunRows(nil)
	writeRows(t, data, base)
	first := filepath.Join(dir, "first")
	if _, e, code := runCLI("run", p, "--out", first, "--quiet"); code != 0 {
		t.Fatal(e)
	}
	var rec struct {
		Columns []struct {
			Outcome string `json:"outcome"`
			Rows    int    `json:"rows"`
			Columns []struct {
				Column string   `json:"column"`
				Sum    *float64 `json:"sum"`
			} `json:"columns"`
		} `json:"data_columns"`
	}
	b, _ := os.ReadFile(filepath.Join(first, "run.json"))
	if err := json.Unmarshal(b, &rec); err != nil || len(rec.Columns) != 1 || rec.Columns[0].Rows != 240 || len(rec.Columns[0].Columns) != 3 {
		t.Fatalf("run.json data_columns: %v %+v", err, rec.Columns)
	}
	sum := 0
	for i := range 240 {
		sum += 20 + (i*13)%50
	}
	if c := rec.Columns[0].Columns[1]; c.Column != "age" || c.Sum == nil || *c.Sum != float64(sum) {
		t.Fatalf("age: %+v, want the sum %d", c, sum)
	}
	// The first row of age 43.
	at := -1
	for i := range 240 {
		if 20+(i*13)%50 == 43 {
			at = i
			break
		}
	}
	// Two rows of other outcome categories, to exchange them.
	x, y := 0, 1
	for (1 + (y*7+y%5)%3) == (1 + (x*7+x%5)%3) {
		y++
	}
	cases := []struct {
		name  string
		rows  []string
		want  []string
		avoid []string
	}{
		{"age 43 -> 34", rerunRows(func(i int, f []string) {
			if i == at {
				f[1] = "34"
			}
		}), []string{
			"since the previous run: The data file d.csv changed (sha256 ",
			fmt.Sprintf("since the previous run: y: column age (predictor) changed: sum %d -> %d, mean %.6g -> %.6g.\n", sum, sum-9, float64(sum)/240, float64(sum-9)/240),
		}, []string{"column y ", "column grp "}},
		{"outcome exchanged", rerunRows(func(i int, f []string) {
			switch i {
			case x:
				f[0] = fmt.Sprint(1 + (y*7+y%5)%3)
			case y:
				f[0] = fmt.Sprint(1 + (x*7+x%5)%3)
			}
		}), []string{
			"since the previous run: y: column y (outcome) changed: the same values in other rows (values exchanged between rows; its counts per level and of missing values are the same).\n",
		}, []string{"column age ", "column grp ", "counts per category"}},
		{"rows reordered", append(append([]string(nil), base[120:]...), base[:120]...), []string{
			"since the previous run: y: the 240 rows used are the same, in another order: no value of a column changed (a reordering of the rows changes no fit beyond rounding in the last digits, so no column is named).\n",
		}, []string{"column age", "column y ", "column grp"}},
	}
	for _, c := range cases {
		writeRows(t, data, c.rows)
		out := filepath.Join(dir, strings.ReplaceAll(c.name, " ", "_"))
		stdout, e, code := runCLI("run", p, "--out", out, "--previous", first, "--quiet")
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", c.name, code, e)
		}
		md, _ := os.ReadFile(filepath.Join(out, "report.md"))
		section, _, _ := strings.Cut(string(md[strings.Index(string(md), "## Changes since the previous run"):]), "\n## Summary")
		for _, w := range c.want {
			if !strings.Contains(stdout, w) {
				t.Errorf("%s: no %q in:\n%s", c.name, w, stdout)
			}
			// The report lists the same lines (no Markdown in these).
			if item := "- " + strings.TrimSuffix(strings.TrimPrefix(w, "since the previous run: "), "\n"); !strings.Contains(section, item) {
				t.Errorf("%s: report: no %q in:\n%s", c.name, item, section)
			}
		}
		for _, a := range c.avoid {
			if strings.Contains(stdout, a) {
				t.Errorf("%s: %q in:\n%s", c.name, a, stdout)
			}
		}
	}
	// An earlier run.json written before the columns were recorded.
	old := filepath.Join(dir, "old")
	if _, e, code := runCLI("run", p, "--out", old, "--quiet"); code != 0 { // of the reordered rows
		t.Fatal(e)
	}
	var raw map[string]any
	b, _ = os.ReadFile(filepath.Join(old, "run.json"))
	json.Unmarshal(b, &raw)
	delete(raw, "data_columns")
	b, _ = json.MarshalIndent(raw, "", "  ")
	os.WriteFile(filepath.Join(old, "run.json"), b, 0o644)
	writeRows(t, data, base)
	stdout, e, code := runCLI("run", p, "--out", filepath.Join(dir, "after-old"), "--previous", old, "--quiet")
	if code != 0 || !strings.Contains(stdout, "since the previous run: The earlier run did not record per-column fingerprints of its data (its run.json was written by an older ordplan), so which columns of the data changed cannot be said.\n") {
		t.Errorf("older run.json: exit %d: %s %s", code, stdout, e)
	}
}

// Data held as parts: one part corrected (an age 43 to 34) is named, not
// "the data file", and so is the column; a part added is named as new.
func TestRerunNamesChangedPart(t *testing.T) {
	dir := t.TempDir()
	rows := rerunRows(nil)
	for k := range 3 {
		writeRows(t, filepath.Join(dir, fmt.Sprintf("p%d.csv", k+1)), rows[k*80:(k+1)*80])
	}
	p := filepath.Join(dir, "plan.yaml")
	os.WriteFile(p, []byte(fmt.Sprintf(rerunPlan, "parts: [p1.csv, p2.csv, p3.csv]")), 0o644)
	first := filepath.Join(dir, "first")
	if _, e, code := runCLI("run", p, "--out", first, "--quiet"); code != 0 {
		t.Fatal(e)
	}
	// The first row of age 43 in part 2 (rows 80 to 159).
	part := append([]string(nil), rows[80:160]...)
	for i, r := range part {
		if f := strings.Split(r, ","); f[1] == "43" {
			f[1] = "34"
			part[i] = strings.Join(f, ",")
			break
		}
	}
	writeRows(t, filepath.Join(dir, "p2.csv"), part)
	stdout, e, code := runCLI("run", p, "--out", filepath.Join(dir, "second"), "--previous", first, "--quiet")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, e)
	}
	for _, w := range []string{"since the previous run: The part p2.csv changed (sha256 of the parts' sha256s ", "since the previous run: y: column age (predictor) changed: sum "} {
		if !strings.Contains(stdout, w) {
			t.Errorf("no %q in:\n%s", w, stdout)
		}
	}
	if strings.Contains(stdout, "data file") {
		t.Errorf("parts called the data file:\n%s", stdout)
	}
}

// A column only a sensitivity analysis reads (its cluster column) is
// compared too: a corrected cluster id changes no column of the primary
// analysis, whose line says so, and the analysis's line names the column
// (its errors changed); the same correction rerun into the folder names
// it on stderr. A column the primary analysis names already is not named
// again for an analysis that reads it too.
func TestRerunNamesSensitivityColumns(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "d.csv")
	p := filepath.Join(dir, "plan.yaml")
	os.WriteFile(p, []byte(fmt.Sprintf(rerunPlan, "file: d.csv")+`sensitivity:
  - name: by_site
    why: Rows of a site share an interviewer.
    change: {data.cluster: site, covariance: clustered}
`), 0o644)
	write := func(edit func(i int, f []string)) {
		rows := rerunRows(edit)
		for i := range rows {
			rows[i] += fmt.Sprintf(",s%d", i%12)
		}
		if err := os.WriteFile(data, []byte("y,age,grp,site\n"+strings.Join(rows, "\n")+"\n"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	write(nil)
	first := filepath.Join(dir, "first")
	if _, e, code := runCLI("run", p, "--out", first, "--quiet"); code != 0 {
		t.Fatal(e)
	}
	b, _ := os.ReadFile(data)
	os.WriteFile(data, []byte(strings.Replace(string(b), ",s3\n", ",s4\n", 1)), 0o644)
	stdout, e, code := runCLI("run", p, "--out", filepath.Join(dir, "site"), "--previous", first, "--quiet")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, e)
	}
	for _, w := range []string{
		"since the previous run: y: no column this outcome uses changed in the rows it uses",
		"since the previous run: Sensitivity analysis by_site: y: column site (cluster) changed: other values, with the same numbers of values, of clusters and of missing values.\n",
	} {
		if !strings.Contains(stdout, w) {
			t.Errorf("no %q in:\n%s", w, stdout)
		}
	}
	// Rerun into the first run's folder: stderr names the column.
	_, e, code = runCLI("run", p, "--out", first, "--quiet")
	if code != 0 || !strings.Contains(e, "the data file d.csv changed (column site); kept them in ") {
		t.Errorf("rerun into the folder: exit %d: %s", code, e)
	}
	// An age corrected: the primary analysis names it, the analysis does
	// not name it again.
	write(func(i int, f []string) {
		if i == 5 {
			f[1] = "61"
		}
	})
	stdout, e, code = runCLI("run", p, "--out", filepath.Join(dir, "age"), "--previous", filepath.Join(dir, "site"), "--quiet")
	if code != 0 || !strings.Contains(stdout, "y: column age (predictor) changed: ") || strings.Contains(stdout, "Sensitivity analysis by_site: y: column age") {
		t.Errorf("age corrected: exit %d: %s %s", code, stdout, e)
	}
	// An earlier run.json without the analysis's columns (an older
	// program's): said so, since a change only it reads would not show.
	var raw map[string]any
	b, _ = os.ReadFile(filepath.Join(dir, "site", "run.json"))
	json.Unmarshal(b, &raw)
	for _, s := range raw["sensitivity"].([]any) {
		delete(s.(map[string]any), "data_columns")
	}
	b, _ = json.MarshalIndent(raw, "", "  ")
	os.WriteFile(filepath.Join(dir, "site", "run.json"), b, 0o644)
	stdout, e, code = runCLI("run", p, "--out", filepath.Join(dir, "old"), "--previous", filepath.Join(dir, "site"), "--quiet")
	if code != 0 || !strings.Contains(stdout, "since the previous run: Sensitivity analysis by_site: the earlier run did not record the columns it read (its run.json was written by an older ordplan), so what changed in columns or rows only it reads cannot be said.\n") {
		t.Errorf("older record: exit %d: %s %s", code, stdout, e)
	}
}

// A sensitivity analysis whose subset changed between two runs reads
// other rows, so every column it reads changes: --previous says so in one
// line, naming the analysis, the subset's change with both values and
// the rows used before and now (counted here from the rows written), not
// one line per column; a subset that keeps the same rows says that; with
// the data changed too, that the two are not told apart.
func TestRerunSummarisesSensitivitySubset(t *testing.T) {
	section := "sensitivity:\n  - name: younger\n    why: Older respondents may answer otherwise.\n    change:\n      subset: [{column: age, at_most: %s}]\n"
	dir, run := subsetReruns(t, func(at string) string { return fmt.Sprintf(section, at) })
	data := filepath.Join(dir, "d.csv")
	upTo := rerunRowsUpTo
	run("49", "a", "")
	for _, c := range []struct{ at, out, previous, want string }{
		{"39", "b", "a", fmt.Sprintf("since the previous run: Sensitivity analysis younger: y: its subset changed (subset[0].at_most 49 -> 39): rows used %d -> %d, and all 3 columns it reads changed with them.\n", upTo(49), upTo(39))},
		{"39.5", "c", "b", fmt.Sprintf("since the previous run: Sensitivity analysis younger: y: its subset changed (subset[0].at_most 39 -> 39.5): it uses the same %d rows.\n", upTo(39))},
		{"45", "d", "c", fmt.Sprintf("rows used %d -> %d, and all 3 columns it reads changed with them (the data changed too: the columns' changes are not only the subset's).\n", upTo(39), upTo(45))},
	} {
		if c.out == "d" {
			writeRows(t, data, rerunRows(func(i int, f []string) {
				if i == 2 {
					f[0] = "3"
				}
			}))
		}
		stdout := run(c.at, c.out, c.previous)
		if !strings.Contains(stdout, c.want) || strings.Contains(stdout, "Sensitivity analysis younger: y: column ") {
			t.Errorf("subset at_most %s: want %q, and no line per column, in:\n%s", c.at, c.want, stdout)
		}
	}
}

// rerunRowsUpTo counts the rows of rerunRows whose age is at most age.
func rerunRowsUpTo(age int) int {
	n := 0
	for i := range 240 {
		if 20+(i*13)%50 <= age {
			n++
		}
	}
	return n
}

// subsetReruns writes rerunRows to d.csv in a new folder and returns it
// with a function running rerunPlan with the text tail(at) added (a
// subset at_most at) into the folder out, with --previous when previous
// is not empty, returning standard output.
func subsetReruns(t *testing.T, tail func(at string) string) (string, func(at, out, previous string) string) {
	dir := t.TempDir()
	p := filepath.Join(dir, "plan.yaml")
	writeRows(t, filepath.Join(dir, "d.csv"), rerunRows(nil))
	return dir, func(at, out, previous string) string {
		t.Helper()
		os.WriteFile(p, []byte(fmt.Sprintf(rerunPlan, "file: d.csv")+tail(at)), 0o644)
		args := []string{"run", p, "--out", filepath.Join(dir, out), "--quiet"}
		if previous != "" {
			args = append(args, "--previous", filepath.Join(dir, previous))
		}
		stdout, e, code := runCLI(args...)
		if code != 0 {
			t.Fatalf("exit %d: %s", code, e)
		}
		return stdout
	}
}

// The plan's own subset changed between two runs: --previous sums it up
// in one line per outcome through the sensitivity analyses' summary
// (subsetLine), with the rows used before and now counted here from the
// rows written, not one line per column.
func TestRerunSummarisesPrimarySubset(t *testing.T) {
	_, run := subsetReruns(t, func(at string) string { return "subset: [{column: age, at_most: " + at + "}]\n" })
	upTo := rerunRowsUpTo
	run("60", "a", "")
	stdout := run("45", "b", "a")
	want := fmt.Sprintf("y: its subset changed (subset[0].at_most 60 -> 45): rows used %d -> %d, and all 3 columns it reads changed with them.\n", upTo(60), upTo(45))
	if !strings.Contains(stdout, want) || strings.Contains(stdout, "y: column ") {
		t.Errorf("want %q, and no line per column, in:\n%s", want, stdout)
	}
}

// The plan changed between two runs: --previous names the key and both
// values (from run.json's plan.canonical); a comment alone changes the
// plan's hash but not its canonical form, which is said.
func TestPreviousNamesPlanKeys(t *testing.T) {
	dir := t.TempDir()
	writeRows(t, filepath.Join(dir, "d.csv"), rerunRows(nil))
	p := filepath.Join(dir, "plan.yaml")
	src := fmt.Sprintf(rerunPlan, "file: d.csv")
	os.WriteFile(p, []byte(src), 0o644)
	first := filepath.Join(dir, "first")
	if _, e, code := runCLI("run", p, "--out", first, "--quiet"); code != 0 {
		t.Fatal(e)
	}
	os.WriteFile(p, []byte(strings.Replace(src, "by: aic", "by: bic", 1)), 0o644)
	stdout, e, code := runCLI("run", p, "--out", filepath.Join(dir, "bic"), "--previous", first, "--quiet")
	if code != 0 || !strings.Contains(stdout, `...): rules[0].choose.by "aic" -> "bic".`) {
		t.Errorf("a key changed: exit %d: %s %s", code, stdout, e)
	}
	os.WriteFile(p, []byte(src+"# reviewed\n"), 0o644)
	stdout, e, code = runCLI("run", p, "--out", filepath.Join(dir, "comment"), "--previous", first, "--quiet")
	if code != 0 || !strings.Contains(stdout, "...); its canonical form is the same: only its wording changed") {
		t.Errorf("a comment: exit %d: %s %s", code, stdout, e)
	}
}
