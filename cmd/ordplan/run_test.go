package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The bundled example plan runs end to end; a rerun is byte-identical; a
// rerun with --previous on changed data says what changed.
func TestRunExamplePlan(t *testing.T) {
	if testing.Short() {
		t.Skip("full grid")
	}
	dir := t.TempDir()
	a, b := filepath.Join(dir, "a"), filepath.Join(dir, "b")
	plan := filepath.Join("..", "..", "plans", "example.yaml")
	for _, out := range []string{a, b} {
		stdout, stderr, code := runCLI("run", plan, "--out", out, "--quiet")
		if code != 0 {
			t.Fatalf("exit %d: %s %s", code, stdout, stderr)
		}
		if !strings.Contains(stdout, "chosen:") {
			t.Fatalf("stdout: %s", stdout)
		}
	}
	for _, f := range []string{"decisions.json", "report.md", "report.html", "run.json"} {
		x, err1 := os.ReadFile(filepath.Join(a, f))
		y, err2 := os.ReadFile(filepath.Join(b, f))
		if err1 != nil || err2 != nil || !bytes.Equal(x, y) {
			t.Errorf("%s differs between runs (%v %v)", f, err1, err2)
		}
	}
	// run.json lists every file of the run, tables and figures included,
	// with the SHA-256 of the bytes on disk.
	var rec struct {
		Outputs map[string]string `json:"outputs_sha256"`
	}
	rj, _ := os.ReadFile(filepath.Join(a, "run.json"))
	if err := json.Unmarshal(rj, &rec); err != nil {
		t.Fatal(err)
	}
	entries, _ := os.ReadDir(a)
	kinds := map[string]bool{}
	for _, e := range entries {
		if e.Name() == "run.json" || e.IsDir() || strings.HasPrefix(e.Name(), ".") {
			continue
		}
		b, _ := os.ReadFile(filepath.Join(a, e.Name()))
		sum := sha256.Sum256(b)
		if rec.Outputs[e.Name()] != hex.EncodeToString(sum[:]) {
			t.Errorf("run.json: %s has hash %q, want that of its bytes", e.Name(), rec.Outputs[e.Name()])
		}
		kinds[strings.SplitN(e.Name(), "-", 2)[0]] = true
	}
	if !kinds["table"] || !kinds["figure"] {
		t.Errorf("no table or figure files among the outputs: %v", kinds)
	}
	// Changed data: drop the last 300 rows into a copy of the plan's folder.
	cdir := filepath.Join(dir, "changed")
	os.MkdirAll(filepath.Join(cdir, "data"), 0o755)
	src, _ := os.ReadFile(filepath.Join("..", "..", "plans", "data", "quietstreets.csv"))
	lines := strings.SplitAfter(string(src), "\n")
	os.WriteFile(filepath.Join(cdir, "data", "quietstreets.csv"), []byte(strings.Join(lines[:len(lines)-300], "")), 0o644)
	nr, _ := os.ReadFile(filepath.Join("..", "..", "plans", "data", "newrows.csv"))
	os.WriteFile(filepath.Join(cdir, "data", "newrows.csv"), nr, 0o644)
	pl, _ := os.ReadFile(plan)
	os.WriteFile(filepath.Join(cdir, "example.yaml"), pl, 0o644)
	stdout, stderr, code := runCLI("run", filepath.Join(cdir, "example.yaml"), "--out", filepath.Join(dir, "c"), "--previous", a, "--quiet")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if !strings.Contains(stdout, "since the previous run: The data file data/quietstreets.csv changed") || !strings.Contains(stdout, "rows used") {
		t.Errorf("changes not reported: %s", stdout)
	}
}

func TestRunAndCheckBadInput(t *testing.T) {
	dir := t.TempDir()
	write := func(name, s string) string {
		p := filepath.Join(dir, name)
		os.WriteFile(p, []byte(s), 0o644)
		return p
	}
	write("d.csv", "y,a,b\n1,0.5,1\n2,0.1,0\n3,0.7,1\n1,0.2,0\n2,0.9,1\n3,0.3,0\n")
	good := "version: 1\ndata: {file: d.csv}\noutcomes: [{column: y}]\npredictors: [a, b]\nmodels: {effects: [parallel, nonparallel]}\nrules:\n  - choose: {by: aic}\n"
	cases := []struct {
		name, plan string
		cmd        string
		code       int
		want       string
	}{
		{"unknown key", strings.Replace(good, "predictors:", "predictorz: [a]\npredictors:", 1), "check", 1, "predictorz"},
		{"absent column", strings.Replace(good, "[a, b]", "[a, c]", 1), "check", 1, `"c"`},
		{"unknown approach", strings.Replace(good, "{effects:", "{approaches: [sideways], effects:", 1), "check", 1, "sideways"},
		{"undeclared category", strings.Replace(good, "{column: y}", "{column: y, categories: [\"1\", \"2\"]}", 1), "run", 1, `"3"`},
		{"never observed", strings.Replace(good, "{column: y}", "{column: y, categories: [\"1\", \"2\", \"3\", \"4\"]}", 1), "run", 1, `category "4" is declared but never observed`},
		{"valid", good, "check", 0, "plan is valid"},
	}
	for i, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := write("p"+string(rune('a'+i))+".yaml", c.plan)
			stdout, stderr, code := runCLI(c.cmd, p, "--quiet")
			if c.cmd == "check" {
				stdout, stderr, code = runCLI(c.cmd, p)
			}
			if code != c.code || !strings.Contains(stdout+stderr, c.want) {
				t.Fatalf("exit %d (want %d)\nstdout: %s\nstderr: %s", code, c.code, stdout, stderr)
			}
			if strings.Contains(stderr, "goroutine") {
				t.Fatalf("panic: %s", stderr)
			}
		})
	}
}

// `ordplan check` lists the rules as they will be applied, in plain words,
// with the comparisons each test rule makes.
func TestCheckListsRules(t *testing.T) {
	stdout, stderr, code := runCLI("check", filepath.Join("..", "..", "plans", "example.yaml"))
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	for _, w := range []string{
		"The rules, in the order they will be applied to the models of each outcome:",
		") Reject fits that did not converge, whose likelihood has no finite maximum, or whose finite maximum is so flat that some estimates are not determined.",
		"Reject a model when the likelihood-ratio test against the least constrained model of its approach and link rejects it at alpha = 0.05.",
		"Comparisons:\n     cumulative/parallel/logit against cumulative/nonparallel/logit\n",
		"     adjacent/stereotype/logit against adjacent/nonparallel/logit\n",
		"If every candidate has been rejected, choose nothing and stop with an error.",
	} {
		if !strings.Contains(stdout, w) {
			t.Errorf("check output lacks %q:\n%s", w, stdout)
		}
	}
}

// With clustered errors, check warns of each rule (and stepwise selection)
// reading a statistic that takes every observation as independent, as the
// report's assumptions say (TIC too: its penalty is made of per-row
// scores, counted by hand in fit.TIC's definition); a Wald rule gets no warning,
// and without clustered errors nothing is said.
func TestCheckWarnsOfRulesIgnoringClusters(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "d.csv"), []byte("y,a,b,c\n1,0.5,1,k\n2,0.1,0,k\n3,0.7,1,m\n1,0.2,0,m\n2,0.9,1,n\n3,0.3,0,n\n"), 0o644)
	plan := func(cov, rules string) string {
		p := filepath.Join(dir, "p.yaml")
		os.WriteFile(p, []byte("version: 1\ndata: {file: d.csv, cluster: c}\noutcomes: [{column: y}]\npredictors: [a, b]\nmodels: {effects: [parallel, partial, nonparallel], partial: {select: {method: stepwise, test: lr}}}\ncovariance: "+cov+"\nrules:\n"+rules), 0o644)
		return p
	}
	const rules = "  - reject_if_test_rejects: {test: lr}\n  - reject_if_test_rejects: {test: wald}\n  - prefer_simpler: {by: bic}\n"
	stdout, stderr, code := runCLI("check", plan("clustered", rules))
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	for _, w := range []string{
		"warning: " + filepath.Join(dir, "p.yaml") + ": models.partial.select: the stepwise selection by likelihood-ratio tests takes every observation as independent",
		"warning: " + filepath.Join(dir, "p.yaml") + ": rules[0].reject_if_test_rejects (line 8): The likelihood-ratio test compares the two models' likelihoods, which take every observation as independent: it ignores the clusters of c, holds its level when they do not matter and rejects too often when observations of a cluster are alike. A Wald test would use the cluster-robust covariance instead, referred to F(q, G-q)",
		"rules[2].prefer_simpler (line 10): BIC takes every observation as independent",
	} {
		if !strings.Contains(stderr, w) {
			t.Errorf("check's stderr lacks %q:\n%s", w, stderr)
		}
	}
	if strings.Contains(stderr, "rules[1]") {
		t.Errorf("check warns of the Wald rule, which uses the cluster-robust covariance:\n%s", stderr)
	}
	if !strings.Contains(stdout, "The likelihood-ratio test compares the two models' likelihoods, which take every observation as independent") {
		t.Errorf("the rule's description lacks the caveat:\n%s", stdout)
	}
	if _, stderr, _ := runCLI("check", plan("clustered", "  - choose: {by: tic}\n")); !strings.Contains(stderr, "rules[0].choose (line 8): TIC's penalty is made of each row's scores, as if every observation were independent: the clusters of c") {
		t.Errorf("check does not warn of the TIC choice:\n%s", stderr)
	}
	if _, stderr, _ := runCLI("check", plan("observed", rules)); strings.Contains(stderr, "warning") {
		t.Errorf("check warns without clustered errors:\n%s", stderr)
	}
}
