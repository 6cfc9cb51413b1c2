package main

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"
	"time"

	"ordplan/internal/testsurvey"
	"ordplan/runner/queue/localserver"
)

// A power study whose replicates' fits run on queue workers writes the
// same power.json, byte for byte, as the study run here.
func TestPowerThroughQueue(t *testing.T) {
	if testing.Short() {
		t.Skip("queue")
	}
	dir := t.TempDir()
	planPath := filepath.Join(dir, "p.yaml")
	os.WriteFile(planPath, []byte(powerQueuePlan), 0o644)
	args := []string{"power", planPath, "--n", "120,200", "--replicates", "4", "--quiet"}
	if out, errs, code := runCLI(append(args, "--out", filepath.Join(dir, "local"))...); code != 0 {
		t.Fatalf("local: %d %s %s", code, out, errs)
	}
	url := localserver.ForTest(t)
	startWorkerProc(t, url, "w1")
	startWorkerProc(t, url, "w2")
	run := runAsync(append(args, "--out", filepath.Join(dir, "queue"), "--queue", url, "--workers", "3")...)
	waitRun(t, run, 120*time.Second)
	a, err1 := os.ReadFile(filepath.Join(dir, "local", "power.json"))
	b, err2 := os.ReadFile(filepath.Join(dir, "queue", "power.json"))
	if err1 != nil || err2 != nil || !bytes.Equal(a, b) {
		t.Errorf("power.json differs between the local and the queued study (%v %v)\n%s\n%s", err1, err2, a, b)
	}
}

// powerQueuePlan has numeric predictors only.
var powerQueuePlan = testsurvey.Plan{
	Seed:       9,
	Data:       "none.csv",
	Categories: `[low, mid, high]`,
	Sections: `predictors: [a, b]
dictionary:
  a: {values: [0, 1]}
  b: {range: [-4, 4]}
`,
	Approaches: `[cumulative, adjacent]`,
	Effects:    `[parallel, nonparallel]`,
	Rules: `  - reject_unconverged: true
  - choose: {by: bic}
`,
	Inference: `  hypotheses: ["a = 0"]
`,
	Assumptions: `  predictors:
    b: {mean: 0, sd: 1}
  outcomes:
    y:
      proportions: [0.3, 0.4, 0.3]
      effects: {a: 0.6, b: 0.3}
`,
}.YAML()
