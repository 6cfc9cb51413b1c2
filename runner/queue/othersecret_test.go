package queue

import (
	"context"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"ordplan/runner/fit"
)

// A worker started with another secret than the coordinator's (or by
// another version of ordplan) refuses the jobs, saying what to do, but
// leaves them on the queue: a worker holding the right secret computes
// them and the run ends. The worker with the wrong secret used to remove
// every job it refused, and the run waited for --job-deadline (30 min)
// without a word.
func TestWorkerWithAnotherSecretLeavesJobs(t *testing.T) {
	q := newTestQueue(t, 60*time.Second, fit.ParallelEffects, fit.NonparallelEffects)
	wctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	other, err := Connect(wctx, Config{URL: q.url, Name: "wrong", Secret: []byte("another secret of more than sixteen bytes")})
	if err != nil {
		t.Fatal(err)
	}
	defer other.Close()
	wrongLog := &LogBuffer{}
	wrong := &Worker{Client: other, Name: "wrong", CacheDir: t.TempDir(), AckWait: 5 * time.Second, Log: wrongLog}
	done := make(chan error, 1)
	go func() { done <- wrong.Run(wctx) }()
	waitFor(t, 10*time.Second, "the worker with another secret ready", func() bool { return strings.Contains(wrongLog.String(), "ready") })

	co := q.coordinator(t, nil)
	type outcome struct {
		res  []*fit.Result
		errs []error
	}
	got := make(chan outcome, 1)
	go func() {
		res, errs := co.Execute(q.jobs)
		got <- outcome{res, errs}
	}()
	waitFor(t, 10*time.Second, "a job refused", func() bool { return strings.Contains(wrongLog.String(), "job refused") })
	startWorker(t, q.url, "right", 5*time.Second, 0)
	o := <-got
	for i, err := range o.errs {
		if err != nil || o.res[i] == nil {
			t.Fatalf("job %d: %v", i, err)
		}
	}
	want := "job refused: not authenticated: no valid HMAC with the shared secret (a process without the secret wrote it, or the coordinator and the worker use different secrets); left on the queue for a worker holding the coordinator's secret (delivery 1 of at most 5, removed at the last): if this worker refuses every job, give it the coordinator's secret file (--queue-secret-file) and the coordinator's version of ordplan"
	if !strings.Contains(wrongLog.String(), want) {
		t.Errorf("the worker with another secret logged\n%s\nwant a line with\n%s", wrongLog, want)
	}
	cancel()
	if err := <-done; err != nil {
		t.Error(err)
	}
}

// A coordinator that gets no reply says, after WaitNotice, what it waits
// for and what the workers' consumer shows, with what to do: it used to
// wait for --job-deadline (30 min) without a word.
func TestCoordinatorSaysWhatItWaitsFor(t *testing.T) {
	q := newTestQueue(t, 30*time.Second, fit.ParallelEffects)
	log := &LogBuffer{}
	q.c.Log, q.c.WaitNotice, q.c.JobDeadline = log, 100*time.Millisecond, time.Minute
	ctx, cancel := context.WithCancel(q.ctx)
	defer cancel()
	task := &Task{Batch: "waiting", Index: 0, ID: q.jobs[0].ID, Kind: KindFit, Fit: &q.jobs[0]}
	done := make(chan error, 1)
	go func() {
		_, _, err := q.c.runBatch(ctx, "waiting", []*Task{task}, batchHooks{})
		done <- err
	}()
	first := "queue: waiting for 1 of 1 jobs (the first: cumulative/parallel/logit): no reply for 100ms; no worker has connected to this server yet: start one (ordplan worker --queue URL) with the coordinator's secret file (--queue-secret-file); the missing jobs are published again when 1m0s pass without a reply (--job-deadline)"
	waitFor(t, 10*time.Second, "the first notice", func() bool { return strings.Contains(log.String(), first) })
	// A consumer that no worker fetches from: workers came and went.
	if _, err := q.c.js.CreateOrUpdateConsumer(q.ctx, JobStream, jetstream.ConsumerConfig{
		Durable: WorkerGroup, FilterSubject: JobSubject + ".>", AckPolicy: jetstream.AckExplicitPolicy,
		MaxDeliver: MaxDeliver, DeliverPolicy: jetstream.DeliverAllPolicy}); err != nil {
		t.Fatal(err)
	}
	later := "ms; no worker is asking for jobs now: start one (ordplan worker --queue URL) with the coordinator's secret file (--queue-secret-file)"
	waitFor(t, 10*time.Second, "a later notice", func() bool { return strings.Contains(log.String(), later) })
	cancel()
	if err := <-done; err == nil {
		t.Error("the batch ended without its reply")
	}
}
