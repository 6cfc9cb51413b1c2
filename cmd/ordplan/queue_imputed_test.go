package main

import (
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

// writeImputedFixture writes an invented survey (seeded): y in three
// ordered categories from a cumulative logit in x (numeric) and g (three
// levels), with y, x and g missing in some rows; d.csv is the original
// data, stacked.csv three imputed sets of it (the missing cells drawn
// afresh in each), dw.csv d.csv with frequency weights, and three plans:
// chained.yaml imputes d.csv itself (data.missing: impute), stacked.yaml
// analyses stacked.csv, weighted.yaml imputes dw.csv. Both have a
// term with a sample mean, frozen on imputed set 1.
func writeImputedFixture(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(21, 8))
	var orig, stack strings.Builder
	orig.WriteString("y,x,g\n")
	stack.WriteString("imp,y,x,g\n")
	type row struct {
		y    int
		x    float64
		g    int
		miss [3]bool
	}
	rows := make([]row, 200)
	var weighted strings.Builder
	weighted.WriteString("y,x,g,w\n")
	for i := range rows {
		y, x, g := testsurvey.Grouped(rng)
		r := row{y: y, x: x, g: g, miss: [3]bool{rng.Float64() < 0.05, rng.Float64() < 0.1+0.1*float64(y-1), rng.Float64() < 0.08}}
		rows[i] = r
		cells := []string{fmt.Sprint(y), fmt.Sprintf("%.4f", x), []string{"a", "b", "c"}[g]}
		for c := range cells {
			if r.miss[c] {
				cells[c] = ""
			}
		}
		orig.WriteString(strings.Join(cells, ",") + "\n")
		fmt.Fprintf(&weighted, "%s,%d\n", strings.Join(cells, ","), 1+i%3)
	}
	for k := 1; k <= 3; k++ {
		for _, r := range rows {
			y, x, g := r.y, r.x, r.g
			if r.miss[0] {
				y = 1 + rng.IntN(3)
			}
			if r.miss[1] {
				x = rng.NormFloat64()
			}
			if r.miss[2] {
				g = rng.IntN(3)
			}
			fmt.Fprintf(&stack, "%d,%d,%.4f,%s\n", k, y, x, []string{"a", "b", "c"}[g])
		}
	}
	rest := `outcomes: [{column: y}]
categorical: {g: {levels: [a, b, c]}}
predictors: [{name: xc, column: x, centre: mean, scale: sd}, g]
models: {approaches: [cumulative], effects: [parallel, partial, nonparallel], partial: {free: [xc]}}
tests: {parallel_lines: [lr, wald]}
rules:
  - choose: {by: bic}
`
	files := map[string]string{
		"d.csv":         orig.String(),
		"stacked.csv":   stack.String(),
		"chained.yaml":  "version: 1\ntitle: imputed here\nseed: 5\ndata:\n  file: d.csv\n  missing: impute\n  imputation: {sets: 3, iterations: 2}\n" + rest,
		"stacked.yaml":  "version: 1\ntitle: imputed elsewhere\ndata:\n  file: d.csv\n  imputed: {file: stacked.csv, column: imp}\n" + rest,
		"dw.csv":        weighted.String(),
		"weighted.yaml": "version: 1\ntitle: imputed here, counts\nseed: 5\ndata:\n  file: dw.csv\n  weights: w\n  missing: impute\n  imputation: {sets: 3, iterations: 2}\n" + rest,
	}
	for name, s := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return dir
}

// Plans on multiply imputed data run through the queue write the same
// files as a local run, byte for byte, although the worker holding a job
// is killed: sets imputed by the program (handed to the workers as data
// files) and sets named in a stacked file, the design frozen on set 1 in
// every job; and sets imputed from frequency-weighted data (each row
// expanded into as many rows as its weight).
func TestQueueRunImputedData(t *testing.T) {
	if testing.Short() {
		t.Skip("starts worker processes")
	}
	dir := writeImputedFixture(t)
	url := localserver.ForTest(t)
	victim := startWorkerProc(t, url, "victim", holdEnv+"=60s")
	var w1, w2 *proc
	for _, name := range []string{"chained", "stacked", "weighted"} {
		plan := filepath.Join(dir, name+".yaml")
		local, remote := filepath.Join(dir, name+"-local"), filepath.Join(dir, name+"-queue")
		if out, errs, code := runCLI("run", plan, "--out", local, "--quiet"); code != 0 {
			t.Fatalf("%s: local run: exit %d: %s %s", name, code, out, errs)
		}
		run := runAsync("run", plan, "--out", remote, "--queue", url)
		if w1 == nil {
			victim.waitLog(t, 30*time.Second, "started")
			victim.kill(t)
			w1 = startWorkerProc(t, url, "w1")
			w2 = startWorkerProc(t, url, "w2")
		}
		r := waitRun(t, run, 90*time.Second)
		t.Logf("%s through the queue:\n%s", name, r[1])
		sameOutputs(t, local, remote)
		// One batch holds the fits of every imputed set: 3 sets of 5 fits.
		if !strings.Contains(r[1], "15 fits") {
			t.Errorf("%s: the fits of the imputed sets are not one batch: %s", name, r[1])
		}
	}
	logs := w1.stderr.String() + w2.stderr.String()
	if !strings.Contains(logs, "(delivery 2)") {
		t.Errorf("the killed worker's job was not delivered again:\n%s", logs)
	}
	if !strings.Contains(logs, "imputed set 3/3") {
		t.Errorf("the workers' logs name no imputed set:\n%s", logs)
	}
}
