package main

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// imputingPlan imputes its missing values (data.missing: impute), writes
// the completed sets, and states missing values for the rehearsal: x
// completely at random, z at random given the outcome.
const imputingPlan = `version: 1
seed: 42
data:
  file: data.csv
  missing: impute
  imputation: {sets: 3, iterations: 3, write_sets: true}
outcomes:
  - column: y
    categories: ["1", "2", "3"]
categorical:
  g: {levels: [a, b, c]}
predictors: [x, z, g]
models: {approaches: [cumulative], effects: [parallel], links: [logit]}
rules:
  - choose: {by: bic}
assumptions:
  n: 300
  predictors:
    x: {mean: 0, sd: 1}
    z: {mean: 0, sd: 1}
  outcomes:
    y:
      proportions: [0.3, 0.4, 0.3]
      effects: {x: 0.8, z: -0.5, g: {b: 0.5, c: 1}}
  missing:
    x: {proportion: 0.2}
    z: {proportion: 0.3, given: {y: 1.0}}
`

// A rehearsal of a plan that imputes runs the imputation path on the
// simulated missing values: decisions.json pools the fits of the imputed
// sets, the simulated file has the missing cells, the report and run.json
// say what was simulated, and the completed sets are among the outputs
// with their hash in run.json. A power study of the same plan imputes in
// every replicate and says so.
func TestRehearseImputes(t *testing.T) {
	dir := t.TempDir()
	planPath := filepath.Join(dir, "plan.yaml")
	if err := os.WriteFile(planPath, []byte(imputingPlan), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "reh")
	if _, errs, code := runCLI("rehearse", planPath, "--quiet", "--out", out); code != 0 {
		t.Fatalf("rehearse: exit %d: %s", code, errs)
	}
	var dec struct {
		Outcomes []struct {
			Imputation *struct {
				Sets    int    `json:"sets"`
				Source  string `json:"source"`
				Pooling []struct {
					Model string `json:"model"`
				} `json:"pooling"`
				Imputation *struct {
					RowsIncomplete int `json:"rows_incomplete"`
				} `json:"imputation"`
			} `json:"imputation"`
		} `json:"outcomes"`
	}
	b, err := os.ReadFile(filepath.Join(out, "decisions.json"))
	if err != nil || json.Unmarshal(b, &dec) != nil {
		t.Fatalf("decisions.json: %v", err)
	}
	im := dec.Outcomes[0].Imputation
	if im == nil || im.Sets != 3 || len(im.Pooling) == 0 || im.Imputation == nil || im.Imputation.RowsIncomplete == 0 {
		t.Fatalf("decisions.json does not pool imputed sets: %+v", im)
	}
	sim, _ := os.ReadFile(filepath.Join(out, "simulated-data.csv"))
	if !strings.Contains(string(sim), ",,") {
		t.Error("the simulated data have no empty cell")
	}
	report, _ := os.ReadFile(filepath.Join(out, "report.md"))
	for _, w := range []string{"`x` 20% completely at random (", "`z` 30% at random given y (log-odds +1 per SD) (", "The 3 completed sets the fits used are in `imputed-sets-y.csv`"} {
		if !strings.Contains(string(report), w) {
			t.Errorf("report.md lacks %q", w)
		}
	}
	var run struct {
		Outputs map[string]string `json:"outputs_sha256"`
	}
	b, _ = os.ReadFile(filepath.Join(out, "run.json"))
	if err := json.Unmarshal(b, &run); err != nil {
		t.Fatal(err)
	}
	var simulated struct {
		Simulated *struct {
			Missing []struct {
				Column string `json:"column"`
				Count  *int   `json:"missing"`
			} `json:"missing"`
		} `json:"simulated_data"`
	}
	b, _ = os.ReadFile(filepath.Join(out, "decisions.json"))
	if err := json.Unmarshal(b, &simulated); err != nil {
		t.Fatal(err)
	}
	sets, err := os.ReadFile(filepath.Join(out, "imputed-sets-y.csv"))
	if err != nil {
		t.Fatal(err)
	}
	h := sha256.Sum256(sets)
	if run.Outputs["imputed-sets-y.csv"] != hex.EncodeToString(h[:]) {
		t.Errorf("run.json's hash of imputed-sets-y.csv %q", run.Outputs["imputed-sets-y.csv"])
	}
	if n := strings.Count(string(sets), "\n"); n != 1+3*300 {
		t.Errorf("imputed-sets-y.csv has %d lines", n)
	}
	if s := simulated.Simulated; s == nil || len(s.Missing) != 2 || s.Missing[0].Count == nil || *s.Missing[0].Count == 0 {
		t.Errorf("decisions.json's record of the simulated missing values: %+v", s)
	}
	pout := filepath.Join(dir, "pow")
	if _, errs, code := runCLI("power", planPath, "--n", "100", "--replicates", "2", "--quiet", "--out", pout); code != 0 {
		t.Fatalf("power: exit %d: %s", code, errs)
	}
	pm, _ := os.ReadFile(filepath.Join(pout, "power.md"))
	if !strings.Contains(string(pm), "`z` 30% at random given y (log-odds +1 per SD)") {
		t.Errorf("power.md:\n%s", pm)
	}
	var pj struct {
		Outcomes []struct {
			Sizes []struct {
				Failed struct {
					Count int `json:"count"`
				} `json:"failed"`
			} `json:"sizes"`
		} `json:"outcomes"`
	}
	b, _ = os.ReadFile(filepath.Join(pout, "power.json"))
	if json.Unmarshal(b, &pj) != nil || pj.Outcomes[0].Sizes[0].Failed.Count != 0 {
		t.Errorf("power.json: replicates failed: %s", b)
	}
}

// A rehearsal or a replicate that the plan cannot be run on (so many
// missing values that a category is left without rows) names the
// simulated data as the user knows them, never the temporary file they
// were read from.
func TestSimulatedFailureNamesNoTemporaryFile(t *testing.T) {
	dir := t.TempDir()
	src := strings.NewReplacer("  missing: impute\n", "  missing: drop\n", "  imputation: {sets: 3, iterations: 3, write_sets: true}\n", "",
		"z: {proportion: 0.3, given: {y: 1.0}}", "z: {proportion: 0.9, given: {y: 6}}").Replace(imputingPlan)
	planPath := filepath.Join(dir, "plan.yaml")
	if err := os.WriteFile(planPath, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	_, errs, code := runCLI("rehearse", planPath, "--n", "30", "--quiet", "--out", filepath.Join(dir, "reh"))
	if code != 1 || !strings.Contains(errs, "ordplan: rehearsal on simulated data: simulated-data.csv (not kept: the rehearsal wrote nothing): column \"y\": only one category") || strings.Contains(errs, "ordplan-rehearse-") {
		t.Errorf("rehearse: exit %d: %s", code, errs)
	}
	pout := filepath.Join(dir, "pow")
	if _, errs, code := runCLI("power", planPath, "--n", "30", "--replicates", "2", "--quiet", "--out", pout); code != 0 {
		t.Fatalf("power: exit %d: %s", code, errs)
	}
	pm, _ := os.ReadFile(filepath.Join(pout, "power.md"))
	if !strings.Contains(string(pm), "At n = 30 the first failed replicate said: simulated n=30 replicate 1: column \"y\": only one category") || strings.Contains(string(pm), "ordplan-power-") {
		t.Errorf("power.md:\n%s", pm)
	}
}

// A simulated row that misses every column written (the outcome and every
// predictor made missing, no weights, offset or cluster) is a row of the
// simulated data: written with empty cells alone it was a line of
// delimiters, which the reader skips as a blank line, so that the
// rehearsal read fewer rows than it drew and each column's missing values
// in the analysis were fewer than the report said it had drawn (x: 175 of
// 300 rows drawn, 159 of 284 read). Its first cell is written NA.
func TestRehearseRowsMissingEveryColumn(t *testing.T) {
	dir := t.TempDir()
	planPath := filepath.Join(dir, "plan.yaml")
	src := strings.Replace(imputingPlan, "    z: {proportion: 0.3, given: {y: 1.0}}\n", "    z: {proportion: 0.6}\n    y: {proportion: 0.5}\n    g: {proportion: 0.5}\n", 1)
	src = strings.Replace(src, "x: {proportion: 0.2}", "x: {proportion: 0.6}", 1)
	if err := os.WriteFile(planPath, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "reh")
	if _, errs, code := runCLI("rehearse", planPath, "--quiet", "--out", out); code != 0 {
		t.Fatalf("rehearse: exit %d: %s", code, errs)
	}
	sim, err := os.ReadFile(filepath.Join(out, "simulated-data.csv"))
	if err != nil {
		t.Fatal(err)
	}
	blank := 0
	for _, l := range strings.Split(strings.TrimSpace(string(sim)), "\n")[1:] {
		if strings.Trim(l, ",") == "" {
			t.Fatalf("simulated-data.csv holds a line of delimiters alone: %q", l)
		}
		if strings.Trim(l, ",") == "NA" {
			blank++
		}
	}
	if blank == 0 {
		t.Fatal("no row misses every column: the test does not test")
	}
	b, err := os.ReadFile(filepath.Join(out, "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	report := string(b)
	for _, want := range []string{
		"300 rows read, 300 used",
		"Each was written as an empty cell, but for the first cell of a row missing every column, written `NA` (a line of empty cells alone is a blank line, no row).",
	} {
		if !strings.Contains(report, want) {
			t.Errorf("report.md lacks %q", want)
		}
	}
	// The missing values the report says were drawn are those the analysis
	// counts.
	drawn := regexp.MustCompile("`x` 60% completely at random \\((\\d+) of the 300 rows analysed\\)").FindStringSubmatch(report)
	if drawn == nil || !strings.Contains(report, fmt.Sprintf("Predictor column \"x\" is observed in %d of the 300 rows (%s missing", 300-atoi(drawn[1]), drawn[1])) {
		t.Errorf("the missing values of x drawn (%v) are not those the analysis counts", drawn)
	}
}
