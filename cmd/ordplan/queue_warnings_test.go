package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// A plan whose data are held as parts and run through the queue prints on
// the terminal the warnings a local run prints of the data it read: an
// outcome code that lies apart from the others (W31) and a
// reject_if_sparse rule counting within a numeric column of many values
// (W32), the same lines.
func TestQueueRunOverPartsWarns(t *testing.T) {
	if testing.Short() {
		t.Skip("starts worker processes")
	}
	var b strings.Builder
	b.WriteString("y,a,b\n")
	for i := range 240 {
		y := 1 + (i*7+i/5)%4
		if i%40 == 3 {
			y = 9
		}
		fmt.Fprintf(&b, "%d,%.3f,%d\n", y, float64(i)*0.37+float64(i%11)*0.01, i%2)
	}
	dir := t.TempDir()
	var files []string
	for p, raw := range splitInTurn([]byte(b.String()), 3) {
		name := fmt.Sprintf("part%d.csv", p)
		os.WriteFile(filepath.Join(dir, name), raw, 0o644)
		files = append(files, name)
	}
	plan := filepath.Join(dir, "plan.yaml")
	os.WriteFile(plan, []byte(`version: 1
data:
  parts: [`+strings.Join(files, ", ")+`]
outcomes:
  - column: y
predictors: [a, b]
models:
  approaches: [cumulative]
  effects: [parallel, partial]
  links: [logit]
  partial: {free: [a]}
tests: {parallel_lines: [lr]}
rules:
  - reject_unconverged: true
  - reject_if_sparse: {smallest_category: 5, within: a}
  - choose: {by: bic}
`), 0o644)
	_, localErrs, code := runCLI("run", plan, "--out", filepath.Join(dir, "here"), "--quiet")
	if code != 0 {
		t.Fatalf("local run: exit %d: %s", code, localErrs)
	}
	_, _, r := runHereAndQueued(t, plan, 1)
	for _, want := range []string{
		"warning: " + plan + ": outcome y: Code 9 lies apart from the others (1 to 4)",
		"warning: " + plan + ": outcome y: the rule at line 15 (reject_if_sparse) counts each category within the values of a, which takes ",
	} {
		if !strings.Contains(localErrs, want) {
			t.Fatalf("the local run does not warn %q:\n%s", want, localErrs)
		}
		if !strings.Contains(r[1], want) {
			t.Errorf("the run through the queue does not warn %q:\n%s", want, r[1])
		}
	}
}
