package runner

import (
	"bytes"
	"crypto/sha256"
	"encoding/gob"
	"encoding/hex"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"ordplan/plan"
	"ordplan/runner/fit"
)

// gobExecutor runs jobs through ExecuteJob and a gob round trip, as a
// remote worker would.
type gobExecutor struct{ path string }

func (g gobExecutor) Execute(jobs []Job) ([]*fit.Result, []error) {
	res := make([]*fit.Result, len(jobs))
	errs := make([]error, len(jobs))
	for i, j := range jobs {
		r, err := ExecuteJob(g.path, j)
		if err != nil {
			errs[i] = err
			continue
		}
		var buf bytes.Buffer
		if err := gob.NewEncoder(&buf).Encode(r); err != nil {
			errs[i] = err
			continue
		}
		var back fit.Result
		if err := gob.NewDecoder(&buf).Decode(&back); err != nil {
			errs[i] = err
			continue
		}
		res[i] = &back
	}
	return res, errs
}

// Fits executed elsewhere and shipped back give the same decisions, byte
// for byte.
func TestExecutorGivesSameDecisions(t *testing.T) {
	p := loadPlan(t, "gss_stepwise.yaml")
	local, _ := MarshalStable(BuildDecisions(runPlan(t, p, 0)))
	r, err := Run(p, Options{Executor: gobExecutor{p.Data.Path}})
	if err != nil {
		t.Fatal(err)
	}
	remote, _ := MarshalStable(BuildDecisions(r))
	if !bytes.Equal(local, remote) {
		t.Fatal("decisions differ when the fits run through the executor")
	}
}

// silentExecutor answers every job with neither a result nor an error.
type silentExecutor struct{}

func (silentExecutor) Execute(jobs []Job) ([]*fit.Result, []error) {
	return make([]*fit.Result, len(jobs)), make([]error, len(jobs))
}

// A job that comes back with neither a result nor an error is an error of
// its fit, with or without a sandwich step, never a panic or an empty fit.
func TestExecutorWithoutAnswer(t *testing.T) {
	d := &fit.Data{J: 2, Y: []int{0, 1, 0, 1}, X: []float64{0, 0, 1, 1}, Predictors: []string{"x"}}
	for _, sandwich := range []func(*fit.Result) error{nil, func(*fit.Result) error { return nil }} {
		e := &FitEntry{ID: "cumulative/parallel/logit"}
		err := fitGrid([]*FitEntry{e}, gridTarget{label: "y", data: d, settle: sandwich, remote: &remoteData{outcome: "y"}},
			Options{Executor: silentExecutor{}, Workers: 1})
		if err != nil {
			t.Fatal(err)
		}
		if e.Result != nil || !strings.Contains(e.Err, "no result and no error came back for this fit") {
			t.Fatalf("entry: result %v, error %q", e.Result, e.Err)
		}
	}
}

// holdingExecutor is gobExecutor that also takes the data handed over
// during a run (the imputed sets), as the queue's coordinator does, and
// reads each job's data from the file its hash names.
type holdingExecutor struct {
	gobExecutor
	dir   string
	files map[string]string // hash -> file
	jobs  []Job
}

func (h *holdingExecutor) HoldData(name string, b []byte) (string, error) {
	sum := sha256.Sum256(b)
	hash := hex.EncodeToString(sum[:])
	path := filepath.Join(h.dir, hash+filepath.Ext(name))
	if err := os.WriteFile(path, b, 0o644); err != nil {
		return "", err
	}
	h.files[hash] = path
	return hash, nil
}

func (h *holdingExecutor) Execute(jobs []Job) ([]*fit.Result, []error) {
	h.jobs = append(h.jobs, jobs...)
	res := make([]*fit.Result, len(jobs))
	errs := make([]error, len(jobs))
	for i, j := range jobs {
		path, ok := h.files[j.DataHash]
		if !ok {
			path = h.path
		}
		r, e := gobExecutor{path}.Execute([]Job{j})
		res[i], errs[i] = r[0], e[0]
	}
	return res, errs
}

// Fits of imputed sets executed elsewhere give the same decisions, byte
// for byte, as the local run: sets named in a stacked file and in one file
// per set (terms with a sample mean and quantile knots, frozen on set 1),
// and sets made by chained equations (handed over as data files, the
// logarithm of an imputed column among the terms). Every set's fits are
// jobs of one batch, each carrying the design frozen on set 1.
func TestImputedFitsThroughExecutor(t *testing.T) {
	dir := imputedFixture(t, 3, false)
	// The stacked sets as one file per set.
	b, _ := os.ReadFile(filepath.Join(dir, "stacked.csv"))
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	var names []string
	for k := 1; k <= 3; k++ {
		out := []string{"y,x1,x2"}
		for _, l := range lines[1:] {
			if strings.HasPrefix(l, fmt.Sprintf("%d,", k)) {
				out = append(out, strings.SplitN(l, ",", 2)[1])
			}
		}
		name := fmt.Sprintf("set%d.csv", k)
		os.WriteFile(filepath.Join(dir, name), []byte(strings.Join(out, "\n")+"\n"), 0o644)
		names = append(names, name)
	}
	terms := `[{name: x1s, column: x1, spline: {quantiles: [0.1, 0.5, 0.9]}}, {name: x2c, column: x2, centre: mean, scale: sd}]`
	plans := map[string]*plan.Plan{"chained": chainedFixture(t, "  imputation: {sets: 3, iterations: 2}")}
	for label, d := range map[string]string{
		"stacked": "{file: orig.csv, imputed: {file: stacked.csv, column: imp}}",
		"files":   "{file: orig.csv, imputed: {files: [" + strings.Join(names, ", ") + "]}}",
	} {
		src := "version: 1\ntitle: imputed\ndata: " + d + "\noutcomes: [{column: y}]\npredictors: " + terms + `
models: {approaches: [cumulative], effects: [parallel, partial, nonparallel], partial: {free: [x2c]}}
tests: {parallel_lines: [lr, wald]}
rules:
  - choose: {by: bic}
`
		path := filepath.Join(dir, label+".yaml")
		os.WriteFile(path, []byte(src), 0o644)
		plans[label] = loadPlanFile(t, path)
	}
	for _, label := range []string{"stacked", "files", "chained"} {
		p := plans[label]
		local, _ := MarshalStable(BuildDecisions(runPlan(t, p, 2)))
		ex := &holdingExecutor{gobExecutor: gobExecutor{p.Data.Path}, dir: t.TempDir(), files: map[string]string{}}
		r, err := Run(p, Options{Workers: 2, Executor: ex})
		if err != nil {
			t.Fatalf("%s: %v", label, err)
		}
		remote, _ := MarshalStable(BuildDecisions(r))
		if !bytes.Equal(local, remote) {
			t.Errorf("%s: decisions differ when the imputed sets' fits run through the executor", label)
		}
		im := r.Outcomes[0].Imputed
		per := len(r.Outcomes[0].Fits)
		if len(ex.jobs) != im.M*per || len(ex.files) == 0 {
			t.Fatalf("%s: %d jobs for %d sets of %d fits, %d files held", label, len(ex.jobs), im.M, per, len(ex.files))
		}
		hashes := map[string]bool{}
		for _, j := range ex.jobs {
			hashes[j.DataHash] = true
			if j.Design == nil || !strings.Contains(j.ID, "imputed set") {
				t.Fatalf("%s: job %s carries no frozen design or set", label, j.ID)
			}
		}
		if want := map[string]int{"stacked": 1, "files": 3, "chained": 3}[label]; len(hashes) != want {
			t.Errorf("%s: the jobs name %d data files, want %d", label, len(hashes), want)
		}
	}
}

// watchedExecutor is gobExecutor that says which jobs have finished, last
// job first (the order of completion is the executor's).
type watchedExecutor struct{ gobExecutor }

func (w watchedExecutor) ExecuteWatched(jobs []Job, finished func(k int)) ([]*fit.Result, []error) {
	res, errs := w.Execute(jobs)
	for k := len(jobs) - 1; k >= 0; k-- {
		finished(k)
	}
	return res, errs
}

// fitCounts records what a run's Progress hears.
type fitCounts struct {
	ids  []string
	last [2]int // done, total of the last call
	bad  string
}

func (c *fitCounts) Fitted(outcome, id string, done, total int) {
	if done != c.last[0]+1 || (c.last[1] != 0 && total != c.last[1]) {
		c.bad = fmt.Sprintf("%s: %d of %d after %d of %d", outcome, done, total, c.last[0], c.last[1])
	}
	c.ids, c.last = append(c.ids, id), [2]int{done, total}
}

// Fits made elsewhere are counted by the run's Progress as fits made here
// are: one call per fit, done counting up to the total, the fit's id.
func TestProgressOfFitsElsewhere(t *testing.T) {
	p := loadPlan(t, "gss_stepwise.yaml")
	var here, there fitCounts
	if _, err := Run(p, Options{Progress: &here, Workers: 2}); err != nil {
		t.Fatal(err)
	}
	if _, err := Run(p, Options{Progress: &there, Executor: watchedExecutor{gobExecutor{p.Data.Path}}}); err != nil {
		t.Fatal(err)
	}
	for _, c := range []*fitCounts{&here, &there} {
		if c.bad != "" || c.last[0] == 0 || c.last[0] != c.last[1] {
			t.Errorf("progress: %s; last %d of %d", c.bad, c.last[0], c.last[1])
		}
	}
	a, b := slices.Clone(here.ids), slices.Clone(there.ids)
	slices.Sort(a)
	slices.Sort(b)
	if !slices.Equal(a, b) {
		t.Errorf("fits counted here %v, elsewhere %v", a, b)
	}
}
