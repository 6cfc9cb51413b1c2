package runner

import (
	"bytes"
	"encoding/gob"
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
