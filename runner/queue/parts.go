package queue

import (
	"encoding/json"
	"errors"
	"fmt"
	"time"

	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// AddParts registers data held as parts (a plan's data.parts): the jobs
// of a run on them are fitted over the parts, each Newton evaluation
// summed over the workers (FitPartitioned), where the partitioned path can
// fit them; the others are fitted here, on the parts read as one data
// set, and the log says why. It returns the data's hash as the run
// records it (runner.PartsHash), or the index of the part it could not
// read and why.
func (co *Coordinator) AddParts(paths []string) (string, int, error) {
	var hashes []string
	for i, p := range paths {
		h, err := HashFile(p)
		if err != nil {
			return "", i, fmt.Errorf("data part: %v", err)
		}
		hashes = append(hashes, h)
	}
	h := runner.PartsHash(hashes)
	co.parts[h] = paths
	return h, -1, nil
}

// notPartitioned says why the partitioned path cannot fit a job ("" when
// it can): it sums plain columns over the parts, under model-based
// observed-information errors, without constrained (or stereotype) terms.
func notPartitioned(j runner.Job) string {
	if m, err := j.Spec.Model(); err == nil {
		if err := fit.OverParts(m); err != nil {
			return err.Error()
		}
	}
	switch {
	case j.Design != nil:
		return "its terms (categorical columns, transformations, interactions) take constants from all rows"
	case j.FitOptions.Covariance != fit.Observed:
		return "partitioned fits give observed-information errors only"
	}
	return ""
}

// executeParts fits the jobs of a run on data held as parts, in job order.
func (co *Coordinator) executeParts(jobs []runner.Job, paths []string, finished func(k int)) ([]*Reply, error) {
	if len(jobs) == 0 {
		return nil, nil
	}
	start := time.Now()
	outcome := jobs[0].Label()
	type described struct {
		whole fit.Whole
		refs  []PartitionRef
		dopt  data.Options
	}
	wholes := map[string]*described{} // by data options
	read := partsRead{}
	replies := make([]*Reply, len(jobs))
	over := 0
	for i, j := range jobs {
		r := &Reply{Index: i, ID: j.ID, Worker: "(coordinator)"}
		replies[i] = r
		if i > 0 && finished != nil {
			finished(i - 1) // the jobs are done in order: the one before is
		}
		if why := notPartitioned(j); why != "" {
			if co.log != nil {
				fmt.Fprintf(co.log, "queue: %s: %s fitted here, not over the parts: %s\n", outcome, j.ID, why)
			}
			res, err := read.fit(paths, j)
			r.Result = res
			if err != nil {
				r.Result, r.Err = nil, err.Error()
			}
			continue
		}
		key, err := json.Marshal(j.DataOptions)
		if err != nil {
			return nil, err
		}
		w, ok := wholes[string(key)]
		if !ok {
			// Each part is read once here; without declared categories
			// the whole data's codes come from all parts, and every part
			// is coded by them (FitPartitioned).
			dopt := j.DataOptions
			whole, refs, kept, err := PartitionFiles(paths, dopt)
			if err != nil {
				return nil, fmt.Errorf("queue: %s: %v", outcome, err)
			}
			w = &described{whole: whole, refs: refs, dopt: PartOptions(dopt, kept)}
			wholes[string(key)] = w
		}
		m, err := j.Spec.Model()
		if err != nil {
			r.Err = err.Error()
			continue
		}
		res, err := FitPartitioned(co.ctx, co.c, w.refs, w.whole, m, PartitionOptions{Data: w.dopt, Fit: j.FitOptions})
		if err != nil {
			if fe := (*FaultError)(nil); errors.As(err, &fe) {
				return nil, fe
			}
			if co.ctx.Err() != nil {
				return nil, fmt.Errorf("queue: %s: %v", outcome, err)
			}
			r.Err = err.Error()
			continue
		}
		r.Result = res
		over++
	}
	if finished != nil {
		finished(len(jobs) - 1)
	}
	if co.log != nil {
		fmt.Fprintf(co.log, "queue: %s: %d of %d fits summed over %d parts by the workers, in %.1fs\n", outcome, over, len(jobs), len(paths), time.Since(start).Seconds())
	}
	return replies, nil
}

// loadParts reads data held as parts (a variable for the tests, which
// count the reads).
var loadParts = data.LoadFiles

// partsRead keeps the parts read as one data set for the jobs fitted on
// the coordinator, by data options: the jobs of an outcome share one
// read (they were read again for each job), and a fit does not change
// the rows (runner.ExecuteJobOn).
type partsRead map[string]*data.Dataset

// fit fits job j here on the parts, read once for its data options.
func (pr partsRead) fit(paths []string, j runner.Job) (*fit.Result, error) {
	key, err := json.Marshal(j.DataOptions)
	if err != nil {
		return nil, err
	}
	ds, ok := pr[string(key)]
	if !ok {
		if ds, err = loadParts(paths, j.DataOptions); err != nil {
			return nil, err
		}
		pr[string(key)] = ds
	}
	return runner.ExecuteJobOn(ds, j)
}
