package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// The table of missing-value patterns says what its x marks in words that
// a predictor named x cannot be taken for: "missing together (x)" read as
// the column x.
func TestMissingPatternsMarkWords(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("y,arm,x\n")
	for i := range 60 {
		arm := strconv.Itoa(i % 2)
		if i == 5 {
			arm = ""
		}
		fmt.Fprintf(&b, "%d,%s,%d\n", 1+(i*7+i%11)%3, arm, i%11)
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
	planPath := filepath.Join(dir, "p.yaml")
	os.WriteFile(planPath, []byte("version: 1\ndata: {file: d.csv}\noutcomes: [{column: y}]\npredictors: [arm, x]\n"+
		"models: {approaches: [cumulative], effects: [parallel]}\nrules:\n  - reject_unconverged: true\n  - choose: {by: aic}\n"), 0o644)
	out := filepath.Join(dir, "out")
	if o, errs, code := runCLI("run", planPath, "--out", out, "--quiet"); code != 0 {
		t.Fatalf("exit %d: %s %s", code, o, errs)
	}
	md, err := os.ReadFile(filepath.Join(out, "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	report := string(md)
	if !strings.Contains(report, "an x in a column's cell marks that column missing in those rows") || strings.Contains(report, "missing together (x)") {
		t.Errorf("report.md does not say what the patterns' x marks")
	}
	if !strings.Contains(report, "| 1 | 1.7% |  | x |  |") {
		t.Errorf("report.md lacks the pattern of the row missing arm")
	}
}
