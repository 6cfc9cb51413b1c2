package main

import (
	"fmt"
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
	planPath := writeStudy(t, dir, b.String(), "version: 1\ndata: {file: d.csv}\noutcomes: [{column: y}]\npredictors: [arm, x]\n"+
		"models: {approaches: [cumulative], effects: [parallel]}\nrules:\n  - reject_unconverged: true\n  - choose: {by: aic}\n")
	report := runReport(t, planPath, filepath.Join(dir, "out"))
	if !strings.Contains(report, "an x in a column's cell marks that column missing in those rows") || strings.Contains(report, "missing together (x)") {
		t.Errorf("report.md does not say what the patterns' x marks")
	}
	if !strings.Contains(report, "| 1 | 1.7% |  | x |  |") {
		t.Errorf("report.md lacks the pattern of the row missing arm")
	}
}
