package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"ordplan/internal/testsurvey"
	"ordplan/runner/queue/localserver"
)

// TestSelectionStabilityOutputs: a plan with selection_stability run as a
// user runs it writes the section after the decision log, the CSV table
// (listed among the files), decisions.json's block and the Methods
// sentence; with --workers 1 and 2 every output is the same bytes. The
// data are invented (seeded formula, clusters of 8 rows, frequency
// weights 1 to 3).
func TestSelectionStabilityOutputs(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("x,y,site,w\n")
	for i := range 160 {
		fmt.Fprintf(&b, "%d,%d,s%d,%d\n", i%13, 1+(i*7+i%13)%3, i/8, 1+i%3)
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, extra := range []string{"", ", cluster: site", ", weights: w"} {
		covariance := ""
		if strings.Contains(extra, "cluster") {
			covariance = "covariance: clustered\n"
		}
		src := "version: 1\ndata: {file: d.csv" + extra + "}\noutcomes: [{column: y}]\npredictors: [x]\n" +
			"models: {approaches: [cumulative, adjacent], effects: [parallel, nonparallel]}\ntests: {parallel_lines: [lr]}\n" +
			"rules:\n  - reject_unconverged: true\n  - reject_if_test_rejects: {test: lr, alpha: 0.05}\n  - choose: {by: aic}\n" +
			covariance + "inference: {hypotheses: [\"x = 0\"]}\nselection_stability: {resamples: 20, seed: 9}\n"
		if err := os.WriteFile(filepath.Join(dir, "p.yaml"), []byte(src), 0o644); err != nil {
			t.Fatal(err)
		}
		outs := []string{filepath.Join(dir, "w1"), filepath.Join(dir, "w2")}
		for i, out := range outs {
			os.RemoveAll(out)
			if o, errs, code := runCLI("run", filepath.Join(dir, "p.yaml"), "--out", out, "--quiet", fmt.Sprintf("--workers=%d", i+1)); code != 0 {
				t.Fatalf("%q: exit %d: %s %s", extra, code, o, errs)
			}
		}
		entries, err := os.ReadDir(outs[0])
		if err != nil {
			t.Fatal(err)
		}
		for _, e := range entries {
			if e.IsDir() {
				continue
			}
			one, _ := os.ReadFile(filepath.Join(outs[0], e.Name()))
			two, err := os.ReadFile(filepath.Join(outs[1], e.Name()))
			if err != nil || !bytes.Equal(one, two) {
				t.Errorf("%q: %s differs between --workers 1 and 2 (%v)", extra, e.Name(), err)
			}
		}
		rep, _ := os.ReadFile(filepath.Join(outs[0], "report.md"))
		r := string(rep)
		log, sec := strings.Index(r, "### Decision log"), strings.Index(r, "### Stability of the model choice")
		if log < 0 || sec < log {
			t.Fatalf("%q: the stability section is missing or before the decision log", extra)
		}
		unit := map[string]string{"": "160 rows", ", cluster: site": "20 clusters of `site`", ", weights: w": "319 units, the frequency weights of `w`"}[extra]
		for _, want := range []string{unit, "Plain reading: the primary analysis chose", "| table-stability-y.csv |",
			"The stability of the model choice was assessed", "Assumptions and limits of this study",
			"in whose chosen model its test could not be computed, or that chose nothing, does not test it (column Tested in counts the others)"} {
			if !strings.Contains(r, want) {
				t.Errorf("%q: report.md lacks %q", extra, want)
			}
		}
		csv, err := os.ReadFile(filepath.Join(outs[0], "table-stability-y.csv"))
		if err != nil || !strings.HasPrefix(string(csv), "what,rule,rule_kind,model,hypothesis,count,of,share,mc_se,primary_choice,estimate_low,estimate_high\n") {
			t.Errorf("%q: table-stability-y.csv: %v\n%s", extra, err, csv)
		}
		var dec struct {
			Outcomes []struct {
				Stability *struct {
					Resamples int    `json:"resamples"`
					Unit      string `json:"unit"`
					Models    []struct {
						Chosen struct{ Count int } `json:"chosen"`
					} `json:"models"`
					None   struct{ Count int } `json:"none_chosen"`
					Failed struct{ Count int } `json:"failed"`
				} `json:"selection_stability"`
			} `json:"outcomes"`
		}
		js, _ := os.ReadFile(filepath.Join(outs[0], "decisions.json"))
		if err := json.Unmarshal(js, &dec); err != nil || dec.Outcomes[0].Stability == nil {
			t.Fatalf("%q: decisions.json: %v", extra, err)
		}
		st := dec.Outcomes[0].Stability
		total := st.None.Count + st.Failed.Count
		for _, m := range st.Models {
			total += m.Chosen.Count
		}
		if st.Resamples != 20 || total != 20 {
			t.Errorf("%q: %d resamples, shares over %d", extra, st.Resamples, total)
		}
	}
}

// TestSelectionStabilityChosenModelOutputs: with draw: chosen_model the
// section says which draw was used and how to read its shares (a rate of
// recovering the chosen model when it holds, nothing about whether it
// holds), the Methods sentence and decisions.json say so too, and the
// outputs are the same bytes with --workers 1 and 2. Invented data as in
// TestSelectionStabilityOutputs.
func TestSelectionStabilityChosenModelOutputs(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("x,y\n")
	for i := range 160 {
		fmt.Fprintf(&b, "%d,%d\n", i%13, 1+(i*7+i%13)%3)
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	src := "version: 1\ndata: {file: d.csv}\noutcomes: [{column: y}]\npredictors: [x]\n" +
		"models: {approaches: [cumulative, adjacent], effects: [parallel, nonparallel]}\ntests: {parallel_lines: [lr]}\n" +
		"rules:\n  - reject_unconverged: true\n  - reject_if_test_rejects: {test: lr, alpha: 0.05}\n  - choose: {by: aic}\n" +
		"selection_stability: {resamples: 20, seed: 9, draw: chosen_model}\n"
	if err := os.WriteFile(filepath.Join(dir, "p.yaml"), []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	var reports [2]string
	for i := range reports {
		out := filepath.Join(dir, fmt.Sprintf("w%d", i+1))
		if o, errs, code := runCLI("run", filepath.Join(dir, "p.yaml"), "--out", out, "--quiet", fmt.Sprintf("--workers=%d", i+1)); code != 0 {
			t.Fatalf("exit %d: %s %s", code, o, errs)
		}
		rep, _ := os.ReadFile(filepath.Join(out, "report.md"))
		js, _ := os.ReadFile(filepath.Join(out, "decisions.json"))
		reports[i] = string(rep) + string(js)
	}
	if reports[0] != reports[1] {
		t.Error("report.md or decisions.json differs between --workers 1 and 2")
	}
	for _, want := range []string{"The plan (selection_stability, draw: chosen_model) asks how often the rules find the model the primary analysis chose when that model holds",
		"At the 160 rows used here", "Plain reading: with outcomes drawn from", "it says nothing about whether it holds",
		"Model chosen in the sets simulated from the chosen model", "| Model | Simulated sets |",
		"How often the decision procedure recovers the chosen model was assessed", `"draw": "chosen_model"`} {
		if !strings.Contains(reports[0], want) {
			t.Errorf("the outputs lack %q", want)
		}
	}
	if strings.Contains(reports[0], "bootstrap resamples of the data used here") {
		t.Error("the section describes bootstrap resamples")
	}
}

// TestChosenModelSetsLackingACategory: with draw: chosen_model, on 120
// rows where category 3 is rare (invented, seeded), a simulated set
// lacking it is set aside and drawn again rather than failing: the
// section counts the sets redrawn and what they lacked, the Methods
// sentence says the sets are conditional on each category appearing, the
// stability CSV has its redrawn row, and no set fails.
func TestChosenModelSetsLackingACategory(t *testing.T) {
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(testsurvey.RareThird(rand.New(rand.NewPCG(11, 12)), 120)), 0o644); err != nil {
		t.Fatal(err)
	}
	src := "version: 1\ndata: {file: d.csv}\noutcomes: [{column: y}]\npredictors: [x]\n" +
		"models: {approaches: [cumulative], effects: [parallel]}\ntests: {parallel_lines: []}\n" +
		"rules:\n  - reject_unconverged: true\n  - choose: {by: aic}\n" +
		"selection_stability: {resamples: 40, seed: 3, draw: chosen_model}\n"
	if err := os.WriteFile(filepath.Join(dir, "p.yaml"), []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	if o, errs, code := runCLI("run", filepath.Join(dir, "p.yaml"), "--out", out, "--quiet"); code != 0 {
		t.Fatalf("exit %d: %s %s", code, o, errs)
	}
	rep, _ := os.ReadFile(filepath.Join(out, "report.md"))
	csv, _ := os.ReadFile(filepath.Join(out, "table-stability-y.csv"))
	for _, want := range []string{"A simulated set must hold every category of the outcome, as the data do", "simulated sets needed another draw", "what they lacked most often: y = 3 (",
		"conditional on every category appearing", "a set lacking a category of the outcome that the data hold was drawn again, so the sets are conditional on each appearing"} {
		if !strings.Contains(string(rep), want) {
			t.Errorf("report.md lacks %q", want)
		}
	}
	if !strings.Contains(string(csv), "\nredrawn,") || !strings.Contains(string(csv), "\nfailed,,,,,0,40,") {
		t.Errorf("the stability CSV has no redrawn row or counts failed sets:\n%s", csv)
	}
}

// ordplan run --queue on a plan with selection_stability says once, before
// the fits, that the resamples are fitted here and not by the queue's
// workers, and writes the same decisions.json as a run without the queue.
func TestSelectionStabilityQueueSaysLocal(t *testing.T) {
	if testing.Short() {
		t.Skip("queue")
	}
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("x,y\n")
	for i := range 120 {
		fmt.Fprintf(&b, "%d,%d\n", i%11, 1+(i*7+i%11)%3)
	}
	planPath := writeStudy(t, dir, b.String(), "version: 1\ndata: {file: d.csv}\noutcomes: [{column: y}]\npredictors: [x]\n"+
		"models: {approaches: [cumulative], effects: [parallel, nonparallel]}\ntests: {parallel_lines: [lr]}\n"+
		"rules:\n  - reject_unconverged: true\n  - choose: {by: aic}\nselection_stability: {resamples: 20, seed: 4}\n")
	runReport(t, planPath, filepath.Join(dir, "local"))
	url := localserver.ForTest(t)
	startWorkerProc(t, url, "w1")
	r := waitRun(t, runAsync("run", planPath, "--out", filepath.Join(dir, "queue"), "--queue", url), 120*time.Second)
	const want = "selection stability: its 20 bootstrap resamples are fitted on this machine (as many at once as --workers allows), not sent to the queue's workers"
	if !strings.Contains(r[1], want) {
		t.Errorf("stderr lacks %q:\n%s", want, r[1])
	}
	a, err1 := os.ReadFile(filepath.Join(dir, "local", "decisions.json"))
	c, err2 := os.ReadFile(filepath.Join(dir, "queue", "decisions.json"))
	if err1 != nil || err2 != nil || !strings.Contains(string(a), "selection_stability") || !bytes.Equal(a, c) {
		t.Errorf("decisions.json differs between the local and the queued run (%v %v)", err1, err2)
	}
}

// A cluster bootstrap of a plan whose predictors hold the clusters as
// levels (site fixed effects, errors clustered by a copy of site) cannot
// draw a resample that holds every level and differs from the data: every
// resample fails with that reason, the report's plain reading says the
// share counts failures, not stability, and the reasons are listed one to
// a line; the outcome's notes said so before the resamples
// (Analysis.StabilityLevels). With one level in one cluster of 12, the
// draws without that cluster are drawn again: no resample fails, and the
// report counts the resamples redrawn and the draws set aside, with what
// they lacked, and says the bootstrap is conditional on the level.
func TestSelectionStabilityMostlyFailedReport(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("x,y,site,site2\n")
	for i := range 160 {
		fmt.Fprintf(&b, "%d,%d,s%d,s%d\n", i%13, 1+(i*7+i%13)%3, i%6, i%6)
	}
	planPath := writeStudy(t, dir, b.String(), "version: 1\ndata: {file: d.csv, cluster: site2}\noutcomes: [{column: y}]\npredictors: [x, site]\n"+
		"categorical: {site: {levels: [s0, s1, s2, s3, s4, s5]}}\ncovariance: clustered\n"+
		"models: {approaches: [cumulative], effects: [parallel]}\n"+
		"rules:\n  - reject_unconverged: true\n  - choose: {by: aic}\nselection_stability: {resamples: 20, seed: 4}\n")
	out := filepath.Join(dir, "out")
	report := runReport(t, planPath, out)
	for _, want := range []string{"so this share says how often it could be run on such data, not how stable the choice is",
		"when every cluster is a level of its own no resample can differ from the data",
		"The reasons met first, each once (at most 5, as the resample's own fit gave them):\n\n- each of the 6 clusters alone holds a category or level of the data (or a combination an interaction reads), so a resample holding them all is the data again and cannot vary: no resample is drawn",
		`selection_stability: the bootstrap draws whole clusters of "site2", and the rows of site = s0 (cluster "s0"), site = s1 (cluster "s1"), site = s2 (cluster "s2") and 3 more lie in one cluster each: a draw that leaves that cluster out has no row of the level, so its column cannot be estimated; every one of the 6 clusters holds such a level, so a resample holding every level is the data again, and no resample is drawn (the study reports every resample as failed).`} {
		if !strings.Contains(report, want) {
			t.Errorf("report.md lacks %q", want)
		}
	}
	if strings.Contains(report, "the choice is fragile") || strings.Contains(report, "A resample must hold every category") {
		t.Errorf("report.md calls the choice fragile on the few resamples that ran, or describes redraws that were not made")
	}

	b.Reset()
	b.WriteString("x,y,site,cl\n")
	for i := range 240 {
		site := []string{"k", "m"}[i%2]
		if i%12 == 0 {
			site = "z"
		}
		fmt.Fprintf(&b, "%d,%d,%s,c%d\n", i%13, 1+(i*7+i%13)%3, site, i%12)
	}
	planPath = writeStudy(t, dir, b.String(), "version: 1\ndata: {file: d.csv, cluster: cl}\noutcomes: [{column: y}]\npredictors: [x, site]\n"+
		"categorical: {site: {levels: [k, m, z]}}\ncovariance: clustered\n"+
		"models: {approaches: [cumulative], effects: [parallel]}\n"+
		"rules:\n  - reject_unconverged: true\n  - choose: {by: aic}\nselection_stability: {resamples: 20, seed: 4}\n")
	report = runReport(t, planPath, filepath.Join(dir, "out12"))
	dec, err := os.ReadFile(filepath.Join(dir, "out12", "decisions.json"))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"a draw lacking one was set aside and another drawn from the resample's own stream (at most 100 for one resample)",
		"of the 20 resamples needed another draw, with ",
		"what they lacked most often: site = z (",
		"The shares are therefore those of a bootstrap conditional on all of these appearing: 1 of the 12 clusters alone holds one of them, so every resample kept draws it",
		"that the data hold was drawn again, so the resamples are conditional on each appearing"} {
		if !strings.Contains(report, want) {
			t.Errorf("one level in one cluster of 12: report.md lacks %q", want)
		}
	}
	if strings.Contains(report, "the procedure failed") || !strings.Contains(string(dec), `"draws_lacked": [`) || !strings.Contains(string(dec), `"units_always_drawn": 1`) {
		t.Errorf("one level in one cluster of 12: a resample failed, or decisions.json lacks the redraws")
	}
}
