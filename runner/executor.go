package runner

import (
	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// Job is one fit of a plan run with everything needed to redo it
// elsewhere: the data file (by content hash), how to read it, the model and
// the fit options.
type Job struct {
	Outcome string `json:"outcome"` // for messages
	// Analysis is the sensitivity analysis whose fit this is ("" for the
	// primary analysis), for messages (Label); not in the job's JSON, so
	// that it is no part of the batch's identity (the queue's RunID).
	Analysis    string       `json:"-"`
	Index       int          `json:"index"` // position in the outcome's list of fits
	ID          string       `json:"id"`
	Spec        Spec         `json:"spec"`
	DataFile    string       `json:"data_file"` // name of the data file, for messages
	DataHash    string       `json:"data_hash"` // hex SHA-256 of the data file bytes
	DataOptions data.Options `json:"data_options"`
	// Design, when set, turns the columns read into the design columns
	// with the constants frozen where the design was built (the data
	// file's rows, or imputed set 1 of imputed data).
	Design     *design.Frozen `json:"design,omitempty"`
	FitOptions fit.Options    `json:"fit_options"`
}

// Label names the job's outcome in messages and log lines, with its
// sensitivity analysis (AnalysisOutcome).
func (j Job) Label() string { return AnalysisOutcome(j.Analysis, j.Outcome) }

// AnalysisOutcome names an outcome of a run in progress and log lines:
// the outcome, or under a sensitivity analysis "sensitivity analysis
// NAME: OUTCOME".
func AnalysisOutcome(analysis, outcome string) string {
	if analysis == "" {
		return outcome
	}
	return "sensitivity analysis " + analysis + ": " + outcome
}

// Executor fits jobs somewhere (for example on remote workers) and returns
// one result or error per job, in job order.
type Executor interface {
	Execute(jobs []Job) ([]*fit.Result, []error)
}

// WatchedExecutor is an Executor that also says, while it runs a batch,
// which jobs have finished: finished(k) for job k, once per job, one call
// at a time. The run's Progress then hears of fits made elsewhere as of
// fits made here.
type WatchedExecutor interface {
	Executor
	ExecuteWatched(jobs []Job, finished func(k int)) ([]*fit.Result, []error)
}

// DataHolder is an Executor that also takes data made or named during the
// run (the imputed sets), so that its jobs can name them: it stores b
// where its jobs read data (the queue's data store) under its hash, which
// it returns; name is for messages and the format. b may be dropped after
// the call, so the sets need not all be in memory at once.
type DataHolder interface {
	HoldData(name string, b []byte) (string, error)
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
	return ExecuteJobOn(ds, job)
}

// ExecuteJobOn fits one job on its data as read (with job.DataOptions);
// the fit does not change ds, so several jobs may share one read.
func ExecuteJobOn(ds *data.Dataset, job Job) (*fit.Result, error) {
	m, err := job.Spec.Model()
	if err != nil {
		return nil, err
	}
	d := FitData(ds)
	if job.Design != nil {
		dz, err := job.Design.Design()
		if err != nil {
			return nil, err
		}
		if d, err = frozenData(dz, ds); err != nil {
			return nil, err
		}
	}
	return fit.Fit(d, m, job.FitOptions)
}
