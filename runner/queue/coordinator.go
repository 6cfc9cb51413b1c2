package queue

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"sync"
	"time"

	"ordplan/runner"
	"ordplan/runner/fit"
)

// Coordinator runs a plan's fits on workers: it is the plan run's
// runner.Executor.
type Coordinator struct {
	ctx      context.Context
	c        *Client
	planHash string
	log      io.Writer
	files    map[string]string   // data hash -> local path
	held     map[string]bool     // data hashes handed over by the run and uploaded (HoldData)
	parts    map[string][]string // hash of data held as parts -> the parts' paths
	mu       sync.Mutex
	err      error
	stats    []BatchStats
}

var _ runner.DataHolder = (*Coordinator)(nil)

// NewCoordinator returns an executor for a run of the plan with the given
// hash. ctx bounds every wait for workers; log (may be nil) gets one line
// per batch.
func NewCoordinator(ctx context.Context, c *Client, planHash string, log io.Writer) *Coordinator {
	if c.Log == nil {
		c.Log = log
	}
	return &Coordinator{ctx: ctx, c: c, planHash: planHash, log: log, files: map[string]string{}, held: map[string]bool{}, parts: map[string][]string{}}
}

// AddData registers a local data file so that jobs on it can upload it to
// the data store; it returns the file's hash.
func (co *Coordinator) AddData(path string) (string, error) {
	h, err := HashFile(path)
	if err != nil {
		return "", fmt.Errorf("data file: %v", err)
	}
	co.files[h] = path
	return h, nil
}

// HoldData uploads data made or named during the run (the imputed sets of
// a plan) to the data store, so that jobs can name them by the hash it
// returns; the coordinator keeps no copy. It implements runner.DataHolder.
func (co *Coordinator) HoldData(name string, b []byte) (string, error) {
	h := hashBytes(b)
	if err := co.c.putBytes(co.ctx, b, h, name); err != nil {
		return "", fmt.Errorf("queue: %v", err)
	}
	co.mu.Lock()
	defer co.mu.Unlock()
	co.held[h] = true
	return h, nil
}

// FaultError is a job that failed through a fault of a worker or of the
// queue (Reply.Fault), after its retries: the run stops with it rather
// than count the model as one that could not be fitted.
type FaultError struct {
	Job, Worker, Text string
}

func (e *FaultError) Error() string {
	w := e.Worker
	if w == "" {
		w = "a worker"
	} else {
		w = "worker " + w
	}
	return fmt.Sprintf("queue: job %s failed on %s, not in the fit: %s; the run stops, since such a failure must not count as a model that could not be fitted (check the worker, then run again: fits already made are reused)", e.Job, w, e.Text)
}

// Err returns the first failure of the queue itself (lost connection,
// cancelled wait). The per-job errors Execute returns then only repeat it:
// a run with Err set must not be reported.
func (co *Coordinator) Err() error {
	co.mu.Lock()
	defer co.mu.Unlock()
	return co.err
}

// Stats returns the statistics of every batch run so far.
func (co *Coordinator) Stats() []BatchStats {
	co.mu.Lock()
	defer co.mu.Unlock()
	return append([]BatchStats(nil), co.stats...)
}

// RunID identifies a batch of a plan's fits: a hash of the format
// version, the program's build (Build), the plan hash and the job list (which holds the data
// hash, the data options, the models and the fit options).
func RunID(planHash string, jobs []runner.Job) (string, error) {
	h := sha256.New()
	fmt.Fprintf(h, "%s\n%s\n%s\n", formatVersion, Build(), planHash)
	enc := json.NewEncoder(h)
	for _, j := range jobs {
		if err := enc.Encode(j); err != nil {
			return "", err
		}
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// Execute publishes the jobs, collects one result or error per job, in job
// order, and reuses results a previous coordinator of the same run left.
func (co *Coordinator) Execute(jobs []runner.Job) ([]*fit.Result, []error) {
	return co.ExecuteWatched(jobs, nil)
}

var _ runner.WatchedExecutor = (*Coordinator)(nil)

// ExecuteWatched is Execute calling finished(k) (when not nil) as job k
// gets its reply, one call at a time: the run's progress lines.
func (co *Coordinator) ExecuteWatched(jobs []runner.Job, finished func(k int)) ([]*fit.Result, []error) {
	results := make([]*fit.Result, len(jobs))
	errs := make([]error, len(jobs))
	replies, err := co.execute(jobs, finished)
	if err != nil {
		co.mu.Lock()
		if co.err == nil {
			co.err = err
		}
		co.mu.Unlock()
		for i := range errs {
			errs[i] = err
		}
		return results, errs
	}
	for i, r := range replies {
		switch {
		case r.Fault:
			err := &FaultError{Job: jobs[i].ID, Worker: r.Worker, Text: r.Err}
			co.mu.Lock()
			if co.err == nil {
				co.err = err
			}
			co.mu.Unlock()
			errs[i] = err
		case r.Err != "":
			errs[i] = errors.New(r.Err)
		case r.Result == nil:
			errs[i] = fmt.Errorf("%s: the worker %s returned no result", jobs[i].ID, r.Worker)
		default:
			results[i] = r.Result
		}
	}
	return results, errs
}

// upload puts the data file of job j into the data store: a registered
// file (data handed over by HoldData is there already).
func (co *Coordinator) upload(j runner.Job) error {
	co.mu.Lock()
	held := co.held[j.DataHash]
	co.mu.Unlock()
	if held {
		return nil
	}
	path, ok := co.files[j.DataHash]
	if !ok {
		return fmt.Errorf("queue: no local file registered for data %s (sha256 %s)", j.DataFile, j.DataHash)
	}
	if err := co.c.PutData(co.ctx, path, j.DataHash); err != nil {
		return fmt.Errorf("queue: %v", err)
	}
	return nil
}

func (co *Coordinator) execute(jobs []runner.Job, finished func(k int)) ([]*Reply, error) {
	if err := co.Err(); err != nil {
		return nil, err
	}
	if len(jobs) == 0 {
		return nil, nil
	}
	if paths, ok := co.parts[jobs[0].DataHash]; ok {
		return co.executeParts(jobs, paths, finished)
	}
	id, err := RunID(co.planHash, jobs)
	if err != nil {
		return nil, err
	}
	uploaded := map[string]bool{}
	tasks := make([]*Task, len(jobs))
	for i := range jobs {
		j := jobs[i]
		if !uploaded[j.DataHash] {
			if err := co.upload(j); err != nil {
				return nil, err
			}
			uploaded[j.DataHash] = true
		}
		tasks[i] = &Task{Batch: id, Index: i, ID: j.ID, Kind: KindFit, Fit: &j}
	}
	start := time.Now()
	outcome := jobs[0].Label()
	started := func(st BatchStats) {
		if co.log != nil {
			fmt.Fprintf(co.log, "queue: %s: run %s: %d fits: %d results present, %d jobs still queued, %d published\n",
				outcome, id[:12], st.Jobs, st.Present, st.Queued, st.Published)
		}
	}
	replies, st, err := co.c.runBatch(co.ctx, id, tasks, batchHooks{started: started, finished: finished})
	co.mu.Lock()
	co.stats = append(co.stats, st)
	co.mu.Unlock()
	if err != nil {
		return nil, fmt.Errorf("queue: %s: %v", outcome, err)
	}
	if co.log != nil {
		fmt.Fprintf(co.log, "queue: %s: all %d fits collected in %.1fs\n", outcome, len(jobs), time.Since(start).Seconds())
	}
	return replies, nil
}
