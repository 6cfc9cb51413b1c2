package queue

import (
	"context"
	"errors"
	"strings"
	"testing"
	"time"

	"ordplan/runner/fit"
)

// A worker asked to stop (ctx) finishes the job it started; asked a
// second time (Abort) it stops at once, gives the job back unacknowledged
// and says so, and another worker computes it: the coordinator gets one
// reply, at the job's second delivery, from the other worker.
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
	if !errors.As(err, &ab) || ab.GaveBack != 1 || !strings.Contains(err.Error(), "gave back the 1 job it had not finished, unacknowledged") {
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
	if r := o.replies[0]; r.Worker != "other" || r.Delivered != 2 || r.Err != "" {
		t.Fatalf("reply from %s at delivery %d (%s), want other at delivery 2", r.Worker, r.Delivered, r.Err)
	}
}
