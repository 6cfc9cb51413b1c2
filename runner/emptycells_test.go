package runner

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// An interaction of two categorical predictors in which a combination of
// levels has no row cannot be estimated for that combination: R's
// model.matrix(~ reg * grade) on such data has a column of zeros (the
// combination's product) when the empty cell is at non-reference levels,
// and a column that is a linear combination of the others when it is at a
// reference level (lm reports the coefficient NA, aliased). The message
// names the term, its plan place and the empty combination, not merely a
// design column to remove (which no plan key can remove alone).
func TestEmptyInteractionCell(t *testing.T) {
	write := func(dir string, skip func(reg, grade string) bool) {
		var b strings.Builder
		b.WriteString("y,reg,grade,x,site,z\n")
		regs, grades := []string{"n", "s", "e"}, []string{"lo", "hi"}
		for i := 0; i < 240; i++ {
			reg, grade := regs[i%3], grades[(i/3)%2]
			if skip(reg, grade) {
				grade = "lo"
			}
			fmt.Fprintf(&b, "%d,%s,%s,%d,%s,%d\n", 1+(i*7+i/5)%3, reg, grade, i%9, []string{"a", "b"}[i/120], 1-i/120)
		}
		if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	const src = `version: 1
data: {file: d.csv}
outcomes: [{column: y}]
categorical:
  reg: {levels: [n, s, e]}
  grade: {levels: [lo, hi]}
predictors: [reg, grade, x, {interact: [reg, grade]}]
models: {approaches: [cumulative], effects: [parallel]}
rules:
  - choose: {by: bic}
`
	cases := []struct {
		name  string
		empty func(reg, grade string) bool
		want  string
	}{
		{"a combination of non-reference levels", func(r, g string) bool { return r == "e" && g == "hi" },
			`p.yaml:7:29: predictors[3]: term "reg&grade": its column "reg.e&grade.hi" is 0 in every row used: no row used has reg "e" with grade "hi", so the interaction cannot be estimated for every combination of levels; leave the interaction out, or merge levels or restrict the rows (subset) so that every combination has rows (data d.csv, outcome "y")`},
		{"a combination with a reference level", func(r, g string) bool { return r == "n" && g == "hi" },
			`p.yaml:7:29: predictors[3]: term "reg&grade" is collinear with term "grade" (p.yaml:7:19) and the constant: its column "reg.e&grade.hi" is a linear combination of "grade.hi", "reg.s&grade.hi" and the constant: no row used has reg "n" with grade "hi", so the interaction cannot be estimated for every combination of levels; leave the interaction out, or merge levels or restrict the rows (subset) so that every combination has rows (data d.csv, outcome "y")`},
		{"two empty combinations", func(r, g string) bool { return r != "n" && g == "hi" },
			`p.yaml:7:29: predictors[3]: term "reg&grade": its column "reg.s&grade.hi" is 0 in every row used: no row used has reg "s" with grade "hi", nor reg "e" with grade "hi", so the interaction cannot be estimated`},
	}
	for _, c := range cases {
		dir := t.TempDir()
		write(dir, c.empty)
		_, err := CheckData(planIn(t, dir, src))
		if err == nil || !strings.Contains(strings.ReplaceAll(err.Error(), dir+string(filepath.Separator), ""), c.want) {
			t.Errorf("%s: got\n%v\nwant\n%s", c.name, err, c.want)
		}
	}
	// A term constant in the rows used (a subset keeps one value) is
	// named at its plan place.
	dir := t.TempDir()
	write(dir, func(string, string) bool { return false })
	_, err := CheckData(planIn(t, dir, strings.Replace(src, "predictors: [reg, grade, x,", "subset: [{column: site, one_of: [a]}]\npredictors: [reg, grade, x, z,", 1)))
	want := `p.yaml:8:29: predictors[3]: term "z" is constant (every row used has 1): it cannot be estimated alongside the cutpoints; remove it (data d.csv, outcome "y")`
	if err == nil || !strings.Contains(strings.ReplaceAll(err.Error(), dir+string(filepath.Separator), ""), want) {
		t.Errorf("constant term: got\n%v\nwant\n%s", err, want)
	}
}
