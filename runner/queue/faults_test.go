package queue

import (
	"context"
	"errors"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
	"ordplan/runner/queue/localserver"
)

// storeReply writes a reply as a misbehaving or late worker would.
func storeReply(t *testing.T, ctx context.Context, c *Client, key string, r *Reply, overwrite bool) {
	t.Helper()
	payload, err := encode(r)
	if err != nil {
		t.Fatal(err)
	}
	b := seal(testSecret, sealReply, key, payload)
	if overwrite {
		_, err = c.results.Put(ctx, key, b)
	} else {
		_, err = c.results.Create(ctx, key, b)
	}
	if err != nil {
		t.Fatal(err)
	}
}

// storeFirstAndLate stores a valid reply to job 0 of the plan's batch (999
// iterations: the first) and overwrites it with another (777: the late
// one); it returns the batch id.
func storeFirstAndLate(t *testing.T, ctx context.Context, c *Client, path string, jobs []runner.Job) string {
	t.Helper()
	id, err := RunID("plan-hash", jobs)
	if err != nil {
		t.Fatal(err)
	}
	first, err := runner.ExecuteJob(path, jobs[0])
	if err != nil {
		t.Fatal(err)
	}
	first.Iterations = 999
	storeReply(t, ctx, c, resultKey(id, 0), &Reply{Batch: id, Index: 0, ID: jobs[0].ID, Worker: "first", Result: first}, false)
	late := *first
	late.Iterations = 777
	storeReply(t, ctx, c, resultKey(id, 0), &Reply{Batch: id, Index: 0, ID: jobs[0].ID, Worker: "late", Result: &late}, true)
	return id
}

// The first reply to a job wins: a worker's duplicate, a later overwrite
// and entries of unknown runs or keys are ignored.
func TestDuplicateAndForeignRepliesIgnored(t *testing.T) {
	q := newTestQueue(t, 60*time.Second, fit.ParallelEffects, fit.NonparallelEffects)
	ctx, url, c, path, jobs := q.ctx, q.url, q.c, q.path, q.jobs
	clog := &LogBuffer{}
	co := q.coordinator(t, clog)
	done := executeAsync(co, jobs)
	waitFor(t, 10*time.Second, "the jobs in the stream", func() bool {
		info, err := c.jobs.Info(ctx)
		return err == nil && info.State.Msgs == 2
	})
	id := storeFirstAndLate(t, ctx, c, path, jobs)
	other := strings.Repeat("f", 64)
	storeReply(t, ctx, c, resultKey(other, 1), &Reply{Batch: other, Index: 1, ID: jobs[1].ID, Err: "foreign"}, false)
	storeReply(t, ctx, c, id+".x", &Reply{Batch: id, Index: 1, ID: jobs[1].ID, Err: "bad key"}, false)
	// The worker computes both queued jobs; its reply to job 0 is a duplicate.
	log := startWorker(t, url, "w1", 5*time.Second, 0)
	var o executed
	select {
	case o = <-done:
	case <-ctx.Done():
		t.Fatal("the coordinator did not finish")
	}
	if o.errs[0] != nil || o.errs[1] != nil {
		t.Fatalf("errors: %v", o.errs)
	}
	if o.res[0].Iterations != 999 {
		t.Errorf("job 0: the reply with %d iterations was taken, not the first; coordinator log:\n%s", o.res[0].Iterations, clog.String())
	}
	if !strings.Contains(clog.String(), "ignored a later reply") {
		t.Errorf("job 0: the overwrite is not logged:\n%s", clog.String())
	}
	want, _ := runner.ExecuteJob(path, jobs[1])
	if math.Float64bits(o.res[1].LogLik) != math.Float64bits(want.LogLik) {
		t.Errorf("job 1: %v, want %v", o.res[1].LogLik, want.LogLik)
	}
	waitFor(t, 10*time.Second, "the duplicate dropped", func() bool {
		return strings.Contains(log.String(), "duplicate is dropped")
	})
	if e, err := c.results.Get(ctx, resultKey(id, 0)); err != nil || e.Revision() == 0 {
		t.Fatalf("key: %v", err)
	}
}

// A worker refuses data whose bytes do not hash to the job's hash; the
// coordinator replaces such a copy before publishing.
func TestDataHashMismatchRefused(t *testing.T) {
	q := newTestQueue(t, 60*time.Second, fit.ParallelEffects)
	ctx, url, c, jobs := q.ctx, q.url, q.c, q.jobs
	if _, err := c.data.PutBytes(ctx, jobs[0].DataHash, []byte("warm,yr89\n1,0\n2,1\n")); err != nil {
		t.Fatal(err)
	}
	startWorker(t, url, "w1", 5*time.Second, 0)
	task := &Task{Batch: "mismatch", Index: 0, ID: jobs[0].ID, Kind: KindFit, Fit: &jobs[0]}
	replies, _, err := c.runBatch(ctx, "mismatch", []*Task{task}, batchHooks{})
	if err != nil {
		t.Fatal(err)
	}
	if r := replies[0]; r.Result != nil || !strings.Contains(r.Err, "refusing to fit") || !strings.Contains(r.Err, jobs[0].DataHash) {
		t.Fatalf("reply: %+v", r)
	}
	co := q.coordinator(t, nil)
	res, errs := co.Execute(jobs)
	if errs[0] != nil || !res[0].OK() {
		t.Fatalf("after the coordinator's upload: %v", errs[0])
	}
}

// A job that takes longer than the ack deadline stays with its worker,
// which keeps it with in-progress acknowledgements: it is delivered once.
func TestLongJobKeptByInProgressAcks(t *testing.T) {
	q := newTestQueue(t, 60*time.Second, fit.ParallelEffects)
	ctx, url, c, path, jobs := q.ctx, q.url, q.c, q.path, q.jobs
	if err := c.PutData(ctx, path, jobs[0].DataHash); err != nil {
		t.Fatal(err)
	}
	slow := startWorker(t, url, "slow", time.Second, 3*time.Second)
	task := &Task{Batch: "long", Index: 0, ID: jobs[0].ID, Kind: KindFit, Fit: &jobs[0]}
	type out struct {
		replies []*Reply
		err     error
	}
	done := make(chan out, 1)
	go func() {
		r, _, err := c.runBatch(ctx, "long", []*Task{task}, batchHooks{})
		done <- out{r, err}
	}()
	waitFor(t, 10*time.Second, "the slow worker to take the job", func() bool { return strings.Contains(slow.String(), "started") })
	startWorker(t, url, "fast", time.Second, 0)
	o := <-done
	if o.err != nil {
		t.Fatal(o.err)
	}
	if r := o.replies[0]; r.Worker != "slow" || r.Delivered != 1 || r.Err != "" {
		t.Fatalf("reply from %s at delivery %d (%s): the job was handed out again", r.Worker, r.Delivered, r.Err)
	}
}

// A partition holding one outcome category is fitted with the others, as
// the rows are when read as one data set (the whole data has both
// categories): the same log-likelihood and estimates as the local fit of
// all rows (invented rows).
func TestPartitionWithOneCategoryFitted(t *testing.T) {
	ctx := testContext(t, 30*time.Second)
	url := localserver.ForTest(t)
	c := connect(t, ctx, url)
	startWorker(t, url, "w1", 5*time.Second, 0)
	dir := t.TempDir()
	parts := []PartitionRef{writePart(t, dir, "a.csv", "y,x\n1,0\n2,1\n1,1\n"), writePart(t, dir, "b.csv", "y,x\n2,0\n2,1\n")}
	whole := fit.Whole{J: 2, Predictors: []string{"x"}, Categories: []string{"1", "2"}, Counts: []float64{2, 3}, Rows: 5}
	m, _ := runner.Spec{Approach: fit.Cumulative, Link: fit.Logit, Predictors: []string{"x"}}.Model()
	got, err := FitPartitioned(ctx, c, parts, whole, m, PartitionOptions{Data: data.Options{Outcome: "y", Predictors: []string{"x"}}})
	if err != nil {
		t.Fatal(err)
	}
	all := &fit.Data{J: 2, Predictors: []string{"x"}, Categories: []string{"1", "2"}, Y: []int{0, 1, 0, 1, 1}, X: []float64{0, 1, 1, 0, 1}}
	local, err := fit.Fit(all, m, fit.Options{})
	if err != nil || !local.OK() || !got.OK() || math.Abs(got.LogLik-local.LogLik) > 1e-8 {
		t.Fatalf("over the parts %s %v, here %v (%v)", got.Status, got.LogLik, local, err)
	}
	for i := range local.Estimates {
		if math.Abs(got.Estimates[i]-local.Estimates[i]) > 1e-7 {
			t.Errorf("%s: %v over the parts, %v here", local.ParamNames[i], got.Estimates[i], local.Estimates[i])
		}
	}
}

// A reply overwritten before the coordinator reads it does not displace
// it: the bucket keeps a key's revisions, and the coordinator takes the
// first valid one in revision order, whenever it starts watching. The
// overwrite is stored before the coordinator starts (a restarted
// coordinator, or a live watch the server has not yet fed), which forces
// the interleaving without timing.
func TestOverwrittenReplyBeforeWatchIgnored(t *testing.T) {
	q := newTestQueue(t, 60*time.Second, fit.ParallelEffects)
	ctx, c, path, jobs := q.ctx, q.c, q.path, q.jobs
	storeFirstAndLate(t, ctx, c, path, jobs)
	clog := &LogBuffer{}
	co := q.coordinator(t, clog)
	res, errs := co.Execute(jobs)
	if errs[0] != nil {
		t.Fatal(errs[0])
	}
	if res[0].Iterations != 999 {
		t.Errorf("the reply with %d iterations was taken, not the first; coordinator log:\n%s", res[0].Iterations, clog.String())
	}
	if !strings.Contains(clog.String(), "ignored a later reply") {
		t.Errorf("the overwrite is not logged:\n%s", clog.String())
	}
}

// A worker's error reply is the answer of one run, not a result kept for
// the next: run 1 gets job 0's error (stored as a worker stores the reply
// of a panic, under the job's key, while the job waits in the stream),
// and a rerun on the same server computes the job again and gets the fit
// of the whole file (General Social Survey extract, Long 1997), instead
// of the stale error.
func TestStoredErrorNotReused(t *testing.T) {
	q := newTestQueue(t, 60*time.Second, fit.ParallelEffects, fit.NonparallelEffects)
	ctx, url, c, path, jobs := q.ctx, q.url, q.c, q.path, q.jobs
	id, err := RunID("plan-hash", jobs)
	if err != nil {
		t.Fatal(err)
	}
	done := make(chan []error, 1)
	co := q.coordinator(t, nil)
	go func() {
		_, errs := co.Execute(jobs)
		done <- errs
	}()
	waitFor(t, 10*time.Second, "the jobs in the stream", func() bool {
		info, err := c.jobs.Info(ctx)
		return err == nil && info.State.Msgs == 2
	})
	const stale = "internal error on worker w0: runtime error: index out of range [3] with length 3"
	storeReply(t, ctx, c, resultKey(id, 0), &Reply{Batch: id, Index: 0, ID: jobs[0].ID, Worker: "w0", Err: jobs[0].ID + ": " + stale}, false)
	startWorker(t, url, "w1", 5*time.Second, 0)
	var errs []error
	select {
	case errs = <-done:
	case <-ctx.Done():
		t.Fatal("run 1 did not finish")
	}
	if errs[0] == nil || !strings.Contains(errs[0].Error(), stale) || errs[1] != nil {
		t.Fatalf("run 1: %v, want job 0's error and job 1's fit", errs)
	}
	clog := &LogBuffer{}
	res, errs := q.coordinator(t, clog).Execute(jobs)
	if errs[0] != nil || errs[1] != nil {
		t.Fatalf("the rerun: %v; coordinator log:\n%s", errs, clog.String())
	}
	for i, j := range jobs {
		want, err := runner.ExecuteJob(path, j)
		if err != nil {
			t.Fatal(err)
		}
		if math.Float64bits(res[i].LogLik) != math.Float64bits(want.LogLik) {
			t.Errorf("the rerun's job %d: %v, want %v", i, res[i].LogLik, want.LogLik)
		}
	}
	if !strings.Contains(clog.String(), "computed again") {
		t.Errorf("the coordinator does not say the stored error is computed again:\n%s", clog.String())
	}
}

// A worker whose cache folder cannot hold files (here: a file) does not
// say it is ready: it stops with a message naming the folder.
func TestWorkerWithUnusableCacheRefuses(t *testing.T) {
	q := newTestQueue(t, 30*time.Second, fit.ParallelEffects)
	file := filepath.Join(t.TempDir(), "afile")
	if err := os.WriteFile(file, []byte("not a folder\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	log := &LogBuffer{}
	w := &Worker{Client: connect(t, q.ctx, q.url), Name: "badcache", CacheDir: file, Log: log}
	err := w.Run(q.ctx)
	if err == nil || !strings.Contains(err.Error(), "data cache "+file) || !strings.Contains(err.Error(), "--cache") {
		t.Fatalf("Run: %v", err)
	}
	if strings.Contains(log.String(), "ready") {
		t.Errorf("the worker said it was ready: %s", log)
	}
}

// A job that fails through a fault of the worker (here: a limit it sets
// below what the job asks) is tried again, then reported as such: the
// coordinator's error is set, so the run stops instead of counting the
// model as one that could not be fitted; a good worker beside a bad one
// gets the jobs done, every result equal to the fit made here.
func TestWorkerFaultStopsRunOrIsRetried(t *testing.T) {
	q := newTestQueue(t, 90*time.Second, fit.ParallelEffects, fit.NonparallelEffects)
	bad := func(url, name string, pause time.Duration) *LogBuffer {
		ctx, cancel := context.WithCancel(context.Background())
		log := &LogBuffer{}
		w := &Worker{Client: connect(t, ctx, url), Name: name, CacheDir: t.TempDir(), AckWait: 5 * time.Second, Log: log,
			Limits: Limits{Predictors: 1}, faultPause: pause}
		done := make(chan struct{})
		go func() { defer close(done); w.Run(ctx) }()
		t.Cleanup(func() { cancel(); <-done })
		waitFor(t, 10*time.Second, name+" ready", func() bool { return strings.Contains(log.String(), "ready") })
		return log
	}
	log := bad(q.url, "w-bad", 50*time.Millisecond)
	co := q.coordinator(t, nil)
	res, errs := co.Execute(q.jobs)
	var fe *FaultError
	if co.Err() == nil || !errors.As(co.Err(), &fe) || fe.Worker != "w-bad" {
		t.Fatalf("coordinator error %v; errors %v", co.Err(), errs)
	}
	for i, err := range errs {
		if res[i] != nil || err == nil || !strings.Contains(err.Error(), "not in the fit") || !strings.Contains(err.Error(), "has 6 predictors; this worker allows at most 1 ") {
			t.Errorf("job %d: result %v, error %v", i, res[i] != nil, err)
		}
	}
	if !strings.Contains(log.String(), "left for another try; this worker takes its next job in 50ms, so that another can take this one") ||
		!strings.Contains(log.String(), "left for another try; this worker takes its next job in 100ms,") {
		t.Errorf("no retry, or no pause growing, in the worker's log:\n%s", log)
	}

	// A good worker beside the bad one, busy with a job for 2.5 s when the
	// bad one fails the other: the bad worker waits 2 s before its next
	// job, so the good one takes it, and every job is done, as here. The
	// bad worker took the job again after 1 s, and again, and the run
	// stopped on its third fault.
	q2 := newTestQueue(t, 90*time.Second, fit.ParallelEffects, fit.NonparallelEffects)
	blog := bad(q2.url, "w-bad2", 0)
	glog := startWorker(t, q2.url, "w-good", 5*time.Second, 2500*time.Millisecond)
	defer func() {
		if t.Failed() {
			t.Logf("bad:\n%s\ngood:\n%s", blog, glog)
		}
	}()
	clog := &LogBuffer{}
	co2 := q2.coordinator(t, clog)
	res2, errs2 := co2.Execute(q2.jobs)
	if co2.Err() != nil {
		t.Fatalf("with a good worker: %v", co2.Err())
	}
	// The coordinator says the bad worker's fault once, at its first.
	said := regexp.MustCompile(`queue: worker w-bad2 failed job cumulative/\S+ through a fault of its own, not of the fit \(delivery 1; left for another try, and that worker waits before its next job\): job cumulative/\S+ has 6 predictors; this worker allows at most 1 `)
	if n := clog.Count("queue: worker w-bad2 failed"); n != 1 || !said.MatchString(clog.String()) {
		t.Errorf("the coordinator said the bad worker's fault %d times, want once:\n%s", n, clog)
	}
	for i, j := range q2.jobs {
		local, err := runner.ExecuteJob(q2.path, j)
		if errs2[i] != nil || err != nil {
			t.Fatalf("job %d: %v / %v", i, errs2[i], err)
		}
		if res2[i].LogLik != local.LogLik {
			t.Errorf("job %d: log-likelihood %v, here %v", i, res2[i].LogLik, local.LogLik)
		}
	}
}
