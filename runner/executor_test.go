package runner

import (
	"bytes"
	"encoding/gob"
	"strings"
	"testing"

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
		err := fitGrid([]*FitEntry{e}, gridTarget{label: "y", data: d, sandwich: sandwich, remote: &remoteData{outcome: "y"}},
			Options{Executor: silentExecutor{}, Workers: 1})
		if err != nil {
			t.Fatal(err)
		}
		if e.Result != nil || !strings.Contains(e.Err, "no result and no error came back for this fit") {
			t.Fatalf("entry: result %v, error %q", e.Result, e.Err)
		}
	}
}
