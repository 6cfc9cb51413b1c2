package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// twoOutcomePlan writes invented data with two outcomes whose names differ
// only in '.' versus '_', rows to predict, and a plan for them.
func twoOutcomePlan(t *testing.T, dir string) string {
	t.Helper()
	rng := rand.New(rand.NewPCG(7, 21))
	var b strings.Builder
	b.WriteString("safety.2,safety_2,a,b\n")
	for i := 0; i < 150; i++ {
		a, bb := rng.NormFloat64(), float64(rng.IntN(2))
		cat := func(z float64) int {
			u := rng.Float64()
			z += math.Log(u / (1 - u))
			switch {
			case z < -0.5:
				return 1
			case z < 0.8:
				return 2
			}
			return 3
		}
		fmt.Fprintf(&b, "%d,%d,%.3f,%g\n", cat(a+0.5*bb), cat(-a), a, bb)
	}
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644)
	os.WriteFile(filepath.Join(dir, "new.csv"), []byte("a,b\n0.5,1\n-1,0\n"), 0o644)
	plan := `version: 1
data: {file: d.csv}
outcomes:
  - column: safety.2
  - column: safety_2
predictors: [a, b]
models: {approaches: [cumulative], effects: [parallel]}
tests: {parallel_lines: []}
rules:
  - choose: {by: aic}
inference:
  predict: new.csv
`
	p := filepath.Join(dir, "p.yaml")
	os.WriteFile(p, []byte(plan), 0o644)
	return p
}

// Outcomes "safety.2" and "safety_2" write distinct predictions files; a
// symlink planted in the output folder is refused, never written through
// nor replaced (O1), and the run goes ahead once it is moved away;
// a second run into a folder being written is refused with a message.
func TestOutputsSafe(t *testing.T) {
	dir := t.TempDir()
	p := twoOutcomePlan(t, dir)
	out := filepath.Join(dir, "out")
	os.MkdirAll(out, 0o755)
	outside := filepath.Join(dir, "precious.txt")
	os.WriteFile(outside, []byte("keep me\n"), 0o644)
	if err := os.Symlink(outside, filepath.Join(out, "report.md")); err != nil {
		t.Fatal(err)
	}
	if o, e, code := runCLI("run", p, "--out", out, "--quiet"); code != exitFail || !strings.Contains(e, "report.md is a symbolic link (to "+outside+")") {
		t.Fatalf("a planted symlink: exit %d: %s %s", code, o, e)
	}
	if b, _ := os.ReadFile(outside); string(b) != "keep me\n" {
		t.Errorf("the file behind a planted symlink was overwritten: %q", b)
	}
	if fi, err := os.Lstat(filepath.Join(out, "report.md")); err != nil || fi.Mode()&os.ModeSymlink == 0 {
		t.Errorf("report.md is no longer the user's symlink: %v", err)
	}
	os.Remove(filepath.Join(out, "report.md"))
	if o, e, code := runCLI("run", p, "--out", out, "--quiet"); code != 0 {
		t.Fatalf("exit %d: %s %s", code, o, e)
	}
	matches, _ := filepath.Glob(filepath.Join(out, "predictions-*.csv"))
	if len(matches) != 2 {
		t.Fatalf("predictions files: %v", matches)
	}
	a, _ := os.ReadFile(matches[0])
	b, _ := os.ReadFile(matches[1])
	if string(a) == string(b) {
		t.Errorf("the two outcomes' predictions are the same file content")
	}
	left, _ := filepath.Glob(filepath.Join(out, ".*.tmp-*"))
	if len(left) > 0 {
		t.Errorf("temporary files left: %v", left)
	}

	lock, err := lockOutput(out)
	if err != nil {
		t.Fatal(err)
	}
	before, _ := os.ReadFile(filepath.Join(out, "decisions.json"))
	o, e, code := runCLI("run", p, "--out", out, "--quiet")
	lock.Unlock()
	if code != exitFail || !strings.Contains(e, "another ordplan run is writing there (held by process") || o != "" {
		t.Errorf("a second run into a locked folder: exit %d, %q %q", code, o, e)
	}
	if after, _ := os.ReadFile(filepath.Join(out, "decisions.json")); string(after) != string(before) {
		t.Errorf("the refused run changed decisions.json")
	}
	if _, e, code := runCLI("run", p, "--out", out, "--quiet"); code != 0 {
		t.Errorf("after the lock is released: exit %d: %s", code, e)
	}
}

// The new-rows file is hashed into run.json and decisions.json, and a
// rerun with --previous says when it changed.
func TestNewRowsHashCompared(t *testing.T) {
	dir := t.TempDir()
	p := twoOutcomePlan(t, dir)
	first, second := filepath.Join(dir, "first"), filepath.Join(dir, "second")
	if _, e, code := runCLI("run", p, "--out", first, "--quiet"); code != 0 {
		t.Fatal(e)
	}
	run, _ := os.ReadFile(filepath.Join(first, "run.json"))
	if !strings.Contains(string(run), `"new_rows": {`) {
		t.Errorf("run.json does not name the new-rows file:\n%s", run)
	}
	out, e, code := runCLI("run", p, "--out", second, "--previous", first, "--quiet")
	if code != 0 || strings.Contains(out, "new-rows file changed") {
		t.Fatalf("unchanged: exit %d %s %s", code, out, e)
	}
	os.WriteFile(filepath.Join(dir, "new.csv"), []byte("a,b\n0.5,0\n-1,0\n"), 0o644)
	out, e, code = runCLI("run", p, "--out", second, "--previous", first, "--quiet")
	if code != 0 || !strings.Contains(out, "since the previous run: The new-rows file changed (sha256 ") {
		t.Errorf("changed new rows: exit %d %s %s", code, out, e)
	}
}
