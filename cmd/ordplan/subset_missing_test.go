package main

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// subsetMissingPlan analyses y on x and age among adults (subset age >=
// 18); age has its own missing code -9 besides the plan's NA.
const subsetMissingPlan = `version: 1
seed: 7
data:
  file: data.csv
  missing: %s
outcomes:
  - column: y
    categories: ["1", "2", "3"]
subset:
  - {column: age, at_least: 18}
predictors: [x, age]
dictionary:
  x: {label: Score}
  age: {range: [0, 100], missing: ["-9"]}
models: {approaches: [cumulative], effects: [parallel], links: [logit]}
rules:
  - choose: {by: bic}
`

// subsetMissingData writes 300 invented rows (seed 11): x standard normal,
// age uniform on 10..69, y from a cumulative logit in x; then age is
// missing on every 13th row (NA), every 17th (-9) and every 19th (-9.0,
// the code written otherwise), y on every 23rd and x on every 29th. It
// returns the counts a reader of the rows makes by hand: rows outside
// (age present and under 18), rows whose age is missing, and of the rows
// that meet the condition those missing y or x, and of these those
// missing y (the first column read).
func subsetMissingData(t *testing.T, path string) (outside, unknown, met, incomplete, missY int) {
	rng := rand.New(rand.NewPCG(11, 0))
	var b strings.Builder
	b.WriteString("y,x,age\n")
	for i := 1; i <= 300; i++ {
		x := rng.NormFloat64()
		age := 10 + rng.IntN(60)
		u := rng.Float64()
		p1, p2 := 1/(1+math.Exp(-(-0.5-x))), 1/(1+math.Exp(-(0.8-x)))
		y := "3"
		switch {
		case u < p1:
			y = "1"
		case u < p2:
			y = "2"
		}
		xs, as := fmt.Sprintf("%.4f", x), fmt.Sprint(age)
		switch {
		case i%13 == 0:
			as = "NA"
		case i%17 == 0:
			as = "-9"
		case i%19 == 0:
			as = "-9.0"
		}
		if i%23 == 0 {
			y = "NA"
		}
		if i%29 == 0 {
			xs = "NA"
		}
		fmt.Fprintf(&b, "%s,%s,%s\n", y, xs, as)
		switch {
		case i%13 == 0 || i%17 == 0 || i%19 == 0:
			unknown++
		case age < 18:
			outside++
		default:
			met++
			if i%23 == 0 || i%29 == 0 {
				incomplete++
			}
			if i%23 == 0 {
				missY++
			}
		}
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return
}

// A row whose subset column is missing (NA, the column's code -9, or -9.0)
// is counted as a row with a missing value in that column, not as outside
// the subset: in the summary line, the missing-value table, the methods
// text and decisions.json, with the counts of the rows made. With
// data.missing: impute such rows are dropped, not imputed, and the report
// says why.
func TestSubsetColumnMissing(t *testing.T) {
	dir := t.TempDir()
	outside, unknown, met, incomplete, missY := subsetMissingData(t, filepath.Join(dir, "data.csv"))
	if outside == 0 || unknown == 0 || incomplete == 0 {
		t.Fatalf("the data lack a case: outside %d, unknown %d, incomplete %d", outside, unknown, incomplete)
	}
	for _, mode := range []string{"drop", "impute"} {
		plan := filepath.Join(dir, mode+".yaml")
		if err := os.WriteFile(plan, []byte(fmt.Sprintf(subsetMissingPlan, map[string]string{"drop": "drop", "impute": "impute\n  imputation: {sets: 3, iterations: 3}"}[mode])), 0o644); err != nil {
			t.Fatal(err)
		}
		out := filepath.Join(dir, mode)
		if _, errs, code := runCLI("run", plan, "--quiet", "--out", out); code != 0 {
			t.Fatalf("%s: exit %d: %s", mode, code, errs)
		}
		md, _ := os.ReadFile(filepath.Join(out, "report.md"))
		used := met - incomplete
		wantUsed := fmt.Sprintf("Of the %d rows that met the conditions, %d were used and %d were dropped before any model was fitted for missing values (each row counted under the first used column it misses: y %d, x %d).", met, used, incomplete, missY, incomplete-missY)
		notImputed := ""
		if mode == "impute" {
			used = met
			wantUsed = fmt.Sprintf("All %d rows that met the conditions were used.", met)
			notImputed = " and not imputed: an imputed value would put a row inside the subset in some imputed sets and outside it in others"
		}
		for _, want := range []string{
			fmt.Sprintf("Of 300 rows, %d met the plan's subset conditions (age >= 18), %d failed them and %d could not be judged because they miss a column the conditions read (%d miss age). The %d rows whose membership of the subset is unknown were dropped as rows with missing values%s. %s",
				met, outside, unknown, unknown, unknown, notImputed, wantUsed),
			fmt.Sprintf("among them, rows that miss a column the subset's conditions read, so that whether they belong to the subset is unknown: %d (counted as missing values, not as outside the subset)", unknown),
			fmt.Sprintf("outside the subset age >= 18: %d; a row with several of these is counted once, under the first)", outside),
		} {
			if !strings.Contains(string(md), want) {
				t.Errorf("%s: report.md lacks %q", mode, want)
			}
		}
		if mode == "impute" {
			want := fmt.Sprintf("%d of them miss a column that imputation does not fill (weights, offset, cluster, or a column the subset's conditions read, without which whether the row belongs to the subset is unknown) and were dropped whole, as a complete-case analysis drops them (see Assumptions and limits), the %d others were imputed", unknown, incomplete)
			if !strings.Contains(string(md), want) {
				t.Errorf("impute: report.md lacks %q", want)
			}
		}
		tab, _ := os.ReadFile(filepath.Join(out, "table-missing-y.csv"))
		if want := fmt.Sprintf("\nage,all,%d,%d,", met+unknown, unknown); !strings.Contains(string(tab), want) {
			t.Errorf("%s: table-missing-y.csv lacks %q:\n%s", mode, want, tab)
		}
		var dec struct {
			Outcomes []struct {
				RowsUsed    int `json:"rows_used"`
				RowsUnknown int `json:"rows_subset_unknown"`
				Dropped     []struct {
					Column string `json:"column"`
					Rows   int    `json:"rows"`
					Subset bool   `json:"subset"`
				} `json:"rows_dropped"`
			} `json:"outcomes"`
		}
		b, err := os.ReadFile(filepath.Join(out, "decisions.json"))
		if err != nil || json.Unmarshal(b, &dec) != nil {
			t.Fatalf("%s: decisions.json: %v", mode, err)
		}
		o := dec.Outcomes[0]
		byCol := map[string]int{}
		sum := 0
		for _, d := range o.Dropped {
			byCol[d.Column] = d.Rows
			sum += d.Rows
		}
		if o.RowsUsed != used || byCol["outside the subset age >= 18"] != outside || sum != 300-used || o.RowsUnknown != unknown {
			t.Errorf("%s: decisions.json: used %d, dropped %v, subset unknown %d; want used %d, %d outside, %d dropped in all, %d unknown", mode, o.RowsUsed, o.Dropped, o.RowsUnknown, used, outside, 300-used, unknown)
		}
	}
}
