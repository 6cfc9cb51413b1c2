package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"
)

// ordplan init describes a workbook's column whose cells merged cells
// cover (a site written once per block of rows) as not readable, lists no
// merged range among its values or levels, and proposes it neither as a
// predictor nor as the outcome, so that check passes the plan it wrote;
// a plan that reads the column is refused at the first covered cell.
func TestInitMergedCells(t *testing.T) {
	dir := t.TempDir()
	rows := [][]any{{"y", "site", "x"}}
	for i := 0; i < 24; i++ {
		rows = append(rows, []any{1 + i%3, map[bool]any{true: []string{"north", "south"}[i/12], false: nil}[i%12 == 0], float64(i%5) / 4})
	}
	book := bookOf(t, rows, func(f *excelize.File) {
		f.MergeCell("Sheet1", "B2", "B13")
		f.MergeCell("Sheet1", "B14", "B25")
	})
	data := filepath.Join(dir, "m.xlsx")
	if err := os.WriteFile(data, book, 0o644); err != nil {
		t.Fatal(err)
	}
	planPath := filepath.Join(dir, "m.yaml")
	if _, errs, code := runCLI("init", planPath, "--data", data); code != 0 {
		t.Fatal(errs)
	}
	text, err := os.ReadFile(planPath)
	if err != nil {
		t.Fatal(err)
	}
	hasEach(t, string(text),
		"#   site  merged cells (B2:B13, B14:B25) cover some of its cells, which hold no value of their own: not readable by ordplan until they are unmerged and each row's value written in its own cell\n",
		"predictors: [x]\n",
	)
	if strings.Contains(string(text), "(merged cells") {
		t.Errorf("a merged range among the values:\n%s", text)
	}
	if _, errs, code := runCLI("check", planPath); code != 0 {
		t.Errorf("check of the plan init wrote: exit %d\n%s\n%s", code, errs, text)
	}
	_, errs, code := runCLI(fitArgs(data, "--predictors", "x,site|levels=north/south")...)
	if want := `m.xlsx:3: column "site": cell B3 is one of the merged cells B2:B13, whose one value, held by B2, the sheet shows across them all: unmerge them and write each row's value in its own cell`; code != 1 || !strings.Contains(errs, want) {
		t.Errorf("fit reading the merged column: exit %d, want %q in\n%s", code, want, errs)
	}
}
