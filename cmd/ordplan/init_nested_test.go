package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// A Parquet file's nested columns (a list tags, a struct meta beside the
// outcome y and the number a) are listed by init as not readable, never
// as the outcome or a predictor, and the plan it writes checks against
// the file; an --outcome naming a nested column is refused.
func TestInitNestedParquet(t *testing.T) {
	dir := t.TempDir()
	dataPath := filepath.Join(dir, "n.parquet")
	if err := os.WriteFile(dataPath, nestedParquet(t), 0o644); err != nil {
		t.Fatal(err)
	}
	planPath := filepath.Join(dir, "n.yaml")
	if _, errs, code := runCLI("init", planPath, "--data", dataPath); code != 0 {
		t.Fatal(errs)
	}
	text, err := os.ReadFile(planPath)
	if err != nil {
		t.Fatal(err)
	}
	hasEach(t, string(text),
		"#   tags  a list, a nested Parquet column: not readable by ordplan (write it as a flat column to use it)\n",
		"#   meta  a struct, a nested Parquet column: not readable by ordplan (write it as a flat column to use it)\n",
		"  - column: \"y\"",
		"predictors: [a]\n",
	)
	if _, errs, code := runCLI("check", planPath); code != 0 {
		t.Errorf("check of the plan init wrote: exit %d\n%s\n%s", code, errs, text)
	}
	_, errs, code := runCLI("init", filepath.Join(dir, "m.yaml"), "--data", dataPath, "--outcome", "tags")
	if code == 0 || !strings.Contains(errs, `--outcome: column "tags" is a list, a nested Parquet column, which ordplan does not read`) {
		t.Errorf("--outcome tags: exit %d\n%s", code, errs)
	}
}
