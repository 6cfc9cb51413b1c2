package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestCheckNoDataSaysWhatItLeftOut: check --no-data ends its output with
// the checks it could not make without the data, sorted, in fixed words,
// for the features the plan uses; check with the data prints no such
// list, and makes those checks (here: spline knots outside the data
// refused, few clusters warned of).
func TestCheckNoDataSaysWhatItLeftOut(t *testing.T) {
	dir := t.TempDir()
	catalogueData(t, dir)
	clusterData(t, dir, "")
	plain := filepath.Join(dir, "plain.yaml")
	os.WriteFile(plain, []byte(goodPlan), 0o644)
	out, errs, code := runCLI("check", "--no-data", plain)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	want := "Not checked without the data (run ordplan check " + plain + " without --no-data once the data file exists):\n" +
		"  - data.file: the data file opens and holds every column the plan names (its delimiter and decimal mark checked)\n" +
		"  - data: every used cell reads as its column's kind (numbers, declared levels, outcome categories), and missing values are as data.missing says\n" +
		"  - outcomes: the categories the rows used have (a declared category no row has is refused; at least two are needed)\n" +
		"  - predictors: constant or collinear design columns (the rank of each outcome's design on the rows used)\n"
	if !strings.HasSuffix(out, want) {
		t.Errorf("check --no-data of the plain plan ends\n%s\nwant\n%s", out, want)
	}

	// Every feature that adds an item.
	full := strings.Replace(goodPlan, "  file: d.csv\n", "  file: clu.csv\n  weights: c\n  cluster: two\n", 1)
	full = strings.Replace(full, "predictors: [a, b]", "categorical:\n  b: {levels: [\"0\", \"1\"], unobserved: drop}\npredictors: [a, b, {column: d, spline: {knots: [-1, 0, 40]}}, {column: big, spline: {quantiles: [0.1, 0.5, 0.9]}}]", 1)
	full = strings.Replace(full, "reject_unconverged: true", "reject_if_simpler_is_close: {max_difference: 0.05, grid: {b: [\"1\"]}}", 1)
	full += "covariance: clustered\nsubset:\n  - {column: a, at_least: -5}\ndictionary:\n  a: {range: [-10, 10]}\n  b: {label: B}\n  d: {label: D}\n  big: {label: Big}\n  c: {label: weight}\n  two: {label: cluster}\ninference:\n  hypotheses: [\"a = 0\"]\n  predict: new.csv\n  marginal_effects: [profile]\n  profile: {a: 1}\n" +
		"sensitivity:\n  - name: probit\n    why: w\n    change: {models.links: [probit]}\n"
	fp := filepath.Join(dir, "full.yaml")
	os.WriteFile(fp, []byte(full), 0o644)
	out, errs, code = runCLI("check", "--no-data", fp)
	if code != 0 {
		t.Fatalf("exit %d: %s\n%s", code, errs, full)
	}
	i := strings.Index(out, "Not checked without the data")
	if i < 0 {
		t.Fatalf("no list:\n%s", out)
	}
	got := strings.Split(strings.TrimSpace(out[i:]), "\n")[1:]
	wantItems := []string{
		"categorical: values that are not declared levels, and declared levels no row used has (unobserved: refuse stops, drop removes the level's column)",
		"data.cluster: the number of clusters in the rows used (fewer than 40 gives a warning: cluster-robust errors too small, joint Wald tests of more than G-1 restrictions not computed; a model of more than G-1 parameters gives another: its cluster-robust covariance is singular)",
		"data.file: the data file opens and holds every column the plan names (its delimiter and decimal mark checked)",
		"data.weights: every weight is a number of zero or more, at most 1e15, and none dwarfs the others together (they weigh at least 1.5e-8 of the total)",
		"data: every used cell reads as its column's kind (numbers, declared levels, outcome categories), and missing values are as data.missing says",
		"dictionary: the data's values against the declared ranges, values and missing-value codes",
		"inference.hypotheses: the boundaries and level columns that the data's categories and levels give the models",
		"inference.predict: the file of new rows opens and is a data file ordplan reads, and its rows read through each outcome's design (undeclared levels, levels no row used has, values a transformation cannot take)",
		"inference.profile: whether it lies outside the population fitted, and whether every term can be computed at it",
		"outcomes: the categories the rows used have (a declared category no row has is refused; at least two are needed)",
		"predictors: constant or collinear design columns (the rank of each outcome's design on the rows used)",
		"predictors: spline knots at quantiles that tie in the rows used",
		"predictors: spline knots given as values against the range of the rows used",
		"rules: the levels a closeness rule's grid lists that no row used has (unobserved: drop)",
		"sensitivity: each analysis, the plan with its changes, against the data as the plan is (the rows its subset keeps, its levels and design, its clusters)",
		"subset: the values its conditions name against those the rows hold, and the rows it keeps",
	}
	if len(got) != len(wantItems) {
		t.Fatalf("got %d items, want %d:\n%s", len(got), len(wantItems), strings.Join(got, "\n"))
	}
	for k := range got {
		if got[k] != "  - "+wantItems[k] {
			t.Errorf("item %d: %q, want %q", k, got[k], wantItems[k])
		}
	}
	// data.missing: impute adds its item, which check with the data makes
	// (catalogue I9, I24).
	imp := filepath.Join(dir, "impute.yaml")
	os.WriteFile(imp, []byte(strings.Replace(goodPlan, "  file: d.csv\n", "  file: d.csv\n  missing: impute\n", 1)), 0o644)
	if out, errs, code := runCLI("check", "--no-data", imp); code != 0 || !strings.Contains(out, "\n  - data.missing: impute: the columns imputed (none missing in every row), imputed into two sets after one iteration as run imputes them, and the design on the first imputed set, as run makes it\n") {
		t.Errorf("check --no-data of a plan that imputes: exit %d\n%s\n%s", code, out, errs)
	}
	// With the data: no list, and the checks are made.
	out, errs, code = runCLI("check", fp)
	if strings.Contains(out, "Not checked") || code != 1 || !strings.Contains(errs, "knot 40 lies outside it") {
		t.Errorf("check with the data: exit %d\n%s\n%s", code, out, errs)
	}
	// Without the splines, the clusters are counted and warned of.
	os.WriteFile(fp, []byte(strings.NewReplacer(", {column: d, spline: {knots: [-1, 0, 40]}}, {column: big, spline: {quantiles: [0.1, 0.5, 0.9]}}", "", "  d: {label: D}\n  big: {label: Big}\n", "").Replace(full)), 0o644)
	os.WriteFile(filepath.Join(dir, "new.csv"), []byte("a,b,c\n0.5,1,5\n"), 0o644)
	out, errs, code = runCLI("check", fp)
	if strings.Contains(out, "Not checked") || code != 0 || !strings.Contains(errs, `column "two" holds 2 clusters`) {
		t.Errorf("check with the data: exit %d\n%s\n%s", code, out, errs)
	}
}
