package main

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// termsPlan is the plan the term items vary: a categorical predictor and a
// numeric one, on cat.csv.
const termsPlan = `version: 1
data: {file: cat.csv}
outcomes: [{column: y}]
categorical:
  site: {levels: [north, east, south]}
predictors: [site, x]
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
`

func termsEdit(pairs ...string) string {
	s := termsPlan
	for i := 0; i+1 < len(pairs); i += 2 {
		if !strings.Contains(s, pairs[i]) {
			panic("catalogue: " + pairs[i] + " is not in the terms plan")
		}
		s = strings.Replace(s, pairs[i], pairs[i+1], 1)
	}
	return s
}

// writeTermsData writes cat.csv (60 rows, seeded): y in 1..3, site in
// north/east/south, x > 0 except one negative value on line 7; west.csv is
// the same with one row of an undeclared level "west" on line 5.
func writeTermsData(t *testing.T, dir, _ string) {
	t.Helper()
	rng := rand.New(rand.NewPCG(20261202, 15))
	var b, w strings.Builder
	b.WriteString("y,site,x\n")
	w.WriteString("y,site,x\n")
	sites := []string{"north", "east", "south"}
	for i := 0; i < 60; i++ {
		site := sites[i%3]
		x := 0.5 + 3*rng.Float64()
		if i == 5 {
			x = -0.5
		}
		u := rng.Float64()
		z := 0.8*float64(i%3) - 0.6*x + math.Log(u/(1-u))
		y := 1
		if z > -1.5 {
			y = 2
		}
		if z > 0 {
			y = 3
		}
		fmt.Fprintf(&b, "%d,%s,%.3f\n", y, site, x)
		if i == 3 {
			site = "west"
		}
		fmt.Fprintf(&w, "%d,%s,%.3f\n", y, site, x)
	}
	for name, body := range map[string]string{"cat.csv": b.String(), "west.csv": w.String()} {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// writeTiesData writes ties.csv: 60 rows whose x is 1 but on every tenth
// row, where it is 2 (the 10% and 50% quantiles of x coincide).
func writeTiesData(t *testing.T, dir, _ string) {
	t.Helper()
	var b strings.Builder
	b.WriteString("y,site,x\n")
	for i := 0; i < 60; i++ {
		fmt.Fprintf(&b, "%d,%s,%d\n", 1+(i*7)%3, []string{"north", "east", "south"}[i%3], 1+btoi(i%10 == 0))
	}
	if err := os.WriteFile(filepath.Join(dir, "ties.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// writeCellsData writes cells.csv: 60 rows of y, site (north, east,
// south), grade (lo, hi) and x, where no row has site south with grade hi.
func writeCellsData(t *testing.T, dir, _ string) {
	t.Helper()
	var b, c strings.Builder
	b.WriteString("y,site,grade,x\n")
	c.WriteString("y,site,grade,x,keep,w\n")
	for i := 0; i < 60; i++ {
		site, grade := []string{"north", "east", "south"}[i%3], []string{"lo", "hi"}[(i/3)%2]
		keep, w := "yes", 1
		if site == "south" && grade == "hi" {
			keep, w = "no", 0
		}
		fmt.Fprintf(&c, "%d,%s,%s,%d,%s,%d\n", 1+(i*7+i/5)%3, site, grade, i%7, keep, w)
		if site == "south" {
			grade = "lo"
		}
		fmt.Fprintf(&b, "%d,%s,%s,%d\n", 1+(i*7+i/5)%3, site, grade, i%7)
	}
	for name, body := range map[string]string{"cells.csv": b.String(), "cellskeep.csv": c.String()} {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// writeCodesData writes codes.csv: 60 rows of y, grade (1, 2, 3) and x,
// with grade 2 written "2.0" on line 4 (an export writing a code as a decimal), and
// sites.csv: the same with site, "North" for the level "north" on line 3.
func writeCodesData(t *testing.T, dir, _ string) {
	t.Helper()
	var b, c strings.Builder
	b.WriteString("y,grade,x\n")
	c.WriteString("y,site,x\n")
	for i := 0; i < 60; i++ {
		grade, site := fmt.Sprint(1+i%3), []string{"north", "east", "south"}[i%3]
		if i == 2 {
			grade = "2.0"
		}
		if i == 1 {
			site = "North"
		}
		fmt.Fprintf(&b, "%d,%s,%d\n", 1+(i*7+i/5)%3, grade, i%7)
		fmt.Fprintf(&c, "%d,%s,%d\n", 1+(i*7+i/5)%3, site, i%7)
	}
	for name, body := range map[string]string{"codes.csv": b.String(), "sites.csv": c.String()} {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

func btoi(b bool) int {
	if b {
		return 1
	}
	return 0
}

// termItems are the catalogue's items on predictor terms: categorical
// columns, transformations, interactions and subsets (the data of the
// `ordplan fit` items are written to dir by writeTermsData).
func termItems(dir string) []badInput {
	cat := filepath.Join(dir, "cat.csv")
	return []badInput{
		{id: "T1", name: "level not declared", args: []string{"run"}, setup: writeTermsData,
			plan: termsEdit("file: cat.csv", "file: west.csv"), code: 1,
			want: []string{`west.csv:5: column "site": value "west" is not one of the declared levels of this categorical predictor: "north", "east", "south"`, `plan T1.yaml, outcome "y", plan key categorical.site`}},
		{id: "T2", name: "text column not declared categorical", args: []string{"run"}, setup: writeTermsData,
			plan: termsEdit("categorical:\n  site: {levels: [north, east, south]}\n", ""), code: 1,
			want: []string{`cat.csv:2: column "site": value "north" is not a number; the column holds text: declare it categorical with its levels to use it as a predictor (in a plan under categorical:, in ordplan fit as COLUMN|levels=a/b/c)`}},
		{id: "T3", name: "log of a negative value", args: []string{"run"}, setup: writeTermsData,
			plan: termsEdit("[site, x]", "[site, {column: x, log: true}]"), code: 1,
			want: []string{`T3.yaml:6:20: predictors[1]: data line 7: column "x": log(-0.5) is undefined: the value is negative, and a logarithm needs positive values (data cat.csv, outcome "y")`}},
		{id: "T4", name: "interaction with a term not in the plan", args: []string{"check"}, setup: writeTermsData,
			plan: termsEdit("[site, x]", "[site, x, {interact: [site, age]}]"), code: 1,
			want: []string{`predictors[2].interact[1]: "age" is not a term listed before this interaction in predictors`}},
		{id: "T5", name: "subset that keeps no rows", args: []string{"run"}, setup: writeTermsData,
			plan: termsEdit("predictors:", "subset:\n  - {column: x, greater_than: 1000}\npredictors:"), code: 1,
			want: []string{`cat.csv: column "x": the subset keeps no rows: all 60 data rows fail its conditions (outside the subset x > 1000: 60)`, `plan key subset[0]`}},
		{id: "T6", name: "declared level never observed", args: []string{"run"}, setup: writeTermsData,
			plan: termsEdit("[north, east, south]", "[north, east, south, west]"), code: 1,
			want: []string{`T6.yaml:5:18: categorical.site.levels: column "site": level "west" is declared but occurs in no row used; remove it from the levels, or have its column dropped (in a plan unobserved: drop, in ordplan fit |drop)`},
			check: func(t *testing.T, dir, out, errs string) {
				// z observed in two rows of six, none of site south: more
				// rows dropped than kept, and the refusal of the level they
				// lost says why so few remain, in a plan (check, run) as in
				// ordplan fit.
				src, err := os.ReadFile(filepath.Join(dir, "cat.csv"))
				if err != nil {
					t.Fatal(err)
				}
				var b strings.Builder
				for i, l := range strings.Split(strings.TrimSpace(string(src)), "\n") {
					switch {
					case i == 0:
						l += ",z"
					case i%6 == 1 || i%6 == 2:
						l += fmt.Sprintf(",%d", i%4)
					default:
						l += ","
					}
					b.WriteString(l + "\n")
				}
				os.WriteFile(filepath.Join(dir, "catloss.csv"), []byte(b.String()), 0o644)
				pl := filepath.Join(dir, "T6loss.yaml")
				os.WriteFile(pl, []byte(termsEdit("file: cat.csv", "file: catloss.csv", "[site, x]", "[site, x, z]")), 0o644)
				want := `level "south" is declared but occurs in no row used. Only 20 of the 60 rows read are used: 40 of 60 rows dropped for missing values (z: 40). Predictor column "z" is observed in 20 of the 60 rows`
				// A plan's refusal names the entry of predictors whose
				// column lost the rows, at its place; ordplan fit has none.
				lost := `(z: 40). Rows were lost to the missing values of column "z", read by predictors[2] (` + pl + `:6:23). Predictor column`
				advice := `. If these are the rows meant, remove it from the levels, or have its column dropped (in a plan unobserved: drop, in ordplan fit |drop)`
				for _, args := range [][]string{{"check", pl}, {"run", pl, "--out", filepath.Join(dir, "T6loss-out"), "--quiet"},
					fitArgs(filepath.Join(dir, "catloss.csv"), "--predictors", "site|levels=north/east/south,x,z")} {
					// The explanation first, then the advice.
					_, e, code := runCLI(args...)
					if args[0] != "fit" {
						if !strings.Contains(e, lost) {
							t.Errorf("%s after heavy row loss: want %q in\n%s", args[0], lost, e)
						}
						e = strings.Replace(e, lost, `(z: 40). Predictor column`, 1)
					}
					if i, j := strings.Index(e, want), strings.Index(e, advice); code != 1 || i < 0 || j < i || strings.Contains(e, "used; remove") {
						t.Errorf("%s after heavy row loss: exit %d:\n%s\nwant exit 1 and %q, then %q", args[0], code, e, want, advice)
					}
				}
				// z missing in the 20 rows of south alone (fewer rows
				// dropped than kept): the refusal says that the level's
				// rows were dropped, and for which column, before its
				// advice; the reference level the same.
				b.Reset()
				for k, l := range strings.Split(strings.TrimSpace(string(src)), "\n") {
					switch {
					case k == 0:
						l += ",z"
					case (k-1)%3 == 2:
						l += ","
					default:
						l += fmt.Sprintf(",%d", k%4)
					}
					b.WriteString(l + "\n")
				}
				os.WriteFile(filepath.Join(dir, "catsouth.csv"), []byte(b.String()), 0o644)
				pl = filepath.Join(dir, "T6south.yaml")
				os.WriteFile(pl, []byte(termsEdit("file: cat.csv", "file: catsouth.csv", "[site, x]", "[site, x, z]")), 0o644)
				// A plan names the key behind the loss; ordplan fit has none.
				want = `level "south" is declared but occurs in no row used. It occurs in 20 rows of the data, each dropped for missing values (z: 20%s)` + advice
				for _, args := range [][]string{{"check", pl}, {"run", pl, "--out", filepath.Join(dir, "T6south-out"), "--quiet"},
					fitArgs(filepath.Join(dir, "catsouth.csv"), "--predictors", "site|levels=north/east/south,x,z")} {
					w := fmt.Sprintf(want, "; plan key data.missing")
					if args[0] == "fit" {
						w = fmt.Sprintf(want, "")
					}
					if _, e, code := runCLI(args...); code != 1 || !strings.Contains(e, w) {
						t.Errorf("%s, the rows of south dropped: exit %d:\n%s\nwant %q", args[0], code, e, w)
					}
				}
				// The same level lost to a subset on another column, or to
				// weights of 0, is explained alike: the subset's condition
				// or the weights column, the count, the plan key.
				b.Reset()
				for k, l := range strings.Split(strings.TrimSpace(string(src)), "\n") {
					switch {
					case k == 0:
						l += ",region,w"
					case strings.Contains(l, ",south,"):
						l += ",b,0"
					default:
						l += ",a,1"
					}
					b.WriteString(l + "\n")
				}
				os.WriteFile(filepath.Join(dir, "catregion.csv"), []byte(b.String()), 0o644)
				// The same with one x missing, imputed: the level is named
				// and explained alike (not at predictors[0], "in imputed set 1").
				lines := strings.SplitN(b.String(), "\n", 3)
				f := strings.Split(lines[1], ",")
				f[2] = ""
				lines[1] = strings.Join(f, ",")
				os.WriteFile(filepath.Join(dir, "catregionna.csv"), []byte(strings.Join(lines, "\n")), 0o644)
				inRegion := "subset:\n  - {column: region, one_of: [a]}\npredictors:"
				for _, c := range []struct{ name, data, edit, why, key, flag string }{
					{"subset", "catregion.csv", inRegion, `the subset (outside the subset region in {a}: 20`, "subset[0]", ""},
					{"imputed", "catregionna.csv, missing: impute", inRegion, `the subset (outside the subset region in {a}: 20`, "subset[0]", ""},
					{"weights", "catregion.csv, weights: w", "predictors:", `zero weight (w = 0: 20`, "data.weights", "w"},
				} {
					pl = filepath.Join(dir, "T6"+c.name+".yaml")
					body := termsEdit("file: cat.csv", "file: "+c.data, "predictors:", c.edit)
					os.WriteFile(pl, []byte(body), 0o644)
					w := `level "south" is declared but occurs in no row used. It occurs in 20 rows of the data, each dropped for ` + c.why
					if _, e, code := runCLI("check", pl); code != 1 || !strings.Contains(e, w+"; plan key "+c.key+")"+advice) {
						t.Errorf("check, the rows of south dropped by %s: exit %d:\n%s\nwant %q", c.name, code, e, w)
					}
					if c.flag != "" {
						args := fitArgs(filepath.Join(dir, "catregion.csv"), "--predictors", "site|levels=north/east/south,x", "--weights", c.flag)
						if _, e, code := runCLI(args...); code != 1 || !strings.Contains(e, w+")"+advice) {
							t.Errorf("fit, the rows of south of weight 0: exit %d:\n%s\nwant %q", code, e, w)
						}
					}
				}
				ref := `the reference level "south" occurs in no row used. It occurs in 20 rows of the data, each dropped for missing values (z: 20). If these are the rows meant, choose another reference`
				if _, e, code := runCLI(fitArgs(filepath.Join(dir, "catsouth.csv"), "--predictors", "site|levels=north/east/south|ref=south,x,z")...); code != 1 || !strings.Contains(e, ref) {
					t.Errorf("fit, the reference's rows dropped: exit %d:\n%s\nwant %q", code, e, ref)
				}
			}},
		{id: "T7", name: "declared level never observed, dropped as the plan says", args: []string{"run"}, setup: writeTermsData,
			plan: termsEdit("[north, east, south]}", "[north, east, south, west], unobserved: drop}"), code: 0,
			check: func(t *testing.T, dir, out, errs string) {
				rep, err := os.ReadFile(filepath.Join(dir, "T7-out", "report.md"))
				if err != nil || !strings.Contains(string(rep), `Level "west" of site occurs in no row used; its column was dropped, as asked (categorical.site.unobserved).`) {
					t.Errorf("the dropped level is not reported, at the plan key that asks it: %v", err)
				}
			}},
		{id: "T8", name: "transformed categorical column", args: []string{"check"}, setup: writeTermsData,
			plan: termsEdit("[site, x]", "[{column: site, log: true}, x]"), code: 1,
			want: []string{`T8.yaml:6:14: predictors[0]: column "site" is declared categorical (categorical.site) and cannot be transformed`}},
		{id: "T9", name: "a categorical column given twice with other options (ordplan fit)", setup: writeTermsData, code: 1,
			args: fitArgs(cat, "--predictors", "site|levels=north/east/south,x,site|levels=north/east/south|ref=east|as=site_e"),
			want: []string{`--predictors: predictor 3 ("site|levels=north/east/south|ref=east|as=site_e"): column "site" is declared categorical with other options in predictor 1 ("site|levels=north/east/south"); a column has one set of levels, reference and coding: give the same options in every term that uses it`}},
		{id: "T10", name: "an empty term name (ordplan fit |as=)", setup: writeTermsData, code: 1,
			args: fitArgs(cat, "--predictors", "site|levels=north/east/south|as=,x"),
			want: []string{`--predictors: predictor 1 ("site|levels=north/east/south|as="): |as= names the term: give a name (as=name)`}},
		{id: "W40", name: "a hypothesis restricting one of the terms a data column makes", args: []string{"check"}, setup: writeTermsData,
			plan: termsEdit("[site, x]", "[site, x, {name: lx, column: x, log: {shift: 1}}]", "rules:", "inference:\n  hypotheses: [\"x = 0\", \"x = 0; lx = 0\"]\nrules:"), code: 0,
			check: func(t *testing.T, dir, out, errs string) {
				// Said once, for the hypothesis restricting x alone; run says
				// it on stderr and the report beside the hypotheses.
				want := strings.Replace(`warning: W40.yaml: outcome y: inference.hypotheses[0] (line 10): "x = 0" restricts term x, which data column x makes together with lx: it asks what x adds while lx is held fixed, which cannot happen as the column changes, and not whether column x is associated with the outcome. For that, read the row "column x" of the tests of each term, which tests every term reading the column together, or write the hypothesis as "x = 0; lx = 0".`+"\n", "W40.yaml", filepath.Join(dir, "W40.yaml"), 1)
				if !strings.Contains(errs, want) {
					t.Errorf("check: want %q in\n%s", want, errs)
				}
				if n := strings.Count(errs, "restricts term"); n != 1 {
					t.Errorf("check: said %d times, want once:\n%s", n, errs)
				}
				pl := filepath.Join(dir, "W40.yaml")
				o, e, code := runCLI("run", pl, "--out", filepath.Join(dir, "W40-out"), "--quiet")
				if code != 0 || !strings.Contains(e, `warning: `+pl+`: outcome y: inference.hypotheses[0] (line 10): "x = 0" restricts term x`) {
					t.Errorf("run: exit %d:\n%s%s", code, o, e)
				}
				rep, err := os.ReadFile(filepath.Join(dir, "W40-out", "report.md"))
				if err != nil || !strings.Contains(string(rep), "`x = 0` restricts term x, which data column x makes together with lx") {
					t.Errorf("report.md does not say it (%v)", err)
				}
				// A hypothesis restricting the straight-line column of a
				// spline basis, not the curve's: said; one restricting every
				// column but the straight line (is the curve straight?), or
				// the whole term, is not.
				sp := filepath.Join(dir, "W40spline.yaml")
				os.WriteFile(sp, []byte(termsEdit("[site, x]", "[site, {name: xs, column: x, spline: {quantiles: [0.1, 0.5, 0.9]}}]", "rules:", "inference:\n  hypotheses: [\"xs.1 = 0\", \"xs.2 = 0\", \"xs = 0\"]\nrules:")), 0o644)
				_, e, code = runCLI("check", sp)
				basis := `warning: ` + sp + `: outcome y: inference.hypotheses[0] (line 10): "xs.1 = 0" restricts column xs.1 of the spline basis of term xs (its columns xs.1 and xs.2), holding the others fixed: a basis column's coefficient has no reading of its own (it depends on how the basis is written), so this tests neither whether the term is associated with the outcome nor whether its curve is straight. For the first, write "xs = 0" (the row "xs" of the tests of each term); for the second, "xs.2 = 0", every column but the straight line xs.1.` + "\n"
				if code != 0 || !strings.Contains(e, basis) || strings.Count(e, "restricts") != 1 {
					t.Errorf("check, a spline basis column: exit %d, want %q alone in\n%s", code, basis, e)
				}
				// Without the tests of each term, the hypothesis alone.
				os.WriteFile(pl, []byte(termsEdit("[site, x]", "[site, x, {name: lx, column: x, log: {shift: 1}}]", "rules:", "inference:\n  hypotheses: [\"x = 0\"]\n  term_tests: none\nrules:")), 0o644)
				if _, e, code := runCLI("check", pl); code != 0 || !strings.Contains(e, `the outcome. For that, write the hypothesis as "x = 0; lx = 0".`) {
					t.Errorf("check, term tests off: exit %d:\n%s", code, e)
				}
			}},
		{id: "T11", name: "a subset value written otherwise than the data write it", args: []string{"check", "--no-data"}, setup: writeTermsData,
			plan: termsEdit("predictors:", "subset:\n  - {column: site, one_of: [north, East]}\npredictors:"), code: 1,
			want: []string{`T11.yaml:7:5: subset[0]: names "East", which is not a level of site but is written like its level "east" (categorical.site.levels): a misspelt value keeps or drops other rows than meant; write the level as declared` + "\n"}},
		{id: "T12", name: "a subset value that no row has and that is like none of the column's values", args: []string{"run"}, setup: writeTermsData,
			plan: termsEdit("predictors:", "subset:\n  - {column: site, none_of: [west]}\npredictors:"), code: 0,
			check: func(t *testing.T, dir, out, errs string) {
				rep, err := os.ReadFile(filepath.Join(dir, "T12-out", "report.md"))
				if err != nil || !strings.Contains(string(rep), `The subset condition site not in {west} (subset[0]) names "west", which no row of column site holds: it keeps or drops no row.`+"\n") {
					t.Errorf("the value that matched no row is not reported: %v", err)
				}
			}},
		{id: "T13", name: "a level compared by equal_to (a number comparison)", args: []string{"check"}, setup: writeTermsData,
			plan: termsEdit("predictors:", "subset:\n  - {column: site, equal_to: north}\npredictors:"), code: 1,
			want: []string{`T13.yaml:7:30: subset[0].equal_to: want a number, got string "north": equal_to compares numbers; to compare the text, write one_of: [north]` + "\n"}},
		{id: "T15", name: "new rows to predict with a level not declared (found by check, before any fit)", args: []string{"check"}, setup: writeTermsData,
			plan: termsEdit("rules:", "inference: {predict: west.csv}\nrules:"), code: 1,
			want: []string{`T15.yaml: inference.predict: west.csv:5: column "site": value "west" is not one of the declared levels of this categorical predictor: "north", "east", "south"`}},
		{id: "T16", name: "spline knots at sample quantiles that are not strictly increasing on the data", args: []string{"check"}, setup: writeTiesData,
			plan: termsEdit("cat.csv", "ties.csv", "[site, x]", "[site, {name: xs, column: x, spline: {quantiles: [0.1, 0.5, 0.9]}}]"), code: 1,
			want: []string{`T16.yaml:6:20: predictors[1]: column "x": the spline knots [1, 1, 1.1000000000000014] are not strictly increasing on the transformed values (too few distinct values for the quantiles asked) (data ties.csv, outcome "y")`}},
		{id: "T17", name: "a profile at a level the subset leaves out", args: []string{"check", "--no-data"}, setup: writeTermsData,
			plan: termsEdit("predictors:", "subset:\n  - {column: site, none_of: [south]}\npredictors:", "south]}", "south], unobserved: drop}", "rules:", "inference: {marginal_effects: [profile], profile: {site: south}}\nrules:"), code: 1,
			want: []string{`T17.yaml:11:58: inference.profile.site: "south" is a level the subset leaves out (subset[0]: site not in {south}): no row used has it, so the fitted model has no effect of it; give a level the rows used have (north, east)` + "\n"}},
		{id: "T18", name: "new rows to predict at a declared level whose column was dropped (no row used has it)", args: []string{"check"}, setup: writeTermsData,
			plan: termsEdit("south]}", "south, west], unobserved: drop}", "rules:", "inference: {predict: west.csv}\nrules:"), code: 1,
			want: []string{`T18.yaml: inference.predict: west.csv:5: column "site": level "west" occurs in no row the model was fitted to (its column was dropped: unobserved: drop), so the model has no effect of it` + "\n"}},
		{id: "T19", name: "an interaction of categorical predictors with a combination of levels no row has", args: []string{"check"}, setup: writeCellsData,
			plan: termsEdit("cat.csv", "cells.csv", "south]}\n", "south]}\n  grade: {levels: [lo, hi]}\n", "[site, x]", "[site, grade, x, {interact: [site, grade]}]"), code: 1,
			want: []string{`T19.yaml:7:30: predictors[3]: term "site&grade": its column "site.south&grade.hi" is 0 in every row used: no row used has site "south" with grade "hi", so the interaction cannot be estimated for every combination of levels; leave the interaction out, or merge levels or restrict the rows (subset) so that every combination has rows (data cells.csv, outcome "y")` + "\n"},
			check: func(t *testing.T, dir, out, errs string) {
				// The combination's rows all left out by the subset on
				// another column, or all of weight 0: said, with the count
				// and the plan key, as for a level (T6).
				cells := termsEdit("cat.csv", "cellskeep.csv", "south]}\n", "south]}\n  grade: {levels: [lo, hi]}\n", "[site, x]", "[site, grade, x, {interact: [site, grade]}]")
				for _, c := range []struct{ name, plan, why string }{
					{"subset", strings.Replace(cells, "predictors:", "subset:\n  - {column: keep, one_of: [\"yes\"]}\npredictors:", 1), "the subset (outside the subset keep in {yes}: 10; plan key subset[0])"},
					{"weights", strings.Replace(cells, "file: cellskeep.csv", "file: cellskeep.csv, weights: w", 1), "zero weight (w = 0: 10; plan key data.weights)"},
				} {
					pl := filepath.Join(dir, "T19"+c.name+".yaml")
					os.WriteFile(pl, []byte(c.plan), 0o644)
					want := `no row used has site "south" with grade "hi"; that combination occurs in 10 rows of the data, each dropped for ` + c.why + `, so the interaction cannot be estimated`
					if _, e, code := runCLI("check", pl); code != 1 || !strings.Contains(e, want) {
						t.Errorf("check, the combination lost to %s: exit %d, want %q in\n%s", c.name, code, want, e)
					}
				}
				args := fitArgs(filepath.Join(dir, "cellskeep.csv"), "--predictors", "site|levels=north/east/south,grade|levels=lo/hi,x,site&grade", "--weights", "w")
				want := `no row used has site "south" with grade "hi"; that combination occurs in 10 rows of the data, each dropped for zero weight (w = 0: 10), so`
				if _, e, code := runCLI(args...); code != 1 || !strings.Contains(e, want) {
					t.Errorf("fit, the combination of weight 0: exit %d, want %q in\n%s", code, want, e)
				}
			}},
		{id: "T20", name: "a level in the data written otherwise than the plan writes it (a number, another case)", args: []string{"check"}, setup: writeCodesData,
			plan: termsEdit("cat.csv", "codes.csv", "site: {levels: [north, east, south]}", "grade: {levels: [1, 2, 3]}", "[site, x]", "[grade, x]"), code: 1,
			want: []string{`codes.csv:4: column "grade": value "2.0" is not one of the declared levels of this categorical predictor: "1", "2", "3" (it is the level "2" written otherwise; a level is read only as the plan writes it: write the levels as the data do) (plan T20.yaml, outcome "y", plan key categorical.grade)` + "\n"},
			check: func(t *testing.T, dir, out, errs string) {
				p := filepath.Join(dir, "T20b.yaml")
				os.WriteFile(p, []byte(termsEdit("cat.csv", "sites.csv")), 0o644)
				_, e, code := runCLI("check", p)
				if want := `sites.csv:3: column "site": value "North" is not one of the declared levels of this categorical predictor: "north", "east", "south" (it is the level "north" written otherwise; a level is read only as the plan writes it: write the levels as the data do)`; code != 1 || !strings.Contains(e, want) {
					t.Errorf("a level in another case: exit %d\n%s\nwant %s", code, e, want)
				}
			}},
		{id: "P44", name: "level pairs of a categorical column with two levels", args: []string{"check", "--no-data"},
			plan: termsEdit("site: {levels: [north, east, south]}", "site: {levels: [north, east, south]}\n  side: {levels: [left, right]}", "[site, x]", "[site, side, x]", "rules:", "inference: {level_pairs: {predictors: [site, side]}}\nrules:"), code: 1,
			want: []string{`P44.yaml:10:46: inference.level_pairs.predictors[1]: "side" has 2 levels the rows used can have (left, right): its only pair is the level against the reference, which the marginal effects and odds ratios already give; level pairs need three or more levels` + "\n"}},
		{id: "T21", name: "level pairs of a categorical column the subset leaves two levels of", args: []string{"check", "--no-data"}, setup: writeTermsData,
			plan: termsEdit("predictors:", "subset:\n  - {column: site, none_of: [south]}\npredictors:", "south]}", "south], unobserved: drop}", "rules:", "inference: {level_pairs: {predictors: [site]}}\nrules:"), code: 1,
			want: []string{`T21.yaml:11:40: inference.level_pairs.predictors[0]: "site" has 2 levels the rows used can have (north, east; subset[0] leaves out "south"): its only pair is the level against the reference, which the marginal effects and odds ratios already give; level pairs need three or more levels` + "\n"}},
		{id: "T22", name: "level pairs of a categorical column whose rows have two of its levels (a level dropped: unobserved: drop)", args: []string{"run"},
			setup: func(t *testing.T, dir, _ string) {
				writeTermsData(t, dir, "")
				b, err := os.ReadFile(filepath.Join(dir, "cat.csv"))
				if err != nil {
					t.Fatal(err)
				}
				os.WriteFile(filepath.Join(dir, "nosouth.csv"), []byte(strings.ReplaceAll(string(b), ",south,", ",east,")), 0o644)
			},
			plan: termsEdit("cat.csv", "nosouth.csv", "south]}", "south], unobserved: drop}", "rules:", "inference: {level_pairs: {predictors: [site]}}\nrules:"), code: 0,
			want: []string{"y: chosen: cumulative/parallel/logit"},
			check: func(t *testing.T, dir, out, errs string) {
				b, err := os.ReadFile(filepath.Join(dir, "T22-out", "report.md"))
				want := `Not compared: the rows used have 2 of its levels (north, east), whose one pair is the comparison with the reference the marginal effects already give.`
				if err != nil || !strings.Contains(string(b), want) {
					t.Errorf("report.md does not say why site's levels are not compared (%v); want %q", err, want)
				}
			}},
		{id: "T24", name: "spline knots given as values outside the range of the rows used", args: []string{"check"}, setup: writeTermsData,
			plan: termsEdit("[site, x]", "[site, {name: xs, column: x, spline: {knots: [1, 2, 5]}}]"), code: 1,
			want: []string{`T24.yaml:6:20: predictors[1]: column "x": the knots [1, 2, 5] of spline term "xs" are not all within the range of the rows used, -0.5 to 3.5: knot 5 lies outside it: a knot beyond the data puts a bend of the curve where no row is, and can leave a basis column 0 in every row or a copy of the straight line; give knots from -0.5 to 3.5, or knots at quantiles of the data (data cat.csv, outcome "y")` + "\n"}},
		{id: "T24", name: "spline knots given as values outside the range of the rows used (ordplan fit)", setup: writeTermsData, code: 1,
			args: fitArgs(cat, "--predictors", "x|spline=4/5/6"),
			want: []string{`cat.csv: --predictors item 1: column "x": the knots [4, 5, 6] of spline term "x.spline" are not all within the range of the rows used, -0.5 to 3.5: knots 4, 5, 6 lie outside it`}},
		{id: "T25", name: "new rows to predict outside the population fitted: failing a subset condition, outside the dictionary's range, beyond the data (predicted, flagged)", args: []string{"run"},
			setup: func(t *testing.T, dir, _ string) {
				writeTermsData(t, dir, "")
				os.WriteFile(filepath.Join(dir, "far.csv"), []byte("id,site,x\nin,north,1\nbelow,east,-0.8\nfar,south,20\n"), 0o644)
			},
			plan: termsEdit("predictors:", "subset:\n  - {column: x, at_least: 0}\ndictionary:\n  site: {label: Site}\n  x: {range: [-1, 10]}\npredictors:", "rules:", "inference: {predict: far.csv}\nrules:"), code: 0,
			want: []string{"y: chosen: cumulative/parallel/logit"},
			check: func(t *testing.T, dir, out, errs string) {
				b, err := os.ReadFile(filepath.Join(dir, "T25-out", "predictions-y.csv"))
				if err != nil {
					t.Fatal(err)
				}
				lines := strings.Split(strings.TrimSpace(string(b)), "\n")
				if len(lines) != 4 || !strings.HasSuffix(lines[0], ",negative,outside,outside_why") {
					t.Fatalf("predictions-y.csv: want a header ending in outside,outside_why and 3 rows, got\n%s", b)
				}
				for i, want := range []string{
					",false,",
					`,true,"subset[0]: fails the plan's subset condition x >= 0 (x is -0.8); extrapolation: x -0.8 is beyond the range of the rows the model was fitted to, 0.507 to 3.5"`,
					`,true,"dictionary.x: x 20 is outside the declared range [-1, 10]; extrapolation: x 20 is beyond the range of the rows the model was fitted to, 0.507 to 3.5"`,
				} {
					if !strings.Contains(lines[i+1], want) {
						t.Errorf("predictions-y.csv row %d: want %q in\n%s", i+1, want, lines[i+1])
					}
				}
				if !strings.HasSuffix(lines[1], ",false,false,") {
					t.Errorf("the row inside is flagged: %s", lines[1])
				}
				rep, err := os.ReadFile(filepath.Join(dir, "T25-out", "report.md"))
				if want := "**Outside the population fitted:** 2 of the 3 rows lie outside the population the model was fitted to. They are predicted all the same"; err != nil || !strings.Contains(string(rep), want) {
					t.Errorf("report.md does not flag the rows outside (%v); want %q", err, want)
				}
				dec, err := os.ReadFile(filepath.Join(dir, "T25-out", "decisions.json"))
				if want := `"new_rows_outside": [`; err != nil || !strings.Contains(string(dec), want) || !strings.Contains(string(dec), `"line": 4,`) {
					t.Errorf("decisions.json does not list the rows outside (%v)", err)
				}
			}},
		{id: "T29", name: "a new row to predict that a term cannot be computed for (log of 0): that row not predicted, the others are", args: []string{"run"},
			setup: func(t *testing.T, dir, _ string) {
				writeTermsData(t, dir, "")
				os.WriteFile(filepath.Join(dir, "zero.csv"), []byte("id,site,x\nok,north,1\nzero,east,0\n"), 0o644)
			},
			plan: termsEdit("predictors:", "subset:\n  - {column: x, at_least: 0}\npredictors:", "[site, x]", "[site, {name: lx, column: x, log: {shift: 0}}]", "rules:", "inference: {predict: zero.csv}\nrules:"), code: 0,
			want: []string{"y: chosen: cumulative/parallel/logit"},
			check: func(t *testing.T, dir, out, errs string) {
				plan := filepath.Join(dir, "T29.yaml")
				_, e, code := runCLI("check", plan)
				if want := "warning: " + plan + `: outcome y: inference.predict: zero.csv:3: column "x": log(0) is undefined: the value is not positive: this row will not be predicted (the other rows will be)` + "\n"; code != 0 || !strings.Contains(e, want) {
					t.Errorf("check: exit %d, want the warning %q in\n%s", code, want, e)
				}
				b, err := os.ReadFile(filepath.Join(dir, "T29-out", "predictions-y.csv"))
				if err != nil {
					t.Fatal(err)
				}
				lines := strings.Split(strings.TrimSpace(string(b)), "\n")
				if len(lines) != 3 || !strings.HasPrefix(lines[1], "2,ok,north,1,0.") || !strings.HasSuffix(lines[1], ",false,false,") {
					t.Fatalf("predictions-y.csv: want the row ok predicted, got\n%s", b)
				}
				if want := `,,true,"not predicted: column ""x"": log(0) is undefined: the value is not positive; extrapolation: x 0 is beyond the range of the rows the model was fitted to, 0.507 to 3.5"`; !strings.HasPrefix(lines[2], "3,zero,east,0,,,") || !strings.HasSuffix(lines[2], want) {
					t.Errorf("predictions-y.csv: the row zero, want empty predictions ending in %s, got\n%s", want, lines[2])
				}
				if recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll(); err != nil || len(recs[2]) != len(recs[0]) {
					t.Errorf("predictions-y.csv: the row zero has not the header's columns (%v)", err)
				}
				rep, err := os.ReadFile(filepath.Join(dir, "T29-out", "report.md"))
				for _, want := range []string{"**Not predicted:** 1 of the 2 rows is not predicted: a term of the model cannot be computed for it", `| 3 | column "x": log(0) is undefined: the value is not positive |`} {
					if err != nil || !strings.Contains(string(rep), want) {
						t.Errorf("report.md (%v): want %q", err, want)
					}
				}
				dec, err := os.ReadFile(filepath.Join(dir, "T29-out", "decisions.json"))
				if want := `"new_rows_not_predicted": [`; err != nil || !strings.Contains(string(dec), want) {
					t.Errorf("decisions.json does not list the row not predicted (%v)", err)
				}
			}},
		{id: "T32", name: "a subset value that is a default missing-value marker (one_of: [NA])", args: []string{"check", "--no-data"}, setup: writeTermsData,
			plan: termsEdit("predictors:", "subset:\n  - {column: site, one_of: [north, east, south, NA]}\npredictors:"), code: 1,
			want: []string{`T32.yaml:7:49: subset[0].one_of[3]: value "NA" of column "site" matches no cell: a condition does not compare a missing cell, and "NA" is also one of the default missing-value markers "", "NA", "NaN", ".", in force while data.missing_values is not set: every cell "NA" is read as missing, never as this value; set data.missing_values to the markers the data use, without "NA", such as ["", "NaN", "."], or recode the value in the data` + "\n"}},
		{id: "T32", name: "a subset number that is a column's own missing-value code, written otherwise (equal_to: -9.0, code -9)", args: []string{"run"}, setup: writeTermsData,
			plan: termsEdit("data: {file: cat.csv}", "data: {file: cat.csv, missing_values: [\"\"]}", "predictors:", "subset:\n  - {column: x, equal_to: -9.0}\npredictors:", "rules:", "dictionary:\n  x: {missing: [\"-9\"]}\n  site: {}\nrules:"), code: 1,
			want: []string{`subset[0].equal_to: value "-9" of column "x" matches no cell: a condition does not compare a missing cell, and "-9" is also one of the column's own missing-value codes (dictionary.x.missing): every cell "-9" is read as missing, never as this value; remove it from dictionary.x.missing, or recode the value in the data`}},
		{id: "T32", name: "a subset that leaves out a value that is a missing-value marker (none_of: [\"-\"], \"-\" in data.missing_values)", args: []string{"check", "--no-data"}, setup: writeTermsData,
			plan: termsEdit("data: {file: cat.csv}", "data: {file: cat.csv, missing_values: [\"\", \"-\"]}", "predictors:", "subset:\n  - {column: site, none_of: [\"-\"]}\npredictors:"), code: 1,
			want: []string{`subset[0].none_of[0]: value "-" of column "site" matches no cell: a condition does not compare a missing cell, and "-" is also a missing-value marker in data.missing_values: every cell "-" is read as missing, never as this value; remove it from data.missing_values ([""]), or recode the value in the data; a row whose site is missing is left out anyway, as a row with a missing value: if that is what the condition is for, remove the value from it`}},
		{id: "T30", name: "a profile that a term cannot be computed at (log of 0): warned by check and run, its effects not computed", args: []string{"run"}, setup: writeTermsData,
			plan: termsEdit("predictors:", "subset:\n  - {column: x, at_least: 0}\npredictors:", "[site, x]", "[site, {name: lx, column: x, log: {shift: 0}}]", "rules:", "inference: {marginal_effects: [profile], profile: {x: 0}}\nrules:"), code: 0,
			want: []string{"y: chosen: cumulative/parallel/logit"},
			check: func(t *testing.T, dir, out, errs string) {
				plan := filepath.Join(dir, "T30.yaml")
				want := "warning: " + plan + `: outcome y: inference.profile: column "x": log(0) is undefined: the value is not positive: the marginal effects and pairs of levels at the profile cannot be computed (the report says "Not computed"); set the profile to a value every term can take` + "\n"
				if !strings.Contains(errs, want) {
					t.Errorf("run: want the warning %q in\n%s", want, errs)
				}
				if _, e, code := runCLI("check", plan); code != 0 || !strings.Contains(e, want) {
					t.Errorf("check: exit %d, want the warning %q in\n%s", code, want, e)
				}
				rep, err := os.ReadFile(filepath.Join(dir, "T30-out", "report.md"))
				if w := `Not computed: column "x": log(0) is undefined`; err != nil || !strings.Contains(string(rep), w) {
					t.Errorf("report.md (%v): want %q", err, w)
				}
			}},
		{id: "T34", name: "a term named as a parameter of the models (tau, tau[1], b[1] beside a nonparallel b)", args: []string{"check"}, setup: writeTermsData,
			plan: termsEdit("[site, x]", "[site, {name: tau, column: x}]", "[parallel]", "[parallel, nonparallel]"), code: 1,
			want: []string{`T34.yaml:6:20: predictors[1]: term name "tau" cannot be used: "tau" is the name of the thresholds (tau[1], tau[2], ...): the column's nonparallel slopes would have their names; give the term another name: {name: NAME, column: x}` + "\n"},
			check: func(t *testing.T, dir, out, errs string) {
				cat := filepath.Join(dir, "cat.csv")
				// Without the data too: a registered plan must be able to run.
				if _, e, code := runCLI("check", "--no-data", filepath.Join(dir, "T34.yaml")); code != 1 || !strings.Contains(e, `predictors[1]: term name "tau" cannot be used`) {
					t.Errorf("check --no-data: exit %d\n%s", code, e)
				}
				// A categorical column phi makes the columns phi.LEVEL, the names of
				// the common factors of a group LEVEL: refused where the design is built.
				phi := strings.Replace(strings.Replace(termsPlan, "site: {levels", "phi: {levels", 1), "[site, x]", "[phi, x]", 1)
				os.WriteFile(filepath.Join(dir, "T34phi.yaml"), []byte(strings.Replace(phi, "cat.csv", "phi.csv", 1)), 0o644)
				b, _ := os.ReadFile(cat)
				os.WriteFile(filepath.Join(dir, "phi.csv"), []byte(strings.Replace(string(b), "y,site,x", "y,phi,x", 1)), 0o644)
				if _, e, code := runCLI("check", filepath.Join(dir, "T34phi.yaml")); code != 1 || !strings.Contains(e, `predictors[0]: design column "phi.east" cannot be made: "phi.east" is the name of the common factors of constrained models (phi.east[2], phi.east[3], ...)`) {
					t.Errorf("a categorical column phi: exit %d\n%s", code, e)
				}
				for _, c := range []struct{ preds, want string }{
					{"x|as=tau,site|levels=north/east/south", `--predictors item 1: design column "tau" cannot be made: "tau" is the name of the thresholds`},
					{"x|as=tau[1]", `--predictors item 1: design column "tau[1]" cannot be made: "tau[1]" has the form NAME[m] of the models' per-boundary parameters`},
					{"x|as=site[1],site|levels=north/east/south|as=site", `--predictors item 1: design column "site[1]" cannot be made`},
					{"x|as=phi.g", `--predictors item 1: design column "phi.g" cannot be made: "phi.g" is the name of the common factors`},
				} {
					_, e, code := runCLI(fitArgs(cat, "--predictors", c.preds, "--nonparallel", strings.SplitN(strings.SplitN(c.preds, "as=", 2)[1], ",", 2)[0])...)
					if code != 1 || !strings.Contains(e, c.want) {
						t.Errorf("fit --predictors %s: exit %d, want %q in\n%s", c.preds, code, c.want, e)
					}
				}
			}},
		{id: "T35", name: "ordplan fit --predictors: an option given a value it does not take, or given twice, or a number that is not finite", setup: writeTermsData, code: 1,
			args: fitArgs(cat, "--predictors", "x|scale=2"),
			want: []string{`--predictors: predictor 1 ("x|scale=2"): |scale=2: unknown scale "2" (want sd: |scale divides by the sample SD; to divide by another number, transform the column before)` + "\n"},
			check: func(t *testing.T, dir, out, errs string) {
				for item, want := range map[string]string{
					"x|scale=0":                            `|scale=0: unknown scale "0" (want sd`,
					"site|levels=north/east/south|drop=no": `|drop takes no value, got |drop=no (write |drop)`,
					"x|log+1=10":                           `|log+1 takes no value, got |log+1=10 (write |log+1)`,
					"x|sqrt=5":                             `|sqrt takes no value, got |sqrt=5 (write |sqrt)`,
					"x|log+5|log+5":                        `|log is given twice (|log+5 and |log+5): give each option once`,
					"x|polynomial=2|polynomial=3":          `|polynomial is given twice (|polynomial=2 and |polynomial=3): give each option once`,
					"x|centre=mean|centre=1":               `|centre is given twice (|centre=mean and |centre=1): give each option once`,
					"x|centre=NaN":                         `centre=NaN: want mean or a finite number`,
					"x|log+NaN":                            `bad shift in "log+NaN": "NaN" is not a finite number (want log+NUMBER or log-NUMBER)`,
					"x|spline=1/Inf/3":                     `spline=1/Inf/3: "Inf" is not a finite number`,
				} {
					_, e, code := runCLI(fitArgs(filepath.Join(dir, "cat.csv"), "--predictors", item)...)
					if code != 1 || !strings.Contains(e, fmt.Sprintf("predictor 1 (%q): ", item)+want) {
						t.Errorf("--predictors %s: exit %d, want %q in\n%s", item, code, want, e)
					}
				}
				if _, e, code := runCLI(fitArgs(filepath.Join(dir, "cat.csv"), "--predictors", "x|scale=sd")...); code != 0 {
					t.Errorf("|scale=sd, the plan's word: exit %d\n%s", code, e)
				}
			}},
		{id: "T36", name: "a number written with a Unicode minus sign (U+2212)", code: 1,
			setup: func(t *testing.T, dir, id string) {
				writeTermsData(t, dir, id)
				b, err := os.ReadFile(filepath.Join(dir, "cat.csv"))
				if err != nil {
					t.Fatal(err)
				}
				os.WriteFile(filepath.Join(dir, "minus.csv"), []byte(strings.Replace(string(b), ",-0.5", ",\u22120.5", 1)), 0o644)
			},
			args: fitArgs(filepath.Join(dir, "minus.csv"), "--predictors", "x"),
			want: []string{`minus.csv:7: column "x": value "` + "\u2212" + `0.500" is not a number; it holds the character U+2212 (MINUS SIGN) where a number has the ASCII hyphen-minus "-": write it -0.500 (a word processor or a typeset table may have replaced the sign)` + "\n"}},
		{id: "W23", name: "a profile outside the population fitted: failing a subset condition, beyond the data (warned, flagged beside its tables)", args: []string{"run"}, setup: writeTermsData,
			plan: termsEdit("predictors:", "subset:\n  - {column: x, at_least: 0}\npredictors:", "rules:", "inference: {marginal_effects: [profile], profile: {x: -0.25}, level_pairs: {predictors: [site]}}\nrules:"), code: 0,
			want: []string{"y: chosen: cumulative/parallel/logit"},
			check: func(t *testing.T, dir, out, errs string) {
				plan := filepath.Join(dir, "W23.yaml")
				why := `subset[0]: fails the plan's subset condition x >= 0 (x is -0.25); extrapolation: x -0.25 is beyond the range of the rows the model was fitted to, 0.507 to 3.5`
				want := "warning: " + plan + `: outcome y: inference.profile lies outside the population the model is fitted to (` + why + `): the marginal effects and pairs of levels at the profile rest there on the model's form alone, and their intervals do not show it` + "\n"
				if !strings.Contains(errs, want) {
					t.Errorf("run: want the warning %q in\n%s", want, errs)
				}
				if _, e, code := runCLI("check", plan); code != 0 || !strings.Contains(e, want) {
					t.Errorf("check: exit %d, want the warning %q in\n%s", code, want, e)
				}
				if _, e, code := runCLI("check", "--no-data", plan); code != 0 || strings.Contains(e, "inference.profile lies outside") {
					t.Errorf("check --no-data: exit %d, a warning it cannot make without the data:\n%s", code, e)
				}
				rep, err := os.ReadFile(filepath.Join(dir, "W23-out", "report.md"))
				note := "**Outside the population fitted:** the plan's profile lies outside the population the model was fitted to: " + strings.ReplaceAll(why, "]", `\]`) + ". The %s at it rest there on the model's form alone"
				for _, w := range []string{fmt.Sprintf(note, "effects"), fmt.Sprintf(note, "differences")} {
					if err != nil || !strings.Contains(string(rep), w) {
						t.Errorf("report.md (%v): want %q", err, w)
					}
				}
				dec, err := os.ReadFile(filepath.Join(dir, "W23-out", "decisions.json"))
				if w := `"profile_outside": [`; err != nil || !strings.Contains(string(dec), w) {
					t.Errorf("decisions.json (%v): want %s", err, w)
				}
				// The CSV of the marginal effects flags the profile's rows
				// too (column at_outside).
				profileFlag(t, filepath.Join(dir, "W23-out", "table-marginal-effects-y.csv"), "true")
			}},
		{id: "T26", name: "pairs of levels at a profile that gives no level of another categorical predictor (warned, held at its reference level)", args: []string{"run"}, setup: writeCellsData,
			plan: termsEdit("cat.csv", "cells.csv", "south]}\n", "south]}\n  grade: {levels: [lo, hi]}\n", "[site, x]", "[site, grade, x]", "rules:", "inference: {marginal_effects: [profile], profile: {x: 3}, level_pairs: {predictors: [site]}}\nrules:"), code: 0,
			want: []string{"y: chosen: cumulative/parallel/logit"},
			check: func(t *testing.T, dir, out, errs string) {
				if want := "warning: " + filepath.Join(dir, "T26.yaml") + `: inference.profile gives no level of grade, a categorical predictor: the pairs of levels of site at the profile (inference.level_pairs) hold it at its reference level lo, as the marginal effects at the profile do (they can differ at its other levels); give grade the level meant in inference.profile` + "\n"; !strings.Contains(errs, want) {
					t.Errorf("run does not warn of the level the profile leaves unstated; got\n%s\nwant %s", errs, want)
				}
				if _, e, code := runCLI("check", "--no-data", filepath.Join(dir, "T26.yaml")); code != 0 || !strings.Contains(e, "inference.profile gives no level of grade") {
					t.Errorf("check: exit %d, no warning:\n%s", code, e)
				}
				b, err := os.ReadFile(filepath.Join(dir, "T26-out", "report.md"))
				for _, want := range []string{"(categorical ones at their reference level): grade = lo, x = 3.", "The profile gives no level of grade: each is held at its reference level (as listed), and the differences can be different at its other levels."} {
					if err != nil || !strings.Contains(string(b), want) {
						t.Errorf("report.md does not say where the pairs at the profile hold grade (%v); want %q", err, want)
					}
				}
			}},
		{id: "T27", name: "pairs of levels at a profile that gives the paired column a level (not used: each pair sets its two levels)", args: []string{"run"}, setup: writeTermsData,
			plan: termsEdit("rules:", "inference: {marginal_effects: [profile], profile: {site: east, x: 2}, level_pairs: {predictors: [site]}}\nrules:"), code: 0,
			want: []string{"y: chosen: cumulative/parallel/logit"},
			check: func(t *testing.T, dir, out, errs string) {
				if strings.Contains(errs, "warning") {
					t.Errorf("a warning where the profile states every column:\n%s", errs)
				}
				b, err := os.ReadFile(filepath.Join(dir, "T27-out", "report.md"))
				want := "The profile's own level of site (east) is not used here: each pair sets site to its two levels."
				if err != nil || !strings.Contains(string(b), want) || !strings.Contains(string(b), "(categorical ones at their reference level): x = 2.") {
					t.Errorf("report.md does not say the profile's level of site is not used (%v); want %q", err, want)
				}
				profileFlag(t, filepath.Join(dir, "T27-out", "table-marginal-effects-y.csv"), "false")
			}},
		{id: "T14", name: "a subset that leaves out a declared level", args: []string{"check", "--no-data"}, setup: writeTermsData,
			plan: termsEdit("predictors:", "subset:\n  - {column: site, none_of: [south]}\npredictors:"), code: 1,
			want: []string{`T14.yaml:7:5: subset[0]: leaves out the rows of level "south" of site, which categorical.site declares: no row used has it, so its column cannot be estimated; remove the level from categorical.site.levels (rows outside the subset may keep it) or set categorical.site.unobserved: drop` + "\n"}},
	}
}

// profileFlag checks that every row of a marginal-effects CSV (a run whose
// only effects are at the profile) has column at_outside, its last, set to
// want: "true" where the profile lies outside the population fitted.
func profileFlag(t *testing.T, path, want string) {
	t.Helper()
	me, err := os.ReadFile(path)
	lines := strings.Split(strings.TrimSpace(string(me)), "\n")
	if err != nil || len(lines) < 2 || !strings.HasSuffix(lines[0], ",at,at_outside") {
		t.Fatalf("%s (%v): header %q", path, err, lines[0])
	}
	for _, l := range lines[1:] {
		if !strings.HasPrefix(l, "profile,") || !strings.HasSuffix(l, ","+want) {
			t.Errorf("%s: a row at the profile whose at_outside is not %s: %s", path, want, l)
		}
	}
}
