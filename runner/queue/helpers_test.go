package queue

import (
	"context"
	"io"
	"ordplan/internal/refdata"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
	"ordplan/runner/queue/localserver"
)

var refDir = refdata.Dir()

// testSecret is the shared secret of the tests' coordinators and workers.
var testSecret = []byte("a test secret of more than sixteen bytes")

var gssPredictors = []string{"yr89", "male", "white", "age", "ed", "prst"}

// testContext bounds a test: every wait ends within the limit.
func testContext(t *testing.T, limit time.Duration) context.Context {
	ctx, cancel := context.WithTimeout(context.Background(), limit)
	t.Cleanup(cancel)
	return ctx
}

func connect(t *testing.T, ctx context.Context, url string) *Client {
	t.Helper()
	c, err := Connect(ctx, Config{URL: url, Name: "ordplan-test", Secret: testSecret})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(c.Close)
	return c
}

// unanswered takes the one queued job n times through the workers'
// consumer (a short ack wait) and never answers it, as n workers killed
// while they held it would.
func unanswered(t *testing.T, ctx context.Context, c *Client, n int) {
	t.Helper()
	cons, err := c.js.CreateOrUpdateConsumer(ctx, JobStream, jetstream.ConsumerConfig{
		Durable: WorkerGroup, FilterSubject: JobSubject + ".>", AckPolicy: jetstream.AckExplicitPolicy,
		AckWait: 200 * time.Millisecond, MaxDeliver: MaxDeliver, DeliverPolicy: jetstream.DeliverAllPolicy})
	if err != nil {
		t.Fatal(err)
	}
	for i := range n {
		msgs, err := cons.Fetch(1, jetstream.FetchMaxWait(5*time.Second))
		if err != nil {
			t.Fatal(err)
		}
		got := 0
		for range msgs.Messages() {
			got++
		}
		if got != 1 {
			t.Fatalf("delivery %d: %d messages", i+1, got)
		}
	}
}

// waitFor polls cond until it holds or the limit passes.
func waitFor(t *testing.T, limit time.Duration, what string, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(limit)
	for !cond() {
		if time.Now().After(deadline) {
			t.Fatalf("timed out after %s waiting for %s", limit, what)
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// startWorker runs a worker in a goroutine, on its own connection and
// cache, until the test ends; its log is returned.
func startWorker(t *testing.T, url, name string, ackWait, delay time.Duration) *LogBuffer {
	t.Helper()
	ctx, cancel := context.WithCancel(context.Background())
	c := connect(t, ctx, url)
	log := &LogBuffer{}
	// A short pause after a fault (faultBackoff) keeps the tests of
	// faults fast.
	w := &Worker{Client: c, Name: name, CacheDir: t.TempDir(), AckWait: ackWait, Delay: delay, Log: log, faultPause: 50 * time.Millisecond}
	done := make(chan struct{})
	go func() {
		defer close(done)
		if err := w.Run(ctx); err != nil {
			t.Error(err)
		}
	}()
	t.Cleanup(func() {
		cancel()
		select {
		case <-done:
		case <-time.After(15 * time.Second):
			t.Error("worker did not stop")
		}
	})
	waitFor(t, 10*time.Second, name+" ready", func() bool { return strings.Contains(log.String(), "ready") })
	return log
}

// gssJobs returns fits of the General Social Survey extract (Long 1997) as
// plan jobs.
func gssJobs(t *testing.T, effects ...fit.Structure) (string, []runner.Job) {
	t.Helper()
	path := filepath.Join(refDir, "gsswarm.csv")
	h, err := HashFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var jobs []runner.Job
	for i, s := range effects {
		spec, err := runner.EffectsSpec(fit.Cumulative, false, fit.Logit, s, gssPredictors, []string{"yr89", "male"}, nil)
		if err != nil {
			t.Fatal(err)
		}
		jobs = append(jobs, runner.Job{Outcome: "warm", Index: i, ID: "cumulative/" + s.String() + "/logit", Spec: spec,
			DataFile: "gsswarm.csv", DataHash: h,
			DataOptions: data.Options{Outcome: "warm", Predictors: gssPredictors},
			FitOptions:  fit.Options{Covariance: fit.Observed, Workers: 1}})
	}
	return path, jobs
}

// executed is what Coordinator.Execute returned.
type executed struct {
	res  []*fit.Result
	errs []error
}

// executeAsync runs co.Execute(jobs) in the background; its results come
// on the channel returned.
func executeAsync(co *Coordinator, jobs []runner.Job) <-chan executed {
	got := make(chan executed, 1)
	go func() {
		res, errs := co.Execute(jobs)
		got <- executed{res, errs}
	}()
	return got
}

func cancelable() (context.Context, context.CancelFunc) {
	return context.WithCancel(context.Background())
}

// testQueue is what most queue tests start from: a context that bounds
// the test, a loopback server (url), a client of it, and the jobs of
// gssJobs on the data file at path.
type testQueue struct {
	ctx  context.Context
	url  string
	c    *Client
	path string
	jobs []runner.Job
}

func newTestQueue(t *testing.T, limit time.Duration, effects ...fit.Structure) *testQueue {
	t.Helper()
	ctx := testContext(t, limit)
	url := localserver.ForTest(t)
	q := &testQueue{ctx: ctx, url: url, c: connect(t, ctx, url)}
	q.path, q.jobs = gssJobs(t, effects...)
	return q
}

// coordinator is a coordinator of the run "plan-hash" on the client, with
// the data file registered.
func (q *testQueue) coordinator(t *testing.T, log io.Writer) *Coordinator {
	t.Helper()
	co := NewCoordinator(q.ctx, q.c, "plan-hash", log)
	if _, err := co.AddData(q.path); err != nil {
		t.Fatal(err)
	}
	return co
}

// A worker whose context ends (the command's interrupt) says in its last
// log line that it stopped, not only that it was ready.
func TestWorkerSaysItStopped(t *testing.T) {
	url := localserver.ForTest(t)
	ctx, cancel := context.WithCancel(context.Background())
	c := connect(t, testContext(t, time.Minute), url)
	log := &LogBuffer{}
	w := &Worker{Client: c, Name: "w1", CacheDir: t.TempDir(), Log: log}
	done := make(chan error, 1)
	go func() { done <- w.Run(ctx) }()
	waitFor(t, 10*time.Second, "w1 ready", func() bool { return strings.Contains(log.String(), "ready") })
	cancel()
	select {
	case err := <-done:
		if err != nil {
			t.Fatal(err)
		}
	case <-time.After(15 * time.Second):
		t.Fatal("worker did not stop")
	}
	lines := strings.Split(strings.TrimSpace(log.String()), "\n")
	if last := lines[len(lines)-1]; last != "ordplan worker w1: stopped; it finished the jobs it had started first (a reply it could not store is logged above, and its job goes to another worker)" {
		t.Errorf("last log line: %q", last)
	}
}
