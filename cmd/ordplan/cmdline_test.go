package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestCommandLine: commandLine quotes what a shell would split.
func TestCommandLine(t *testing.T) {
	if got := commandLine([]string{"ordplan", "run", "my plan.yaml", "--previous", "old run"}); got != `ordplan run 'my plan.yaml' --previous 'old run'` {
		t.Errorf("got %s", got)
	}
	if got := commandLine([]string{"a'b"}); got != `'a'\''b'` {
		t.Errorf("quote: %s", got)
	}
}

// TestSameReportFromAnyFolder: the same plan and data run from the plan's
// folder with relative names, and from another folder with absolute names,
// another number of workers and options for a queue server (which do not
// change the results), write the same files byte for byte; the recorded
// command line keeps what can change the results, names the plan and the
// folder of --previous relative to the plan's folder, and leaves out the
// rest. The data are invented (x on a grid, y by a fixed pattern).
func TestSameReportFromAnyFolder(t *testing.T) {
	dir, other := t.TempDir(), t.TempDir()
	var b strings.Builder
	b.WriteString("x,y\n")
	for i := range 120 {
		fmt.Fprintf(&b, "%d,%d\n", i%13, 1+(i*7+i%13)%3)
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	src := `version: 1
title: Folders
data: {file: d.csv}
outcomes: [{column: y}]
predictors: [x]
models: {approaches: [cumulative], effects: [parallel, nonparallel], links: [logit]}
tests: {parallel_lines: [lr]}
rules:
  - reject_unconverged: true
  - choose: {by: aic}
`
	if err := os.WriteFile(filepath.Join(dir, "my plan.yaml"), []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	runIn := func(folder string, args ...string) {
		t.Helper()
		t.Chdir(folder)
		if out, errs, code := runCLI(append([]string{"run"}, args...)...); code != 0 {
			t.Fatalf("run %v: exit %d: %s %s", args, code, out, errs)
		}
	}
	runIn(dir, "my plan.yaml", "--out", "first", "--quiet")
	runIn(dir, "my plan.yaml", "--out", "here", "--previous", "first", "--quiet")
	runIn(other, filepath.Join(dir, "my plan.yaml"), "--workers=1", "--out", filepath.Join(other, "there"), "--job-deadline", "10m",
		"--queue-ca", filepath.Join(other, "ca.pem"), "--queue-secret-file="+filepath.Join(other, "secret"), "--previous", filepath.Join(dir, "first"), "--quiet")
	here, there := filepath.Join(dir, "here"), filepath.Join(other, "there")
	entries, err := os.ReadDir(here)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		if strings.HasPrefix(e.Name(), ".") {
			continue
		}
		x, _ := os.ReadFile(filepath.Join(here, e.Name()))
		y, err := os.ReadFile(filepath.Join(there, e.Name()))
		if err != nil || !bytes.Equal(x, y) {
			t.Errorf("%s differs between the two folders (%v)", e.Name(), err)
		}
	}
	var rec struct {
		Command string `json:"command_line"`
	}
	rj, _ := os.ReadFile(filepath.Join(here, "run.json"))
	if err := json.Unmarshal(rj, &rec); err != nil {
		t.Fatal(err)
	}
	if want := `ordplan run 'my plan.yaml' --previous first`; rec.Command != want {
		t.Errorf("command line %q, want %q", rec.Command, want)
	}
	md, _ := os.ReadFile(filepath.Join(here, "report.md"))
	if !strings.Contains(string(md), "| Plan | `my plan.yaml`, SHA-256") {
		t.Errorf("the reproducibility table does not name the plan as run.json does")
	}
}
