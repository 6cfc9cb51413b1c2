package main

import (
	"os"
	"path/filepath"
	"testing"
)

// writeStudy writes an invented data file d.csv and a plan p.yaml into
// dir, and returns the plan's path.
func writeStudy(t *testing.T, dir, csv, plan string) string {
	t.Helper()
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(csv), 0o644); err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(dir, "p.yaml")
	if err := os.WriteFile(p, []byte(plan), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// runReport runs `ordplan run PLAN --out OUT --quiet` with extra flags,
// fails the test on a non-zero exit, and returns the run's report.md.
func runReport(t *testing.T, planPath, out string, extra ...string) string {
	t.Helper()
	args := append([]string{"run", planPath, "--out", out, "--quiet"}, extra...)
	if o, errs, code := runCLI(args...); code != 0 {
		t.Fatalf("%v: exit %d: %s %s", extra, code, o, errs)
	}
	md, err := os.ReadFile(filepath.Join(out, "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	return string(md)
}
