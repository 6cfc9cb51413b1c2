package runner

import (
	"fmt"

	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// Job is one fit of a plan run with everything needed to redo it
// elsewhere: the data file (by content hash), how to read it, the model and
// the fit options.
type Job struct {
	Outcome     string
	Index       int // position in the outcome's list of fits
	ID          string
	Spec        Spec
	DataFile    string // name of the data file, for messages
	DataHash    string // hex SHA-256 of the data file bytes
	DataOptions data.Options
	// Design, when set, turns the columns read into the design columns
	// (rebuilt on the same rows, so every frozen constant is the same).
	Design     *design.Spec `json:",omitempty"`
	FitOptions fit.Options
}

// Executor fits jobs somewhere (for example on remote workers) and returns
// one result or error per job, in job order.
type Executor interface {
	Execute(jobs []Job) ([]*fit.Result, []error)
}

// ExecuteJob fits one job on the data file at path (whose bytes must hash
// to job.DataHash; the caller checks). Local runs and remote workers share
// it, so both give the same results.
func ExecuteJob(path string, job Job) (*fit.Result, error) {
	return ExecuteJobFiles([]string{path}, job)
}

// ExecuteJobFiles is ExecuteJob on data held as parts (data.LoadFiles).
func ExecuteJobFiles(paths []string, job Job) (*fit.Result, error) {
	ds, err := data.LoadFiles(paths, job.DataOptions)
	if err != nil {
		return nil, err
	}
	m, err := job.Spec.Model()
	if err != nil {
		return nil, err
	}
	d := FitData(ds)
	if job.Design != nil {
		if _, d, err = buildDesign(*job.Design, ds); err != nil {
			return nil, err
		}
	}
	return fit.Fit(d, m, job.FitOptions)
}

// remoteJobs dispatches the outcome's fits to the executor and stores the
// results in their entries.
func remoteJobs(ex Executor, entries []*FitEntry, p *ruleContext) error {
	var jobs []Job
	var idx []int
	for i, e := range entries {
		if e.Err != "" {
			continue
		}
		jobs = append(jobs, Job{Outcome: p.outcome, Index: i, ID: e.ID, Spec: e.Spec, DataFile: p.dataFile,
			DataHash: p.dataHash, DataOptions: p.dataOptions, Design: p.design, FitOptions: p.fitOptions})
		idx = append(idx, i)
	}
	results, errs := ex.Execute(jobs)
	if len(results) != len(jobs) || len(errs) != len(jobs) {
		return fmt.Errorf("the executor returned %d results for %d jobs", len(results), len(jobs))
	}
	for k, i := range idx {
		e := entries[i]
		if errs[k] != nil {
			e.Err = errs[k].Error()
			continue
		}
		e.Result = results[k]
		if p.sandwich != nil && e.Result.OK() {
			if err := p.sandwich(e.Result); err != nil {
				e.Err = err.Error()
			}
		}
	}
	return nil
}

// ruleContext carries what a remote dispatch needs from the run.
type ruleContext struct {
	outcome     string
	dataFile    string
	dataHash    string
	dataOptions data.Options
	fitOptions  fit.Options
	sandwich    func(*fit.Result) error
	design      *design.Spec
}
