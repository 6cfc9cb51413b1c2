package render

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
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
