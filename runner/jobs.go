package runner

import (
	"errors"
	"fmt"
	"sync"

	"ordplan/runner/data"
	"ordplan/runner/design"
	"ordplan/runner/fit"
)

// gridTarget says where a grid's fits are made: the data here, the fit
// options and the step a usable fit takes (CovariancePolicy.Settle: the
// collinearity check, then the policy's sandwich), and how an
// Executor redoes the fits elsewhere (remote nil: here only).
type gridTarget struct {
	label  string // the outcome (and imputed set), for progress
	data   *fit.Data
	fit    fit.Options
	settle func(*fit.Result) error
	remote *remoteData
}

// remoteData is what a job needs to redo a fit elsewhere: the data file by
// content hash, how to read it and the design.
type remoteData struct {
	outcome     string
	set         string // "imputed set k/m", added to the jobs' ids; "" for the data file
	dataFile    string
	dataHash    string
	dataOptions data.Options
	design      *design.Frozen
}

// fitGrid is the one path by which the fits of a grid are made: by the
// run's Executor when there is one and the target can be redone
// elsewhere, else here, several at once. Either way a result lands in its
// entry (so the order of completion does not matter), a usable fit gets
// the step of CovariancePolicy.Settle, and an error is kept in the entry.
func fitGrid(entries []*FitEntry, t gridTarget, opt Options) error {
	return fitGrids([]gridPart{{entries: entries, target: t}}, opt)
}

// gridPart is one grid on its target: an outcome's data, or one imputed
// set.
type gridPart struct {
	entries []*FitEntry
	target  gridTarget
}

// fitGrids is fitGrid for the grids of several targets (the imputed
// sets): the Executor gets every fit as one batch, so that workers take
// fits of all sets at once; here the targets are fitted one after the
// other.
func fitGrids(parts []gridPart, opt Options) error {
	remote := opt.Executor != nil
	for _, p := range parts {
		remote = remote && p.target.remote != nil
	}
	if remote {
		return remoteJobs(opt.Executor, parts, opt.Progress, opt.Analysis)
	}
	for _, p := range parts {
		localJobs(p.entries, p.target, opt)
	}
	return nil
}

// settle stores a fit's result and error in its entry, after the step a
// usable fit takes (step: CovariancePolicy.Settle). Neither a result nor an error (a faulty executor)
// is an error of the entry.
func (e *FitEntry) settle(res *fit.Result, err error, step func(*fit.Result) error) {
	if res == nil && err == nil {
		err = errors.New("no result and no error came back for this fit (the executor lost it)")
	}
	if res != nil && e.ID != "" {
		// Messages about the fit (tests that cannot be computed) name it
		// as the report does: an auxiliary fit by its own id, not by the
		// candidate of its effect structure, and a backward stage model
		// as the grid names it.
		res.Name = e.ID
	}
	e.Result = res
	if err == nil && step != nil && res.OK() {
		err = step(res)
	}
	if err != nil {
		e.Err = err.Error()
	}
}

// counter tells a run's Progress of the fits of one grid (or batch) as
// they finish, fits made here and elsewhere alike.
type counter struct {
	progress    Progress
	label       string
	mu          sync.Mutex
	done, total int
}

// finished counts the fit id as done.
func (c *counter) finished(id string) {
	if c.progress == nil {
		return
	}
	c.mu.Lock()
	defer c.mu.Unlock()
	c.done++
	c.progress.Fitted(c.label, id, c.done, c.total)
}

// localJobs fits every entry here through fit.FitGrid, opt.Workers at
// once (each fit using that many goroutines over row blocks, so that the
// last fits of a grid keep every core busy); progress hears of each
// finished fit.
func localJobs(entries []*FitEntry, t gridTarget, opt Options) {
	count := &counter{progress: opt.Progress, label: t.label}
	settled := func(e *FitEntry, res *fit.Result, err error) {
		e.settle(res, err, t.settle)
		count.finished(e.ID)
	}
	var models []fit.Model
	var fitted, failed []*FitEntry
	var errs []error
	for _, e := range entries {
		if e.Err != "" {
			continue
		}
		count.total++
		m, err := e.Spec.Model()
		if err != nil {
			failed, errs = append(failed, e), append(errs, err)
			continue
		}
		models, fitted = append(models, m), append(fitted, e)
	}
	for k, e := range failed {
		settled(e, nil, errs[k])
	}
	fo := t.fit
	fo.Workers = opt.Workers
	fit.FitGrid(t.data, models, fo, opt.Workers, func(k int, res *fit.Result, err error) {
		settled(fitted[k], res, err)
	})
}

// remoteJobs dispatches the fits to the executor as jobs, one batch, and
// stores the results in their entries; progress hears of each finished
// fit when the executor says (a WatchedExecutor), under the outcome's name.
// The jobs carry the name of the sensitivity analysis they are of
// (analysis, "" for the primary analysis).
func remoteJobs(ex Executor, parts []gridPart, progress Progress, analysis string) error {
	var jobs []Job
	type slot struct {
		e      *FitEntry
		settle func(*fit.Result) error
	}
	var slots []slot
	for _, p := range parts {
		rd := p.target.remote
		for i, e := range p.entries {
			if e.Err != "" {
				continue
			}
			id := e.ID
			if rd.set != "" {
				id += " (" + rd.set + ")"
			}
			jobs = append(jobs, Job{Outcome: rd.outcome, Analysis: analysis, Index: i, ID: id, Spec: e.Spec, DataFile: rd.dataFile,
				DataHash: rd.dataHash, DataOptions: rd.dataOptions, Design: rd.design, FitOptions: p.target.fit})
			slots = append(slots, slot{e, p.target.settle})
		}
	}
	var results []*fit.Result
	var errs []error
	if w, ok := ex.(WatchedExecutor); ok && progress != nil && len(jobs) > 0 {
		count := &counter{progress: progress, label: jobs[0].Outcome, total: len(jobs)}
		results, errs = w.ExecuteWatched(jobs, func(k int) {
			if k >= 0 && k < len(slots) {
				count.finished(jobs[k].ID)
			}
		})
	} else {
		results, errs = ex.Execute(jobs)
	}
	if len(results) != len(jobs) || len(errs) != len(jobs) {
		return fmt.Errorf("the executor returned %d results for %d jobs", len(results), len(jobs))
	}
	for k, s := range slots {
		s.e.settle(results[k], errs[k], s.settle)
	}
	return nil
}
