package queue

// A hostile or broken client of the server (it can write to the results
// bucket and the jobs stream, but does not hold the shared secret, or
// holds it and sends nonsense) cannot make a run report anything but what
// a local run reports: the coordinator discards what does not open or does
// not have the shape of an answer, publishes the job again, and never
// waits forever; workers refuse jobs beyond their limits.

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
	"ordplan/runner/queue/localserver"
)

func sameAsLocal(t *testing.T, path string, job runner.Job, got *fit.Result) {
	t.Helper()
	want, err := runner.ExecuteJob(path, job)
	if err != nil {
		t.Fatal(err)
	}
	if math.Float64bits(got.LogLik) != math.Float64bits(want.LogLik) || len(got.Estimates) != len(want.Estimates) {
		t.Fatalf("%s: log-likelihood %v, local %v", job.ID, got.LogLik, want.LogLik)
	}
	for i := range want.Estimates {
		if math.Float64bits(got.Estimates[i]) != math.Float64bits(want.Estimates[i]) {
			t.Fatalf("%s: %s = %v, local %v", job.ID, want.ParamNames[i], got.Estimates[i], want.Estimates[i])
		}
	}
}

// A rerun after a hostile client rewrote a stored result (with forged
// estimates, without the secret) recomputes that fit: the report equals a
// local run's.
func TestRewrittenResultDiscarded(t *testing.T) {
	q := newTestQueue(t, 90*time.Second, fit.ParallelEffects, fit.NonparallelEffects)
	ctx, url, c, path, jobs := q.ctx, q.url, q.c, q.path, q.jobs
	startWorker(t, url, "w1", 5*time.Second, 0)
	co := q.coordinator(t, nil)
	if _, errs := co.Execute(jobs); errs[0] != nil || errs[1] != nil {
		t.Fatal(errs)
	}
	id, _ := RunID("plan-hash", jobs)
	forged, _ := runner.ExecuteJob(path, jobs[0])
	forged.Estimates[len(forged.Estimates)-1] *= 3
	forged.LogLik /= 2
	payload, _ := encode(&Reply{Batch: id, Index: 0, ID: jobs[0].ID, Worker: "w1", Result: forged})
	for name, b := range map[string][]byte{
		"plain gob":          payload,
		"sealed, wrong key":  seal([]byte("not the secret, but long enough"), sealReply, resultKey(id, 0), payload),
		"another key's seal": seal(testSecret, sealReply, resultKey(id, 1), payload),
	} {
		// Purged first: an overwrite alone leaves the valid revision, which
		// wins (TestOverwrittenReplyBeforeWatchIgnored).
		if err := c.results.Purge(ctx, resultKey(id, 0)); err != nil {
			t.Fatal(err)
		}
		if _, err := c.results.Put(ctx, resultKey(id, 0), b); err != nil {
			t.Fatal(err)
		}
		log := &LogBuffer{}
		co := NewCoordinator(ctx, connect(t, ctx, url), "plan-hash", log)
		co.AddData(path)
		res, errs := co.Execute(jobs)
		if errs[0] != nil || errs[1] != nil {
			t.Fatalf("%s: %v", name, errs)
		}
		sameAsLocal(t, path, jobs[0], res[0])
		if !strings.Contains(log.String(), "discarded the reply") || !strings.Contains(log.String(), "not authenticated") {
			t.Errorf("%s: no line about the discarded reply:\n%s", name, log.String())
		}
	}
}

// Garbage under a result key, and an "ok" reply with no estimates (sealed:
// a broken worker), are discarded and the job published again; the run
// finishes with the local results. Garbage that keeps coming fails the run
// with a message, never a hang.
func TestGarbageAndEmptyRepliesDiscarded(t *testing.T) {
	q := newTestQueue(t, 90*time.Second, fit.ParallelEffects, fit.NonparallelEffects)
	ctx, url, c, path, jobs := q.ctx, q.url, q.c, q.path, q.jobs
	log := &LogBuffer{}
	co := q.coordinator(t, log)
	id, _ := RunID("plan-hash", jobs)
	done := make(chan [2]any, 1)
	go func() {
		res, errs := co.Execute(jobs)
		done <- [2]any{res, errs}
	}()
	waitFor(t, 10*time.Second, "the jobs in the stream", func() bool {
		info, err := c.jobs.Info(ctx)
		return err == nil && info.State.Msgs == 2
	})
	if _, err := c.results.Put(ctx, resultKey(id, 0), []byte("\x00\xffgarbage")); err != nil {
		t.Fatal(err)
	}
	empty, _ := encode(&Reply{Batch: id, Index: 1, ID: jobs[1].ID, Worker: "broken", Result: &fit.Result{Status: fit.StatusOK}})
	if _, err := c.results.Put(ctx, resultKey(id, 1), seal(testSecret, sealReply, resultKey(id, 1), empty)); err != nil {
		t.Fatal(err)
	}
	waitFor(t, 10*time.Second, "two discarded replies", func() bool { return log.Count("discarded the reply") == 2 })
	startWorker(t, url, "w1", 5*time.Second, 0)
	var out [2]any
	select {
	case out = <-done:
	case <-ctx.Done():
		t.Fatal("the coordinator did not finish")
	}
	res, errs := out[0].([]*fit.Result), out[1].([]error)
	for i := range jobs {
		if errs[i] != nil {
			t.Fatalf("job %d: %v", i, errs[i])
		}
		sameAsLocal(t, path, jobs[i], res[i])
	}
	if !strings.Contains(log.String(), `malformed`) {
		t.Errorf("the empty reply is not called malformed:\n%s", log.String())
	}
}

// Garbage that keeps coming (and no worker to answer first) fails the run
// with a message, never a hang.
func TestPersistentGarbageFailsRun(t *testing.T) {
	ctx := testContext(t, 60*time.Second)
	url := localserver.ForTest(t)
	c := connect(t, ctx, url)
	path, jobs2 := gssJobs(t, fit.ParallelEffects)
	c2 := connect(t, ctx, url)
	co2 := NewCoordinator(ctx, c2, "plan-hash", nil)
	co2.AddData(path)
	id2, _ := RunID("plan-hash", jobs2)
	errCh := executeAsync(co2, jobs2)
	stopGarbage := make(chan struct{})
	defer close(stopGarbage)
	go func() {
		for {
			select {
			case <-stopGarbage:
				return
			case <-time.After(20 * time.Millisecond):
				c.results.Put(ctx, resultKey(id2, 0), []byte("garbage"))
			}
		}
	}()
	select {
	case o := <-errCh:
		if errs := o.errs; errs[0] == nil || !strings.Contains(errs[0].Error(), "replies discarded as unauthenticated or malformed") {
			t.Fatalf("got %v", errs[0])
		}
		if co2.Err() == nil {
			t.Error("the run is not failed")
		}
	case <-ctx.Done():
		t.Fatal("the coordinator waits forever under a stream of garbage")
	}
}

// A coordinator without workers fails after twice its job deadline, having
// published the job again once, with a message saying what to check.
func TestJobDeadline(t *testing.T) {
	ctx := testContext(t, 30*time.Second)
	url := localserver.ForTest(t)
	c := connect(t, ctx, url)
	c.JobDeadline = 300 * time.Millisecond
	path, jobs := gssJobs(t, fit.ParallelEffects)
	co := NewCoordinator(ctx, c, "plan-hash", nil)
	co.AddData(path)
	start := time.Now()
	_, errs := co.Execute(jobs)
	if errs[0] == nil || !strings.Contains(errs[0].Error(), "no reply to 1 of 1 jobs") || !strings.Contains(errs[0].Error(), "are workers running") {
		t.Fatalf("got %v", errs[0])
	}
	if took := time.Since(start); took < 600*time.Millisecond || took > 10*time.Second {
		t.Errorf("failed after %s", took)
	}
	if st := co.Stats(); len(st) != 1 || st[0].Republished != 1 {
		t.Errorf("stats %+v", st)
	}
}

// Workers refuse jobs without the secret's seal, and answer a sealed job
// asking for 2^30 random starts (or more iterations than allowed) with an
// error instead of computing it.
func TestWorkerLimitsAndUnsealedJobs(t *testing.T) {
	q := newTestQueue(t, 60*time.Second, fit.ParallelEffects)
	ctx, url, c, path, jobs := q.ctx, q.url, q.c, q.path, q.jobs
	if err := c.PutData(ctx, path, jobs[0].DataHash); err != nil {
		t.Fatal(err)
	}
	log := startWorker(t, url, "w1", 5*time.Second, 0)
	// Unsealed: dropped by the worker, which keeps working.
	raw, _ := encode(&Task{Batch: "unsealed", Index: 0, ID: jobs[0].ID, Kind: KindFit, Fit: &jobs[0]})
	if _, err := c.js.Publish(ctx, jobSubject("unsealed", 0), raw); err != nil {
		t.Fatal(err)
	}
	waitFor(t, 10*time.Second, "the unsealed job refused", func() bool { return strings.Contains(log.String(), "job refused: not authenticated") })
	for _, c2 := range []struct {
		set  func(o *fit.Options)
		want string
	}{
		{func(o *fit.Options) { o.RandomStarts = 1 << 30 }, "asks for 1073741824 random starts; this worker allows at most 1000"},
		{func(o *fit.Options) { o.MaxIter = 1 << 40 }, "iterations; this worker allows at most 10000"},
	} {
		j := jobs[0]
		c2.set(&j.FitOptions)
		batch := fmt.Sprintf("limits%d", j.FitOptions.MaxIter)
		task := &Task{Batch: batch, Index: 0, ID: j.ID, Kind: KindFit, Fit: &j}
		replies, _, err := c.runBatch(ctx, batch, []*Task{task}, batchHooks{})
		if err != nil {
			t.Fatal(err)
		}
		if r := replies[0]; r.Result != nil || !strings.Contains(r.Err, c2.want) {
			t.Fatalf("reply %+v, want an error with %q", r, c2.want)
		}
	}
}

// A job whose earlier deliveries all ended without a reply (the workers
// holding it died) is answered with an error at the next delivery, not
// computed again; the server stops delivering it after MaxDeliver.
func TestPoisonedJobReported(t *testing.T) {
	q := newTestQueue(t, 60*time.Second, fit.ParallelEffects)
	ctx, url, c, path, jobs := q.ctx, q.url, q.c, q.path, q.jobs
	c.PutData(ctx, path, jobs[0].DataHash)
	task := &Task{Batch: "poison", Index: 0, ID: jobs[0].ID, Kind: KindFit, Fit: &jobs[0]}
	b, _ := c.sealTask(task)
	if _, err := c.js.Publish(ctx, jobSubject("poison", 0), b); err != nil {
		t.Fatal(err)
	}
	// Three workers take the job and die: here, deliveries left unacknowledged.
	unanswered(t, ctx, c, PoisonAfter)
	startWorker(t, url, "w1", 5*time.Second, 0)
	replies, _, err := c.runBatch(ctx, "poison", []*Task{task}, batchHooks{})
	if err != nil {
		t.Fatal(err)
	}
	if r := replies[0]; r.Result != nil || !strings.Contains(r.Err, "delivered 4 times and no worker finished it") {
		t.Fatalf("reply %+v", r)
	}
	// The worker stores its reply, then acknowledges the job: the
	// acknowledgement may land just after the coordinator has read the reply.
	deadline := time.Now().Add(10 * time.Second)
	for {
		info, err := c.jobs.Info(ctx)
		if err == nil && info.State.Msgs == 0 {
			break
		}
		if time.Now().After(deadline) {
			t.Errorf("the poisoned job is still in the stream 10 s after its reply: %v", err)
			break
		}
		time.Sleep(50 * time.Millisecond)
	}
}

// A reply larger than one message (a model with 433 parameters: its
// covariance alone is 1.5 MB, over the server's 1 MB limit) goes through
// the replies store; the result equals the local fit bit for bit.
func TestOversizedReplyThroughObjectStore(t *testing.T) {
	if testing.Short() || raceDetector {
		t.Skip("fits a model with 433 parameters")
	}
	ctx := testContext(t, 120*time.Second)
	url := localserver.ForTest(t)
	c := connect(t, ctx, url)
	const K, N = 432, 1300
	rng := rand.New(rand.NewPCG(433, 1))
	var b strings.Builder
	preds := make([]string, K)
	b.WriteString("y")
	for k := range preds {
		preds[k] = fmt.Sprintf("x%d", k+1)
		b.WriteString("," + preds[k])
	}
	b.WriteString("\n")
	row := make([]float64, K)
	for range N {
		eta := 0.0
		for k := range row {
			row[k] = math.Round(rng.NormFloat64()*1000) / 1000
			eta += 0.05 * row[k] * float64(k%3-1)
		}
		u := rng.Float64()
		y := 1
		if eta+math.Log(u/(1-u)) > 0 {
			y = 2
		}
		fmt.Fprintf(&b, "%d", y)
		for _, v := range row {
			fmt.Fprintf(&b, ",%g", v)
		}
		b.WriteString("\n")
	}
	path := filepath.Join(t.TempDir(), "wide.csv")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	h, _ := HashFile(path)
	spec, err := runner.EffectsSpec(fit.Cumulative, false, fit.Logit, fit.ParallelEffects, preds, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	job := runner.Job{Outcome: "y", ID: "cumulative/parallel/logit", Spec: spec, DataFile: "wide.csv", DataHash: h,
		DataOptions: data.Options{Outcome: "y", Predictors: preds}, FitOptions: fit.Options{Covariance: fit.Observed, Workers: 1}}
	startWorker(t, url, "w1", 5*time.Second, 0)
	co := NewCoordinator(ctx, c, "wide", nil)
	co.AddData(path)
	res, errs := co.Execute([]runner.Job{job})
	if errs[0] != nil {
		t.Fatal(errs[0])
	}
	if res[0].NParams != 433 || !res[0].OK() {
		t.Fatalf("%d parameters, status %s", res[0].NParams, res[0].Status)
	}
	sameAsLocal(t, path, job, res[0])
	id, _ := RunID("wide", []runner.Job{job})
	if _, err := c.replies.GetInfo(ctx, replyObject(resultKey(id, 0))); err != nil {
		t.Errorf("the reply is not in the replies store: %v", err)
	}
}

// Every shape check of a reply refuses what it must.
func TestCheckReply(t *testing.T) {
	_, jobs := gssJobs(t, fit.ParallelEffects)
	path := filepath.Join(refDir, "gsswarm.csv")
	good, err := runner.ExecuteJob(path, jobs[0])
	if err != nil {
		t.Fatal(err)
	}
	task := &Task{Batch: "b", Index: 0, ID: jobs[0].ID, Kind: KindFit, Fit: &jobs[0]}
	ok := func() *Reply { g := *good; return &Reply{Batch: "b", Index: 0, ID: jobs[0].ID, Result: &g} }
	if err := checkReply(task, ok()); err != nil {
		t.Fatalf("a good reply refused: %v", err)
	}
	bad := map[string]func(r *Reply){
		"no result":        func(r *Reply) { r.Result = nil },
		"empty result":     func(r *Reply) { r.Result = &fit.Result{Status: fit.StatusOK} },
		"short estimates":  func(r *Reply) { r.Result.Estimates = r.Result.Estimates[:2] },
		"short covariance": func(r *Reply) { r.Result.Cov = r.Result.Cov[:3] },
		"infinite":         func(r *Reply) { r.Result.Estimates = append([]float64{math.Inf(1)}, r.Result.Estimates[1:]...) },
		"NaN loglik":       func(r *Reply) { r.Result.LogLik = math.NaN() },
		"other model":      func(r *Reply) { r.Result.Model.Link = fit.Probit },
		"other job":        func(r *Reply) { r.ID = "adjacent/parallel/logit" },
		"error and result": func(r *Reply) { r.Err = "x" },
		"unknown status":   func(r *Reply) { r.Result.Status = "fine" },
	}
	for name, f := range bad {
		r := ok()
		f(r)
		if err := checkReply(task, r); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
}

// Without workers a fit over parts fails the same way, its message and
// the note of the jobs published again naming the first part waiting by
// its file, not by its bare hash (invented rows).
func TestJobDeadlineNamesThePart(t *testing.T) {
	ctx := testContext(t, 30*time.Second)
	url := localserver.ForTest(t)
	c := connect(t, ctx, url)
	c.JobDeadline = 300 * time.Millisecond
	log := &LogBuffer{}
	c.Log = log
	dir := t.TempDir()
	parts := []PartitionRef{writePart(t, dir, "north.csv", "y,x\n1,0\n2,1\n1,1\n"), writePart(t, dir, "south.csv", "y,x\n2,0\n2,1\n")}
	whole := fit.Whole{J: 2, Predictors: []string{"x"}, Categories: []string{"1", "2"}, Counts: []float64{2, 3}, Rows: 5}
	m, _ := runner.Spec{Approach: fit.Cumulative, Link: fit.Logit, Predictors: []string{"x"}}.Model()
	_, err := FitPartitioned(ctx, c, parts, whole, m, PartitionOptions{Data: data.Options{Outcome: "y", Predictors: []string{"x"}}})
	want := "no reply to 2 of 2 jobs (the first: part north.csv (sha256 " + parts[0].Hash[:12] + "))"
	if err == nil || !strings.Contains(err.Error(), want) || !strings.Contains(err.Error(), "are workers running") {
		t.Fatalf("got %v, want %q", err, want)
	}
	if !strings.Contains(log.String(), want+" within 300ms: published again") {
		t.Errorf("the note of the jobs published again:\n%s", log.String())
	}
}
