package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// imputedIncomplete writes inc.csv: d.csv with column a empty in every
// row whose outcome is 3 or whose b is 1, so that category 3 and level 1
// of b occur in no complete row; and imp-inc.csv, two stacked imputed
// sets of it, a filled in (0.1 in set 1, 0.2 in set 2), every other value
// as the data file has it. run fits the sets' 120 rows, never inc.csv's
// complete ones.
func imputedIncomplete(t *testing.T, dir, id string) {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(dir, "d.csv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	inc := []string{lines[0]}
	stack := "imp," + lines[0] + "\n"
	for k := 1; k <= 2; k++ {
		for _, l := range lines[1:] {
			f := strings.Split(l, ",")
			if f[0] == "3" || f[2] == "1" {
				f[1] = fmt.Sprintf("0.%d", k)
			}
			stack += fmt.Sprintf("%d,%s\n", k, strings.Join(f, ","))
		}
	}
	for _, l := range lines[1:] {
		f := strings.Split(l, ",")
		if f[0] == "3" || f[2] == "1" {
			f[1] = ""
		}
		inc = append(inc, strings.Join(f, ","))
	}
	os.WriteFile(filepath.Join(dir, "inc.csv"), []byte(strings.Join(inc, "\n")+"\n"), 0o644)
	os.WriteFile(filepath.Join(dir, "imp-inc.csv"), []byte(stack), 0o644)
}

// imputedIncompletePlan is the plan of imputedIncomplete's files: the
// outcome's categories declared (cats), b categorical.
func imputedIncompletePlan(cats string) string {
	return edit("  file: d.csv\n", "  file: inc.csv\n  imputed: {file: imp-inc.csv, column: imp}\n",
		"column: y", "column: y\n    categories: "+cats,
		"predictors:", "categorical:\n  b: {levels: [\"0\", \"1\"]}\npredictors:")
}
