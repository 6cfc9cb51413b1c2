package queue

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"testing"
	"time"

	"ordplan/internal/words"
	"ordplan/runner/fit"
)

// A worker asked to stop (ctx) finishes the job it started; asked a
// second time (Abort) it stops at once, gives the job back unacknowledged
// and says so, and another worker computes it: the coordinator gets one
// reply from the other worker, at the job's first counted delivery: the
// give-back does not count against the job's delivery limit.
func TestWorkerAbortGivesJobBack(t *testing.T) {
	q := newTestQueue(t, 60*time.Second, fit.ParallelEffects)
	ctx, url, c, path, jobs := q.ctx, q.url, q.c, q.path, q.jobs
	if err := c.PutData(ctx, path, jobs[0].DataHash); err != nil {
		t.Fatal(err)
	}
	stopCtx, stop := context.WithCancel(context.Background())
	abortCtx, abort := context.WithCancel(context.Background())
	defer stop()
	defer abort()
	log := &LogBuffer{}
	w := &Worker{Client: connect(t, ctx, url), Name: "held", CacheDir: t.TempDir(), AckWait: time.Second, Delay: time.Minute, Log: log, Abort: abortCtx}
	ran := make(chan error, 1)
	go func() { ran <- w.Run(stopCtx) }()
	task := &Task{Batch: "abort", Index: 0, ID: jobs[0].ID, Kind: KindFit, Fit: &jobs[0]}
	type out struct {
		replies []*Reply
		err     error
	}
	done := make(chan out, 1)
	go func() {
		r, _, err := c.runBatch(ctx, "abort", []*Task{task}, batchHooks{})
		done <- out{r, err}
	}()
	waitFor(t, 10*time.Second, "the worker to hold the job", func() bool { return strings.Contains(log.String(), "holding") })
	stop()
	select {
	case err := <-ran:
		t.Fatalf("the worker stopped (%v) without finishing the job it had started", err)
	case <-time.After(2 * time.Second): // beyond the ack wait: the job stays with it
	}
	abort()
	var err error
	select {
	case err = <-ran:
	case <-time.After(5 * time.Second):
		t.Fatal("the worker did not stop at once when aborted")
	}
	var ab *AbortedError
	if !errors.As(err, &ab) || ab.GaveBack != 1 || !strings.Contains(err.Error(), "gave back the 1 job it had not finished: the server delivers it again to another worker (or to this one, started again), not counting this delivery") {
		t.Fatalf("Run returned %v, want an AbortedError giving back 1 job", err)
	}
	if !strings.Contains(log.String(), "gave back "+jobSubject("abort", 0)+" ") {
		t.Errorf("no line naming the job given back:\n%s", log)
	}
	startWorker(t, url, "other", time.Second, 0)
	o := <-done
	if o.err != nil {
		t.Fatal(o.err)
	}
	if r := o.replies[0]; r.Worker != "other" || r.Delivered != 1 || r.Err != "" {
		t.Fatalf("reply from %s at delivery %d (%s), want other at delivery 1", r.Worker, r.Delivered, r.Err)
	}
}

// abortHeld starts a worker that holds the jobs it takes, waits until it
// holds one, stops it twice (stop, then Abort) and returns its log once
// it has given the job back.
func abortHeld(t *testing.T, ctx context.Context, url, name string) string {
	t.Helper()
	stopCtx, stop := context.WithCancel(context.Background())
	abortCtx, abort := context.WithCancel(context.Background())
	defer stop()
	defer abort()
	log := &LogBuffer{}
	w := &Worker{Client: connect(t, ctx, url), Name: name, CacheDir: t.TempDir(), AckWait: time.Second, Delay: time.Minute, Log: log, Abort: abortCtx}
	ran := make(chan error, 1)
	go func() { ran <- w.Run(stopCtx) }()
	waitFor(t, 10*time.Second, name+" to hold the job", func() bool { return strings.Contains(log.String(), "holding") })
	stop()
	abort()
	select {
	case err := <-ran:
		var ab *AbortedError
		if !errors.As(err, &ab) || ab.GaveBack != 1 {
			t.Fatalf("%s: Run returned %v, want an AbortedError giving back 1 job", name, err)
		}
	case <-time.After(10 * time.Second):
		t.Fatalf("%s did not stop at once when aborted", name)
	}
	return log.String()
}

// A job that workers stopped on purpose gave back, more times than its
// delivery limit (PoisonAfter) and than the server's (MaxDeliver), is
// still computed: a give-back does not count against the limit. The
// deliveries that do count (a worker that took the job and never
// answered: killed) still do, carried across the give-backs, so a job
// three such workers held is answered "no worker finished it" whatever
// the give-backs between them.
func TestGiveBacksDoNotCountAgainstDeliveryLimit(t *testing.T) {
	q := newTestQueue(t, 120*time.Second, fit.ParallelEffects)
	ctx, url, c, path, jobs := q.ctx, q.url, q.c, q.path, q.jobs
	if err := c.PutData(ctx, path, jobs[0].DataHash); err != nil {
		t.Fatal(err)
	}
	task := &Task{Batch: "givebacks", Index: 0, ID: jobs[0].ID, Kind: KindFit, Fit: &jobs[0]}
	b, _ := c.sealTask(task)
	if _, err := c.js.Publish(ctx, jobSubject("givebacks", 0), b); err != nil {
		t.Fatal(err)
	}
	for n := 1; n <= MaxDeliver+1; n++ {
		log := abortHeld(t, ctx, url, fmt.Sprintf("held%d", n))
		if want := "gave back " + jobSubject("givebacks", 0) + " " + jobs[0].ID + " unfinished (queued again for another worker, not counted against its delivery limit)"; !strings.Contains(log, want) {
			t.Fatalf("give-back %d: no %q in the log:\n%s", n, want, log)
		}
		if n > 1 && !strings.Contains(log, fmt.Sprintf("(delivery 1, after %s, not counted)", words.Count(n-1, "give-back by a stopped worker", "give-backs by stopped workers"))) {
			t.Errorf("give-back %d: the log does not count the earlier give-backs:\n%s", n, log)
		}
	}
	// A worker that answers, stopped (and waited for) before the second part.
	wctx, wstop := context.WithCancel(context.Background())
	wlog := &LogBuffer{}
	w1 := &Worker{Client: connect(t, ctx, url), Name: "w1", CacheDir: t.TempDir(), AckWait: 5 * time.Second, Log: wlog}
	w1done := make(chan error, 1)
	go func() { w1done <- w1.Run(wctx) }()
	replies, _, err := c.runBatch(ctx, "givebacks", []*Task{task}, batchHooks{})
	wstop()
	if err != nil {
		t.Fatal(err)
	}
	if err := <-w1done; err != nil {
		t.Fatal(err)
	}
	if r := replies[0]; r.Err != "" || r.Result == nil || r.Worker != "w1" || r.Delivered != 1 {
		t.Fatalf("after %d give-backs: reply from %s at delivery %d (%s), want a result from w1 at delivery 1\n%s", MaxDeliver+1, r.Worker, r.Delivered, r.Err, wlog)
	}

	// Killed workers count, across give-backs: one give-back, two
	// deliveries left unanswered, a give-back, one more unanswered: the
	// next worker sees the job's fourth counted delivery.
	task = &Task{Batch: "killed", Index: 0, ID: jobs[0].ID, Kind: KindFit, Fit: &jobs[0]}
	b, _ = c.sealTask(task)
	if _, err := c.js.Publish(ctx, jobSubject("killed", 0), b); err != nil {
		t.Fatal(err)
	}
	abortHeld(t, ctx, url, "held-a")
	unanswered(t, ctx, c, 2)
	abortHeld(t, ctx, url, "held-b")
	unanswered(t, ctx, c, 1)
	wlog = startWorker(t, url, "w2", 5*time.Second, 0)
	replies, _, err = c.runBatch(ctx, "killed", []*Task{task}, batchHooks{})
	if err != nil {
		t.Fatal(err)
	}
	if r := replies[0]; r.Result != nil || !strings.Contains(r.Err, "delivered 4 times and no worker finished it") {
		t.Fatalf("reply %+v\n%s", r, wlog)
	}
	if !strings.Contains(wlog.String(), "(delivery 4, after 2 give-backs by stopped workers, not counted)") {
		t.Errorf("no line of the fourth counted delivery after 2 give-backs:\n%s", wlog)
	}
}
