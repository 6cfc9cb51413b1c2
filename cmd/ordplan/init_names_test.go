package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// ordplan init on a workbook whose header cell wraps onto two lines
// ("Age\n(years)", typed with a line break) writes a plan that reads (the
// name quoted in its comment, where it broke the comment into a line the
// plan's reader refused), describes the column as needing a name on one
// line and proposes it as no predictor; a plan or fit naming it on one
// line is told what the file calls it.
func TestInitNameWithLineBreak(t *testing.T) {
	dir := t.TempDir()
	rows := [][]any{{"y", "Age\n(years)", "x"}}
	for i := 0; i < 24; i++ {
		rows = append(rows, []any{1 + i%3, 20 + i%9, float64(i%5) / 4})
	}
	data := filepath.Join(dir, "n.xlsx")
	if err := os.WriteFile(data, bookOf(t, rows, nil), 0o644); err != nil {
		t.Fatal(err)
	}
	plan := filepath.Join(dir, "n.yaml")
	if _, errs, code := runCLI("init", plan, "--data", data); code != 0 {
		t.Fatal(errs)
	}
	text, err := os.ReadFile(plan)
	if err != nil {
		t.Fatal(err)
	}
	hasEach(t, string(text), `#   "Age\n(years)"  its name holds a line break (or another control character), which a plan cannot write: rename the column in the file, on one line, to use it`+"\n", "predictors: [x]\n")
	if _, errs, code := runCLI("check", plan); code != 0 {
		t.Errorf("check of the plan init wrote: exit %d\n%s\n%s", code, errs, text)
	}
	_, errs, code := runCLI(fitArgs(data, "--predictors", "Age (years)")...)
	if want := `n.xlsx: column "Age (years)": predictor column not found in the header; the file names it "Age\n(years)", with a line break (or another control character) in the name, which a plan cannot write: rename the column in the file, on one line`; code != 1 || !strings.Contains(errs, want) {
		t.Errorf("fit: exit %d, want %q in\n%s", code, want, errs)
	}
}
