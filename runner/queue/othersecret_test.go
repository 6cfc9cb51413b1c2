package queue

import (
	"context"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"ordplan/runner/fit"
)

// otherSecretWorker runs a worker holding another secret than the
// coordinator's until the test ends; its log is returned.
func otherSecretWorker(t *testing.T, url, name string) *LogBuffer {
	t.Helper()
	ctx, cancel := context.WithCancel(context.Background())
	other, err := Connect(ctx, Config{URL: url, Name: name, Secret: []byte("another secret of more than sixteen bytes")})
	if err != nil {
		t.Fatal(err)
	}
	log := &LogBuffer{}
	w := &Worker{Client: other, Name: name, CacheDir: t.TempDir(), AckWait: 5 * time.Second, Log: log, refusedPause: 100 * time.Millisecond}
	done := make(chan error, 1)
	go func() { done <- w.Run(ctx) }()
	t.Cleanup(func() {
		cancel()
		if err := <-done; err != nil {
			t.Error(err)
		}
		other.Close()
	})
	waitFor(t, 10*time.Second, name+" ready", func() bool { return strings.Contains(log.String(), "ready") })
	return log
}

// A worker started with another secret than the coordinator's (or by
// another version of ordplan) refuses the jobs, saying what to do, and
// puts them back on the queue without spending their deliveries: refused
// ten times, a job is still computed by a worker holding the right secret
// at its first counted delivery, and the coordinator says at once who
// refused it. The worker with the wrong secret used to remove every job it
// refused, and later to leave it unacknowledged, which spent the job's
// deliveries: a job it refused three times was answered "no worker
// finished it" by the right worker (a fault stopping the run), and one it
// refused five times was removed, the run waiting for --job-deadline.
func TestWorkerWithAnotherSecretLeavesJobs(t *testing.T) {
	q := newTestQueue(t, 60*time.Second, fit.ParallelEffects, fit.NonparallelEffects)
	wrongLog := otherSecretWorker(t, q.url, "wrong")
	clog := &LogBuffer{}
	co := q.coordinator(t, clog)
	got := executeAsync(co, q.jobs)
	waitFor(t, 20*time.Second, "ten refusals", func() bool { return wrongLog.Count("job refused") >= 10 })
	right := startWorker(t, q.url, "right", 5*time.Second, 0)
	o := <-got
	for i, err := range o.errs {
		if err != nil || o.res[i] == nil {
			t.Fatalf("job %d: %v", i, err)
		}
	}
	want := "job refused: not authenticated: no valid HMAC with the shared secret (a process without the secret wrote it, or the coordinator and the worker use different secrets); put back on the queue for a worker holding the coordinator's secret (not counted against its delivery limit, refusal 1): if this worker refuses every job, give it the coordinator's secret file (--queue-secret-file) and the coordinator's version of ordplan"
	if !strings.Contains(wrongLog.String(), want) {
		t.Errorf("the worker with another secret logged\n%s\nwant a line with\n%s", wrongLog, want)
	}
	if n := right.Count("(delivery 1)"); n != 2 || strings.Contains(right.String(), "(delivery 2") {
		t.Errorf("the right worker's deliveries were spent by refusals:\n%s", right)
	}
	said := "queue: worker wrong refused job cumulative/"
	// Said after the batch's first line, which says what was published.
	if p, r := strings.Index(clog.String(), " published"), strings.Index(clog.String(), said); p < 0 || r < p {
		t.Errorf("the refusal was said before the batch's first line:\n%s", clog)
	}
	if n := clog.Count(said); n != 1 || !strings.Contains(clog.String(), ": its secret differs from this coordinator's, or it runs another version of ordplan; the job stays on the queue for a worker with this coordinator's secret: give worker wrong the coordinator's secret file (--queue-secret-file) and this version of ordplan, or stop it") {
		t.Errorf("the coordinator said %d times who refused the jobs, want once:\n%s", n, clog)
	}
}

// A run whose jobs only workers with another secret take ends, after
// RefusedWait without word from a worker holding its secret, with a
// message naming them and what to do, and its jobs leave the queue: they
// used to circle (or be removed) while the run waited for --job-deadline
// (30 min), then for as long again.
func TestOnlyRefusingWorkersEndTheRun(t *testing.T) {
	q := newTestQueue(t, 60*time.Second, fit.ParallelEffects)
	otherSecretWorker(t, q.url, "wrong")
	q.c.RefusedWait, q.c.WaitNotice = 2*time.Second, time.Second
	clog := &LogBuffer{}
	co := q.coordinator(t, clog)
	_, errs := co.Execute(q.jobs)
	// The wait notice (Q21) says who refuses the jobs, not what the
	// workers' consumer shows.
	notice := regexp.MustCompile(`queue: waiting for 1 of 1 jobs \(the first: cumulative/parallel/logit\): no reply for 1s; only workers whose secret differs from this coordinator's take them, and refuse them: wrong \([0-9]+ refusals?\); no worker with this coordinator's secret has been heard from since [0-9:]{8}, and the run stops if none is by [0-9:]{8}; the missing jobs`)
	if !notice.MatchString(clog.String()) {
		t.Errorf("the wait notice does not say who refuses the jobs:\n%s", clog)
	}
	want := "only workers that refuse this run's jobs took them for 2s: wrong ("
	if errs[0] == nil || !strings.Contains(errs[0].Error(), want) ||
		!strings.Contains(errs[0].Error(), "refusals), whose secret differs from this coordinator's (or which run another version of ordplan), and no worker with this coordinator's secret was heard from: give those workers the coordinator's secret file (--queue-secret-file) and version, or start one that has them, then run again (the results already made are reused); its jobs were removed from the queue") {
		t.Fatalf("got %v, want %q", errs[0], want)
	}
	if co.Err() == nil {
		t.Error("the coordinator's Err is not set")
	}
	info, err := q.c.jobs.Info(q.ctx)
	if err != nil {
		t.Fatal(err)
	}
	// A job held by the refusing worker during the purge, put back a
	// moment later, is purged again.
	if info.State.Msgs > 0 {
		t.Errorf("%d jobs left on the queue", info.State.Msgs)
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

// A worker of another build of ordplan (another version or source
// revision) than the coordinator's refuses its jobs, naming both builds,
// and puts them back without spending their deliveries; the coordinator
// says so once, and a worker of its build computes them. Such a worker
// computed them, so a run's fits could come from a build other than the
// one its run.json names; and a build's stored replies were reused by
// another build's run of the same plan.
func TestWorkerOfAnotherBuildRefusesJobs(t *testing.T) {
	q := newTestQueue(t, 60*time.Second, fit.ParallelEffects, fit.NonparallelEffects)
	octx, cancel := context.WithCancel(context.Background())
	oc := connect(t, q.ctx, q.url)
	oldLog := &LogBuffer{}
	const oldBuild = "0.0.9 (git 0123456789ab)"
	old := &Worker{Client: oc, Name: "old", CacheDir: t.TempDir(), AckWait: 5 * time.Second, Log: oldLog, refusedPause: 100 * time.Millisecond, build: oldBuild}
	done := make(chan error, 1)
	go func() { done <- old.Run(octx) }()
	t.Cleanup(func() {
		cancel()
		if err := <-done; err != nil {
			t.Error(err)
		}
	})
	waitFor(t, 10*time.Second, "old ready", func() bool { return strings.Contains(oldLog.String(), "ready") })
	clog := &LogBuffer{}
	co := q.coordinator(t, clog)
	got := executeAsync(co, q.jobs)
	waitFor(t, 20*time.Second, "five refusals", func() bool { return oldLog.Count("job refused") >= 5 })
	right := startWorker(t, q.url, "right", 5*time.Second, 0)
	o := <-got
	for i, err := range o.errs {
		if err != nil || o.res[i] == nil {
			t.Fatalf("job %d: %v", i, err)
		}
	}
	want := "job refused: job cumulative/parallel/logit comes from a coordinator running ordplan " + Build() + ", and this worker runs ordplan " + oldBuild + ": a run's fits are made by the build that runs it, which its run.json names; put back on the queue for a worker of the coordinator's build (not counted against its delivery limit, refusal 1): run one build of ordplan on the coordinator and every worker"
	if !strings.Contains(oldLog.String(), want) {
		t.Errorf("the worker of another build logged\n%s\nwant a line with\n%s", oldLog, want)
	}
	if strings.Contains(oldLog.String(), "started") {
		t.Errorf("the worker of another build computed a job:\n%s", oldLog)
	}
	if n := right.Count("(delivery 1)"); n != 2 || strings.Contains(right.String(), "(delivery 2") {
		t.Errorf("the right worker's deliveries were spent by refusals:\n%s", right)
	}
	said := "queue: worker old refused job cumulative/"
	if n := clog.Count(said); n != 1 || !strings.Contains(clog.String(), ": it runs ordplan "+oldBuild+", and this coordinator ordplan "+Build()+"; the job stays on the queue for a worker of this build: run one build of ordplan on the coordinator and every worker") {
		t.Errorf("the coordinator said %d times who refused the jobs, want once:\n%s", n, clog)
	}
}
