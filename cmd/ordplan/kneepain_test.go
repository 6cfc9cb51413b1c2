package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The second example plan (registered before any data exist) checks
// without data, rehearses and sizes the study; every page made from
// simulated data says so in its title and first line.
func TestRegisteredExampleBeforeData(t *testing.T) {
	planPath := filepath.Join("..", "..", "plans", "kneepain.yaml")
	if out, errs, code := runCLI("check", planPath, "--no-data"); code != 0 || !strings.Contains(out, "plan is valid (data file not read)") {
		t.Fatalf("check --no-data: %d %s %s", code, out, errs)
	}
	dir := t.TempDir()
	out, errs, code := runCLI("rehearse", planPath, "--n", "250", "--out", filepath.Join(dir, "r"))
	if code != 0 || !strings.Contains(out, "\nSIMULATED DATA: 250 rows") || !strings.HasPrefix(out, "registered plan: none (no kneepain.lock.json") {
		t.Fatalf("rehearse: %d %s %s", code, out, errs)
	}
	md, _ := os.ReadFile(filepath.Join(dir, "r", "report.md"))
	html, _ := os.ReadFile(filepath.Join(dir, "r", "report.html"))
	lines := strings.SplitN(string(md), "\n", 4)
	if !strings.HasPrefix(lines[0], "# SIMULATED DATA: ") || !strings.HasPrefix(lines[2], "**SIMULATED DATA.**") {
		t.Errorf("report.md opens with\n%s\n%s", lines[0], lines[2])
	}
	if !strings.Contains(string(html), "<title>SIMULATED DATA: ") || !strings.Contains(string(html), "<strong>SIMULATED DATA.</strong>") {
		t.Error("report.html does not say SIMULATED DATA in its title and first line")
	}
	// The generating model is shown: the stated arm effect at every
	// boundary, each site level against north (treatment coding).
	for _, want := range []string{"## The generating model (simulated data)", "| `arm` | 0.4500 | 0.4500 | 0.4500 | 0.4500 |",
		"| `site.east` | 0.1000 | 0.1000 | 0.1000 | 0.1000 |", "cumulative logit model generating each outcome"} {
		if !strings.Contains(string(md), want) {
			t.Errorf("report.md lacks %q", want)
		}
	}
	// The arm was assigned by chance (dictionary.arm.assigned_by_chance):
	// the limits give its comparison a causal reading under the trial's
	// conditions and the other predictors none, and the Methods draft reads
	// its slopes as effects of the assignment given terms measured before; the primary hypothesis,
	// one restriction in a parallel model and one per boundary in the
	// others, is said to take its form from the chosen model, in the limits
	// and in the Methods draft.
	for _, want := range []string{
		"- `arm` was assigned to the units by chance (the plan's dictionary says so, with assigned_by_chance). The comparison of its values (in the models, and in their predicted probabilities and marginal effects) has a causal reading under the conditions of the trial:",
		"The other predictors (`age`, `baseline_pain` and `site`) were not assigned by chance: the models describe how the outcome is associated with them in these data, which does not show that they cause a change in it;",
		"- The plan's hypotheses are read in the chosen model, and their tests took their form from it: `arm = 0` is a test of ",
		"depended on the choice the rules made on the same data, and its p-value does not allow for that choice.",
		"The plan's hypotheses were tested by Wald tests in every candidate model that has their parameters and are read in the chosen model, ",
		"Where the candidates differ in the number of restrictions, the form of the test depended on the model the rules chose.",
		"except that the slopes of `arm`, assigned to the units by chance, estimate effects of the assignment under the trial's conditions, given the other terms, provided these were measured before the assignment;",
		"| `arm` | predictor, assigned by chance | numeric | 0, 1 |",
	} {
		if !strings.Contains(string(md), want) {
			t.Errorf("report.md lacks %q", want)
		}
	}
	if strings.ContainsRune(string(md), '\ue000') {
		t.Error("report.md holds the marker of Markdown cells")
	}
	if strings.Contains(string(md), "They do not show that a predictor causes a change in the outcome") {
		t.Error("the limits deny a causal reading of every predictor, the randomized arm included")
	}
	if _, err := os.Stat(filepath.Join(dir, "r", "simulated-data.csv")); err != nil {
		t.Error("the simulated data are not among the outputs")
	}
	out, errs, code = runCLI("power", planPath, "--n", "120,240", "--replicates", "3", "--out", filepath.Join(dir, "p"), "--quiet")
	if code != 0 || !strings.Contains(out, "change n=240: arm = 0: power") {
		t.Fatalf("power: %d %s %s", code, out, errs)
	}
	for _, f := range []string{"power.md", "power.html", "power.json"} {
		b, err := os.ReadFile(filepath.Join(dir, "p", f))
		if err != nil || !strings.Contains(string(b), "SIMULATED DATA") && f != "power.json" {
			t.Errorf("%s: %v", f, err)
		}
	}
}

// A rehearsal of a plan with a subset on a column that is not a
// predictor: the column is simulated, the reader applies the condition,
// and the report says how many simulated rows it kept (in the opening
// lines and in the methods paragraph), and that the stated proportions
// describe the rows it keeps. The stage generating model is
// named, with its stated correlation accepted. The command line is
// recorded in the report and run.json.
func TestRehearseWithSubset(t *testing.T) {
	src, err := os.ReadFile(filepath.Join("..", "..", "plans", "kneepain.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	s := strings.Replace(string(src), "predictors: [arm, age, baseline_pain, site]", "predictors: [arm, age, site]\nsubset:\n  - {column: baseline_pain, at_least: 3}", 1)
	s = strings.Replace(s, "        baseline_pain: 0.08\n", "", 1)
	s = strings.Replace(s, "  n: 300 ", "  comparison: stage\n  correlations:\n    - {between: [age, baseline_pain], r: 0.3}\n  n: 300 ", 1)
	s = strings.Replace(s, "focus_predictor: baseline_pain", "focus_predictor: age", 1)
	dir := t.TempDir()
	path := filepath.Join(dir, "sub.yaml")
	if err := os.WriteFile(path, []byte(s), 0o644); err != nil {
		t.Fatal(err)
	}
	out, errs, code := runCLI("rehearse", path, "--out", filepath.Join(dir, "r"), "--workers", "2")
	if code != 0 {
		t.Fatalf("rehearse: %d %s %s", code, out, errs)
	}
	md, _ := os.ReadFile(filepath.Join(dir, "r", "report.md"))
	rj, _ := os.ReadFile(filepath.Join(dir, "r", "run.json"))
	// The command line is recorded as for run: without where the
	// outputs go and how many fits run at once.
	if !strings.Contains(string(md), "| Command line | `ordplan rehearse sub.yaml` |") || !strings.Contains(string(rj), `"command_line": "ordplan rehearse sub.yaml"`) {
		t.Errorf("the rehearsal's command line is not recorded in report.md and run.json:\n%s", rj)
	}
	for _, want := range []string{"with a stage (forward) logit model generating each outcome", "The plan's subset (baseline_pain >= 3) kept ",
		" of the 300 simulated rows. The stated category proportions describe the rows the subset keeps, the population the plan analyses", "met the plan's subset conditions (baseline_pain >= 3) and ", " failed them. "} {
		if !strings.Contains(string(md), want) {
			t.Errorf("report.md lacks %q", want)
		}
	}
}
