package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// simDialectPlan reads semicolon-separated data with a decimal comma, and
// new rows to predict written the same way.
const simDialectPlan = `version: 1
seed: 7
data:
  file: data.csv
  delimiter: semicolon
  decimal: comma
outcomes:
  - column: y
    categories: ["1", "2", "3"]
predictors: [x, g]
categorical:
  g: {levels: [a, b]}
models: {approaches: [cumulative], effects: [parallel], links: [logit]}
rules:
  - choose: {by: bic}
inference:
  predict: new.csv
sensitivity:
  - name: robust
    why: The model may be wrong.
    change: {covariance: sandwich}
assumptions:
  n: 200
  predictors:
    x: {mean: 0, sd: 1}
  outcomes:
    y:
      proportions: [0.3, 0.4, 0.3]
      effects: {x: 0.8, g: {b: 0.5}}
`

// A rehearsal or power study of a plan whose data are semicolon-separated
// with a decimal comma reads the data it simulated (written comma-separated
// with a decimal point) as such, and the new rows as the plan says; both
// once failed ("the file looks comma-separated ... but is read as
// semicolon-separated"). The rehearsal prints its sensitivity analysis's
// choice as run does.
func TestRehearseAndPowerPlanDialect(t *testing.T) {
	dir := t.TempDir()
	for name, body := range map[string]string{
		"plan.yaml": simDialectPlan,
		"data.csv":  "y;x;g\n1;0,5;a\n2;-1,25;b\n3;2,0;a\n",
		"new.csv":   "x;g\n0,5;a\n-1,5;b\n",
	} {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	planPath := filepath.Join(dir, "plan.yaml")
	out := filepath.Join(dir, "reh")
	stdout, errs, code := runCLI("rehearse", planPath, "--quiet", "--out", out)
	if code != 0 {
		t.Fatalf("rehearse: exit %d: %s", code, errs)
	}
	// The sensitivity analysis's choice is printed as run prints it.
	if !strings.Contains(stdout, "\nsensitivity analysis robust: y: chosen: cumulative/parallel/logit, as in the primary analysis\n") {
		t.Errorf("rehearse's summary lacks the sensitivity analysis:\n%s\n%s", stdout, errs)
	}
	sim, err := os.ReadFile(filepath.Join(out, simulatedFile))
	if err != nil || !strings.HasPrefix(string(sim), "y,x,g\n") {
		t.Errorf("simulated data: %v %.40q", err, sim)
	}
	pred, err := os.ReadFile(filepath.Join(out, "predictions-y.csv"))
	if err != nil {
		t.Fatal(err)
	}
	// The new rows echoed as written (x = 0.5 and -1.5 in decimal comma),
	// each predicted.
	if lines := strings.Split(strings.TrimSpace(string(pred)), "\n"); len(lines) != 3 || !strings.HasPrefix(lines[1], `2,"0,5",a,0.`) || !strings.HasPrefix(lines[2], `3,"-1,5",b,0.`) {
		t.Errorf("predictions of the new rows:\n%s", pred)
	}
	pout := filepath.Join(dir, "pow")
	if _, errs, code := runCLI("power", planPath, "--quiet", "--n", "150", "--replicates", "4", "--workers", "1", "--out", pout); code != 0 {
		t.Fatalf("power: exit %d: %s", code, errs)
	}
	if md, _ := os.ReadFile(filepath.Join(pout, "power.md")); !strings.Contains(string(md), "| a plan that could not be run | 0.000 (0 of 4;") {
		t.Errorf("power.md: replicates failed:\n%s", md)
	}
}
